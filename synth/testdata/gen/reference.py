#!/usr/bin/python3
"""Write synth/testdata/reference.json: check values for package synth,
computed with scipy.signal (Debian python3-scipy), a general-purpose
reference library independent of drawerfit.

Run from the repository root:  /usr/bin/python3 synth/testdata/gen/reference.py

Contents:
  prototypes: low-pass prototype poles (buttap, cheb1ap, besselap with
              norm='mag' and norm='delay') for orders 1..12, and the section
              natural frequencies and Q derived from them, in rising Q.
  orders:     minimum orders for a grid of specifications (buttord, cheb1ord
              for the closed forms; for Bessel, and for the even-order
              Chebyshev check relative to the DC gain, by increasing the order
              and evaluating the analog filter with freqs), with the
              attenuation at fp and fs of the minimum-order design.
"""
import json
import math
import os

import numpy as np
from scipy import optimize, signal

MAX_ORDER = 12
HALF_POWER = 10 * math.log10(2)


def upper(poles):
    """One pole of each conjugate pair (positive imaginary part) and the real poles."""
    out = []
    for p in poles:
        p = complex(p)
        if abs(p.imag) < 1e-12 * abs(p):
            out.append(complex(p.real, 0.0))
        elif p.imag > 0:
            out.append(p)
    out.sort(key=lambda p: (p.imag, p.real))
    return out


def sections(poles):
    secs = []
    for p in upper(poles):
        w0 = abs(p)
        if p.imag == 0:
            secs.append({"w0": w0, "q": 0.0})
        else:
            secs.append({"w0": w0, "q": w0 / (2 * abs(p.real))})
    secs.sort(key=lambda s: s["q"])
    return secs


def proto_entry(name, ripple, norm, n, poles):
    return {
        "approx": name, "ripple": ripple, "norm": norm, "order": n,
        "poles": [[p.real, p.imag] for p in upper(poles)],
        "sections": sections(poles),
    }


def prototypes():
    out = []
    for n in range(1, MAX_ORDER + 1):
        _, p, _ = signal.buttap(n)
        out.append(proto_entry("butterworth", 0, "", n, p))
        for rp in (0.1, 0.5, 1.0, 3.0):
            _, p, _ = signal.cheb1ap(n, rp)
            out.append(proto_entry("chebyshev", rp, "", n, p))
        for norm in ("mag", "delay"):
            _, p, _ = signal.besselap(n, norm=norm)
            out.append(proto_entry("bessel", 0, norm, n, p))
    return out


def atten(b, a, w):
    """Attenuation in dB of the analog filter b/a at angular frequency w."""
    _, h = signal.freqs(b, a, worN=[w])
    return -20 * math.log10(abs(h[0]))


def passband_gain(b, a, kind):
    """|H| at DC (low-pass) or far above every pole (high-pass)."""
    if kind == "lowpass":
        return abs(b[-1] / a[-1])
    return abs(b[0] / a[0])


def rel_atten(b, a, kind, w):
    return atten(b, a, w) + 20 * math.log10(passband_gain(b, a, kind))


def bessel_design(n, kind, fp, ap, norm):
    wp = 2 * math.pi * fp
    btype = "low" if kind == "lowpass" else "high"
    if norm == "delay":
        return signal.bessel(n, wp, btype=btype, analog=True, norm="delay")
    if abs(ap - HALF_POWER) < 1e-12:
        return signal.bessel(n, wp, btype=btype, analog=True, norm="mag")
    # Place the edge so that the attenuation at fp is exactly ap: find the
    # prototype frequency x (rad/s, -3 dB at 1) where the attenuation is ap.
    b0, a0 = signal.bessel(n, 1.0, analog=True, norm="mag")
    x = optimize.brentq(lambda w: atten(b0, a0, w) - ap, 1e-6, 1e3, xtol=1e-15, rtol=1e-15)
    wn = wp / x if kind == "lowpass" else wp * x
    return signal.bessel(n, wn, btype=btype, analog=True, norm="mag")


def order_case(approx, kind, fp, fs, ap, as_, norm=""):
    btype = "low" if kind == "lowpass" else "high"
    wp, ws = 2 * math.pi * fp, 2 * math.pi * fs
    case = {"approx": approx, "kind": kind, "fp": fp, "fs": fs, "ap": ap, "as": as_, "norm": norm}
    n = None
    if approx == "butterworth":
        n0, wn = signal.buttord(wp, ws, ap, as_, analog=True)
        case["closed_form"] = int(n0)
        if n0 <= MAX_ORDER:
            n = int(n0)
            b, a = signal.butter(n, wn, btype=btype, analog=True)
    elif approx == "chebyshev":
        n0, wn = signal.cheb1ord(wp, ws, ap, as_, analog=True)
        case["closed_form"] = int(n0)
        # With unity-gain sections the passband gain is the DC gain (low-pass)
        # or the high-frequency gain (high-pass), the ripple minimum for even
        # orders; increase the order until the attenuation relative to it
        # meets as_.
        for m in range(int(n0), MAX_ORDER + 1):
            b, a = signal.cheby1(m, ap, wp, btype=btype, analog=True)
            if rel_atten(b, a, kind, ws) >= as_ - 1e-9:
                n = m
                break
    else:
        for m in range(1, MAX_ORDER + 1):
            b, a = bessel_design(m, kind, fp, ap, norm)
            if rel_atten(b, a, kind, wp) <= ap + 1e-9 and rel_atten(b, a, kind, ws) >= as_ - 1e-9:
                n = m
                break
    case["order"] = n
    if n is not None:
        case["atten_pass"] = rel_atten(b, a, kind, wp)
        case["atten_stop"] = rel_atten(b, a, kind, ws)
    return case


def orders():
    out = []
    for kind in ("lowpass", "highpass"):
        fp = 1000.0
        for ratio in (1.2, 1.5, 2.0, 3.0, 5.0, 10.0):
            fs = fp * ratio if kind == "lowpass" else fp / ratio
            for as_ in (20.0, 40.0, 60.0, 80.0):
                for ap in (0.5, 1.0, HALF_POWER):
                    out.append(order_case("butterworth", kind, fp, fs, ap, as_))
                for ap in (0.1, 0.5, 1.0, 3.0):
                    out.append(order_case("chebyshev", kind, fp, fs, ap, as_))
        for ratio in (1.5, 2.0, 3.0, 5.0, 10.0, 20.0):
            fs = fp * ratio if kind == "lowpass" else fp / ratio
            for as_ in (6.0, 10.0, 14.0, 20.0, 40.0, 60.0):
                for ap in (1.0, HALF_POWER):
                    out.append(order_case("bessel", kind, fp, fs, ap, as_, "mag"))
                out.append(order_case("bessel", kind, fp, fs, HALF_POWER, as_, "delay"))
    return out


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    data = {
        "source": "scipy.signal %s (numpy %s), written by synth/testdata/gen/reference.py"
                  % (__import__("scipy").__version__, np.__version__),
        "prototypes": prototypes(),
        "orders": orders(),
    }
    path = os.path.join(os.path.dirname(here), "reference.json")
    with open(path, "w") as f:
        json.dump(data, f, indent=1, sort_keys=True)
        f.write("\n")
    print("wrote", path, len(data["prototypes"]), "prototypes,", len(data["orders"]), "order cases")


if __name__ == "__main__":
    main()
