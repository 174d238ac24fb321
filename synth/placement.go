package synth

import (
	"fmt"
	"math"
	"strings"

	"drawerfit/fault"
)

// Placement says where the target response sits within the specification.
type Placement uint8

const (
	// PlaceEdge (the zero value) is the classical placement: the
	// attenuation Ap exactly at fp (for Chebyshev the full ripple Ap with its
	// band ending at fp), and whatever slack the order leaves goes to the
	// stopband.
	PlaceEdge Placement = iota
	// PlaceInside centres the target in the specification when the order
	// leaves slack (see Design.Placing); without slack it falls back to
	// PlaceEdge and says so.
	PlaceInside
)

// String returns "edge" or "inside".
func (p Placement) String() string {
	if p == PlaceInside {
		return "inside"
	}
	return "edge"
}

// ParsePlacement reads "inside" or "edge" (case ignored). Anything else is a
// fault.Invalid error.
func ParsePlacement(s string) (Placement, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "inside":
		return PlaceInside, nil
	case "edge":
		return PlaceEdge, nil
	}
	return 0, fault.Invalidf("unknown placement %q: use inside or edge", s)
}

// Placing describes where a design's target was placed and the nominal
// margins it leaves against the specification.
type Placing struct {
	// Used is the placement applied: PlaceInside only when asked for and the
	// order leaves slack.
	Used Placement
	// Edge is the frequency in Hz where the ideal response reaches Ap
	// (Butterworth, Bessel) or where its ripple band ends (Chebyshev).
	Edge float64
	// Ripple is the Chebyshev ripple of the target, dB (0 otherwise).
	Ripple float64
	// PassMargin is Ap minus the ideal response's passband figure (its
	// attenuation at fp; for Chebyshev its ripple up to fp), dB.
	PassMargin float64
	// StopMargin is the ideal attenuation at fs minus As, dB; NaN without a
	// stopband.
	StopMargin float64
	// Shift is how far, as a fraction, the whole response could move in
	// frequency either way before the ideal design fails at fp or at fs
	// (the smaller of the two); NaN without a stopband.
	Shift float64
	// Why says in plain words where the target was placed and why.
	Why string
}

// placement decides the frequency scale k (> 1 moves the edge into the
// stopband's direction on the low-pass prototype axis) and the Chebyshev
// ripple r of an order-n design of s. ok is false when the target stays on
// the edge; why then says why.
//
// The rule: component tolerances move a built filter mostly in frequency,
// so the target is centred in the specification on a logarithmic frequency
// axis: the response can shift by the same factor down (until it fails at
// fp) as up (until it fails at fs). For Butterworth and Bessel that fixes
// the edge. A Chebyshev response also has its ripple free: it is made
// smaller, so that the dB margins at fp (Ap minus the ripple) and at fs are
// equal as well, as far as the frequency centring allows.
func placement(s *Spec, n int) (pl placed) {
	pl = placed{k: 1, r: s.Ripple}
	switch {
	case s.Placement != PlaceInside:
		pl.why = "the classical placement was asked for"
		return pl
	case s.Stop == 0:
		pl.why = "there is no stopband limit, so no slack to place the target inside"
		return pl
	case s.Approx == Bessel && s.BesselNorm == BesselDelay:
		pl.why = "the unit-delay Bessel normalisation fixes the edge"
		return pl
	}
	rho := s.stopRatio()
	if s.Approx == Chebyshev {
		return chebyshevPlacement(s, n, rho)
	}
	poles := Prototype(s.Approx, n, s.Ripple, s.BesselNorm)
	scaleClassical(s, n, poles)
	u := attenCrossing(poles, s.StopAtten) // where the classical target reaches As
	if !(u < rho*(1-1e-9)) {
		pl.why = fmt.Sprintf("order %d has no slack at fs", n)
		return pl
	}
	pl.k = math.Sqrt(rho / u)
	pl.shift, pl.ok = pl.k, true
	return pl
}

// placed is the outcome of placement: the frequency scale k of the
// classical target on the low-pass prototype axis, the Chebyshev ripple r,
// the factor shift by which the response may move either way in frequency
// before the ideal design fails, and whether the target was moved inside
// (ok) or why not.
type placed struct {
	k, r, shift float64
	ok          bool
	why         string
}

// chebyshevPlacement is placement for a Chebyshev response, from the closed
// form A(x) = 10 log10(1 + ε² T_n²(x)), ε² = 10^(r/10) - 1, with the ripple
// band ending at x = 1; an even order with unity-gain sections measures the
// stopband from its DC gain, the ripple minimum, so r less.
func chebyshevPlacement(s *Spec, n int, rho float64) placed {
	even := 0.0
	if n%2 == 0 {
		even = 1
	}
	// xAt is where the attenuation relative to the passband maximum reaches
	// a (a >= r).
	xAt := func(r, a float64) float64 {
		e2 := math.Pow(10, r/10) - 1
		return math.Cosh(math.Acosh(math.Sqrt((math.Pow(10, a/10)-1)/e2)) / float64(n))
	}
	stopAt := func(r, x float64) float64 {
		e2 := math.Pow(10, r/10) - 1
		t := math.Cosh(float64(n) * math.Acosh(x))
		return 10*math.Log10(1+e2*t*t) - even*r
	}
	xpass := func(r float64) float64 {
		if r < s.PassAtten {
			return xAt(r, s.PassAtten)
		}
		return 1
	}
	// scale is the frequency-centring scale for ripple r.
	scale := func(r float64) float64 {
		return math.Sqrt(rho / (xpass(r) * xAt(r, s.StopAtten+even*r)))
	}
	ap := s.PassAtten
	if !(scale(ap) > 1+1e-9) {
		return placed{k: 1, r: ap, why: fmt.Sprintf("order %d has no slack at fs", n)}
	}
	// Smallest ripple that still leaves the edge at or beyond fp.
	lo, hi := math.Log(ap*1e-6), math.Log(ap)
	if scale(math.Exp(lo)) < 1 {
		for it := 0; it < 100; it++ {
			m := 0.5 * (lo + hi)
			if scale(math.Exp(m)) < 1 {
				lo = m
			} else {
				hi = m
			}
		}
		lo = hi
	}
	rmin := math.Exp(lo)
	// gap > 0: the passband has more dB margin than the stopband.
	gap := func(r float64) float64 { return (ap - r) - (stopAt(r, rho/scale(r)) - s.StopAtten) }
	r := rmin
	if gap(rmin) > 0 {
		a, b := rmin, ap
		for it := 0; it < 100; it++ {
			m := 0.5 * (a + b)
			if gap(m) > 0 {
				a = m
			} else {
				b = m
			}
		}
		r = 0.5 * (a + b)
	}
	k := scale(r)
	return placed{k: k, r: r, shift: k * xpass(r), ok: true}
}

// scaleClassical scales prototype poles so that the attenuation at the
// normalised edge 1 rad/s is exactly Ap (Butterworth, Bessel magnitude
// normalisation); Chebyshev prototypes already end their ripple band there.
func scaleClassical(s *Spec, n int, poles []complex128) {
	k := 1.0
	switch {
	case s.Approx == Butterworth:
		// docs/check-values.md, "Approximations": the -3 dB frequency is fp·(10^(Ap/10)-1)^(-1/(2n)).
		k = math.Pow(math.Pow(10, s.PassAtten/10)-1, -1/(2*float64(n)))
	case s.Approx == Bessel && s.BesselNorm == BesselMag && s.PassAtten != HalfPowerDB:
		k = 1 / attenCrossing(poles, s.PassAtten)
	}
	for i := range poles {
		poles[i] *= complex(k, 0)
	}
}

// passFigure is the ideal design's passband figure judged against Ap: the
// attenuation at fp, or for Chebyshev the ripple (largest minus smallest
// gain) from DC (infinite frequency for a high-pass) to fp, found on a
// dense grid.
func (d *Design) passFigure() float64 {
	s := &d.Spec
	if s.Approx != Chebyshev {
		return d.AttenuationAt(s.Pass)
	}
	const n = 2000
	amin, amax := math.Inf(1), math.Inf(-1)
	for i := 0; i <= n; i++ {
		x := float64(i) / n
		var a float64
		if x == 0 {
			a = 0 // unity gain at DC (infinite frequency for a high-pass)
		} else if s.Kind == HighPass {
			a = d.AttenuationAt(s.Pass / x)
		} else {
			a = d.AttenuationAt(s.Pass * x)
		}
		amin, amax = math.Min(amin, a), math.Max(amax, a)
	}
	return amax - amin
}

// place fills d.Placing from the placement applied.
func (d *Design) place(pl placed) {
	s := &d.Spec
	k, r, ok, why := pl.k, pl.r, pl.ok, pl.why
	p := Placing{Used: PlaceEdge, StopMargin: math.NaN(), Shift: math.NaN()}
	if ok {
		p.Used = PlaceInside
	}
	if s.Approx == Chebyshev {
		p.Ripple = r
	}
	// The edge moves with k on the prototype axis: up for a low-pass, down
	// for a high-pass.
	p.Edge = s.Pass * k
	if s.Kind == HighPass {
		p.Edge = s.Pass / k
	}
	if s.Approx != Chebyshev && !(s.Approx == Bessel && s.BesselNorm == BesselDelay) {
		p.Edge = d.crossing(s.PassAtten)
	}
	p.PassMargin = s.PassAtten - d.passFigure()
	if s.Stop > 0 {
		p.StopMargin = d.AttenuationAt(s.Stop) - s.StopAtten
		if ok {
			p.Shift = pl.shift - 1
		}
	}
	switch {
	case ok && s.Approx == Chebyshev:
		band := "at fp " + hzString(s.Pass)
		if math.Abs(k-1) > 1e-4 {
			band = fmt.Sprintf("at %s, beyond fp %s", hzString(p.Edge), hzString(s.Pass))
		}
		p.Why = fmt.Sprintf("target placed inside the specification: ripple %.3g dB (%.3g allowed) with its band ending %s; margins %.2f dB at fp and %.2f dB at fs, and the response may shift %.1f%% in frequency either way before it fails",
			r, s.PassAtten, band, p.PassMargin, p.StopMargin, 100*p.Shift)
	case ok:
		p.Why = fmt.Sprintf("target placed inside the specification: %.3g dB at %s instead of at fp %s; margins %.2f dB at fp and %.2f dB at fs, and the response may shift %.1f%% in frequency either way before it fails",
			s.PassAtten, hzString(p.Edge), hzString(s.Pass), p.PassMargin, p.StopMargin, 100*p.Shift)
	default:
		p.Why = "target on the edge (classical placement): " + why
		if s.Stop > 0 {
			p.Why += fmt.Sprintf("; margins %.2f dB at fp and %.2f dB at fs", p.PassMargin, p.StopMargin)
		}
	}
	d.Placing = p
}

// crossing returns the frequency in Hz where the ideal design's attenuation
// reaches a (dB) coming from the passband; the responses placed this way
// are monotonic.
func (d *Design) crossing(a float64) float64 {
	s := &d.Spec
	at := func(x float64) float64 { // x on the low-pass axis
		if s.Kind == HighPass {
			return d.AttenuationAt(s.Pass / x)
		}
		return d.AttenuationAt(s.Pass * x)
	}
	lo, hi := 1.0, 1.0
	for at(lo) > a && lo > 1e-6 {
		lo /= 2
	}
	for at(hi) < a && hi < 1e6 {
		hi *= 2
	}
	for it := 0; it < 200 && hi-lo > 1e-13*hi; it++ {
		m := 0.5 * (lo + hi)
		if at(m) < a {
			lo = m
		} else {
			hi = m
		}
	}
	x := 0.5 * (lo + hi)
	if s.Kind == HighPass {
		return s.Pass / x
	}
	return s.Pass * x
}
