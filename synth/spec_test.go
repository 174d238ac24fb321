package synth

import (
	"flag"
	"math"
	"os"
	"strings"
	"testing"

	"drawerfit/fault"
	"drawerfit/internal/testkit"
)

var update = flag.Bool("update", false, "rewrite golden files under testdata/")

// TestNormalizeErrors checks that every bad specification of issue 3 is a
// fault.Invalid error with a message that names the problem.
func TestNormalizeErrors(t *testing.T) {
	t.Parallel()
	base := Spec{Approx: Butterworth, Pass: 1000, Stop: 2000, StopAtten: 40}
	cases := []struct {
		name string
		mod  func(*Spec)
		msg  string
	}{
		{"fs-below-fp-lowpass", func(s *Spec) { s.Stop = 500 }, "must be above the passband edge"},
		{"fs-equal-fp", func(s *Spec) { s.Stop = 1000 }, "must be above the passband edge"},
		{"fs-above-fp-highpass", func(s *Spec) { s.Kind = HighPass }, "must be below the passband edge"},
		{"as-below-ap", func(s *Spec) { s.StopAtten = 2 }, "must exceed the passband attenuation"},
		{"as-equal-ap", func(s *Spec) { s.PassAtten, s.StopAtten = 3, 3 }, "must exceed the passband attenuation"},
		{"as-below-ripple", func(s *Spec) { s.Approx, s.Ripple, s.StopAtten = Chebyshev, 3, 2 }, "must exceed the passband attenuation"},
		{"fp-zero", func(s *Spec) { s.Pass = 0 }, "passband edge must be a positive finite frequency"},
		{"fp-negative", func(s *Spec) { s.Pass = -1 }, "passband edge must be a positive finite frequency"},
		{"fp-nan", func(s *Spec) { s.Pass = math.NaN() }, "passband edge must be a positive finite frequency"},
		{"fp-inf", func(s *Spec) { s.Pass = math.Inf(1) }, "passband edge must be a positive finite frequency"},
		{"fs-negative", func(s *Spec) { s.Stop = -5 }, "stopband edge must be a positive finite frequency"},
		{"fs-inf", func(s *Spec) { s.Stop = math.Inf(1) }, "stopband edge must be a positive finite frequency"},
		{"as-negative", func(s *Spec) { s.StopAtten = -40 }, "stopband attenuation must be a positive finite"},
		{"as-nan", func(s *Spec) { s.StopAtten = math.NaN() }, "stopband attenuation must be a positive finite"},
		{"as-missing", func(s *Spec) { s.StopAtten = 0 }, "needs its minimum attenuation"},
		{"ap-negative", func(s *Spec) { s.PassAtten = -1 }, "passband attenuation must be a positive finite"},
		{"ap-inf", func(s *Spec) { s.PassAtten = math.Inf(1) }, "passband attenuation must be a positive finite"},
		{"ripple-negative", func(s *Spec) { s.Approx, s.Ripple = Chebyshev, -0.5 }, "ripple must be a positive finite"},
		{"ripple-nan", func(s *Spec) { s.Approx, s.Ripple = Chebyshev, math.NaN() }, "ripple must be a positive finite"},
		{"ripple-without-chebyshev", func(s *Spec) { s.Ripple = 0.5 }, "only applies to a Chebyshev response"},
		{"ripple-with-bessel", func(s *Spec) { s.Approx, s.Ripple = Bessel, 1 }, "only applies to a Chebyshev response"},
		{"ripple-and-ap-differ", func(s *Spec) { s.Approx, s.Ripple, s.PassAtten = Chebyshev, 0.5, 1 }, "passband attenuation is the ripple"},
		{"order-zero-no-stop", func(s *Spec) { s.Stop, s.StopAtten = 0, 0 }, "or an order"},
		{"order-13", func(s *Spec) { s.Order = 13 }, "outside 1..12"},
		{"order-negative", func(s *Spec) { s.Order = -1 }, "outside 1..12"},
		{"unknown-approx", func(s *Spec) { s.Approx = 9 }, "unknown approximation"},
		{"unknown-odd", func(s *Spec) { s.Odd = 7 }, "unknown odd-order arrangement"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s := base
			c.mod(&s)
			err := s.Normalize()
			if fault.KindOf(err) != fault.Invalid {
				t.Fatalf("got %v, want an invalid-input error", err)
			}
			if !strings.Contains(err.Error(), c.msg) {
				t.Errorf("message %q does not say %q", err, c.msg)
			}
			// NewDesign and MinOrder report the same error.
			if _, err := NewDesign(s, 0, 0); fault.KindOf(err) != fault.Invalid {
				t.Errorf("NewDesign: %v", err)
			}
		})
	}
	t.Run("newdesign-order-13", func(t *testing.T) {
		if _, err := NewDesign(Spec{Pass: 1000}, 13, 0); fault.KindOf(err) != fault.Invalid {
			t.Errorf("got %v", err)
		}
	})
}

// TestNormalizeDefaults checks the filled-in defaults: Ap = 10·log10(2) dB
// for Butterworth and Bessel (docs/check-values.md, "Conventions"), Chebyshev Ap = ripple,
// default ripple, 1-pole odd arrangement.
func TestNormalizeDefaults(t *testing.T) {
	t.Parallel()
	s := Spec{Approx: Butterworth, Pass: 1000, Order: 3}
	if err := s.Normalize(); err != nil {
		t.Fatal(err)
	}
	if s.PassAtten != HalfPowerDB || !testkit.Abs(1e-4).Equal(HalfPowerDB, 3.0103) || s.Odd != OddOnePole {
		t.Errorf("Butterworth defaults %+v", s)
	}
	c := Spec{Approx: Chebyshev, Pass: 1000, Order: 3, PassAtten: 0.25}
	if err := c.Normalize(); err != nil || c.Ripple != 0.25 || c.PassAtten != 0.25 {
		t.Errorf("Chebyshev with Ap only: %+v, %v", c, err)
	}
	c = Spec{Approx: Chebyshev, Pass: 1000, Order: 3}
	if err := c.Normalize(); err != nil || c.Ripple != DefaultRipple || c.PassAtten != DefaultRipple {
		t.Errorf("Chebyshev defaults: %+v, %v", c, err)
	}
}

func TestMinOrderInfeasible(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		s    Spec
		msg  string
	}{
		// Bessel: no order exceeds 14.17 dB at twice the -3 dB frequency
		// (docs/check-values.md, "Orders and attenuation", computed).
		{"bessel-2x-30dB", Spec{Approx: Bessel, Pass: 1000, Stop: 2000, StopAtten: 30}, "the most is 14.17 dB (order 6)"},
		// Butterworth: 100 dB at 1.2·fp needs order 64 by the closed form.
		{"butterworth-order-64", Spec{Approx: Butterworth, Pass: 1000, Stop: 1200, StopAtten: 100}, "needs order 64"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := MinOrder(c.s)
			if fault.KindOf(err) != fault.Infeasible || !strings.Contains(err.Error(), c.msg) {
				t.Errorf("got %v, want infeasible saying %q", err, c.msg)
			}
			// An explicit order still designs, with a note on the shortfall.
			d, err := NewDesign(c.s, 4, 0)
			if err != nil {
				t.Fatal(err)
			}
			if !strings.Contains(strings.Join(d.Notes, "\n"), "no order up to 12") {
				t.Errorf("notes %q", d.Notes)
			}
		})
	}
}

// TestNotes checks that the design explains the edge placement, the
// stopband margin, an order above or below the minimum and the even-order
// Chebyshev passband.
func TestNotes(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name  string
		s     Spec
		order int
		want  []string
	}{
		// Butterworth attenuation 10·log10(1 + (f/f3)^(2n)) (docs/check-values.md, "Approximations"):
		// n = 5 at 3·f3 47.71 dB, n = 7 66.80 dB, n = 3 28.63 dB; with
		// Ap = 1 dB the -3 dB point is fp·(10^0.1 - 1)^(-1/8) = 1.184·fp.
		{"minimum", Spec{Approx: Butterworth, Pass: 1000, Stop: 3000, StopAtten: 40}, 0,
			[]string{"-3 dB point", "minimum order 5: 47.71 dB at fs 3 kHz, margin 7.71 dB"}},
		{"slack", Spec{Approx: Butterworth, Pass: 1000, Stop: 3000, StopAtten: 40}, 7, []string{"order 7 is above the minimum 5", "margin 26.80 dB"}},
		{"short", Spec{Approx: Butterworth, Pass: 1000, Stop: 3000, StopAtten: 40}, 3, []string{"order 3 is below the minimum 5", "11.37 dB short"}},
		{"ap-1dB", Spec{Approx: Butterworth, PassAtten: 1, Pass: 1000, Order: 4}, 0, []string{"1 dB at fp 1 kHz, -3 dB at 1.184 kHz"}},
		{"chebyshev-even", Spec{Approx: Chebyshev, Ripple: 0.5, Pass: 1000, Order: 4}, 0, []string{"ripple band", "rises up to 0.5 dB above it", "0 dB relative to the DC gain"}},
		{"bessel-delay", Spec{Approx: Bessel, BesselNorm: BesselDelay, Pass: 1000, Order: 2}, 0, []string{"group delay at DC 159.2 µs", "-3 dB at 1.362 kHz"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			d, err := NewDesign(c.s, c.order, 0)
			if err != nil {
				t.Fatal(err)
			}
			all := strings.Join(d.Notes, "\n")
			for _, w := range c.want {
				if !strings.Contains(all, w) {
					t.Errorf("notes %q lack %q", all, w)
				}
			}
		})
	}
}

func TestParseFrequency(t *testing.T) {
	t.Parallel()
	good := []struct {
		in   string
		want float64
	}{
		{"1500", 1500}, {"1.5k", 1500}, {"1.5kHz", 1500}, {"1.5 kHz", 1500}, {"1.5K", 1500},
		{"1.1k", 1100}, {"2M", 2e6}, {"2MHz", 2e6}, {"50mHz", 0.05}, {"20e3", 20e3}, {"1e3Hz", 1000},
		{"1G", 1e9}, {" 440 Hz ", 440}, {"0.5", 0.5}, {"2.5e-1k", 250},
	}
	for _, c := range good {
		t.Run(c.in, func(t *testing.T) {
			got, err := ParseFrequency(c.in)
			if err != nil || got != c.want {
				t.Errorf("got %v, %v; want %v", got, err, c.want)
			}
		})
	}
	for _, in := range []string{"", "k", "abc", "1.5x", "1.5 kHzz", "-1k", "0", "1e999", "NaN", "1kk", "1 k Hz"} {
		t.Run("bad/"+in, func(t *testing.T) {
			if _, err := ParseFrequency(in); fault.KindOf(err) != fault.Invalid {
				t.Errorf("got %v, want an invalid-input error", err)
			}
		})
	}
}

func TestParseNames(t *testing.T) {
	t.Parallel()
	for _, a := range []Approx{Butterworth, Chebyshev, Bessel} {
		if got, err := ParseApprox(a.String()); err != nil || got != a {
			t.Errorf("%s: %v %v", a, got, err)
		}
	}
	for _, k := range []Kind{LowPass, HighPass} {
		if got, err := ParseKind(k.String()); err != nil || got != k {
			t.Errorf("%s: %v %v", k, got, err)
		}
	}
	for _, o := range []Odd{OddOnePole, OddThreePole} {
		if got, err := ParseOdd(o.String()); err != nil || got != o {
			t.Errorf("%s: %v %v", o, got, err)
		}
	}
	for _, b := range []BesselNorm{BesselMag, BesselDelay} {
		if got, err := ParseBesselNorm(b.String()); err != nil || got != b {
			t.Errorf("%s: %v %v", b, got, err)
		}
	}
	for _, bad := range []func() error{
		func() error { _, err := ParseApprox("elliptic"); return err },
		func() error { _, err := ParseKind("bandpass"); return err },
		func() error { _, err := ParseOdd("2pole"); return err },
		func() error { _, err := ParseBesselNorm("phase"); return err },
	} {
		if fault.KindOf(bad()) != fault.Invalid {
			t.Error("a bad name was accepted")
		}
	}
}

// TestNetlistGolden pins the netlist text of a fixed design (rewrite with
// go test ./synth -run Golden -update after an intended change).
func TestNetlistGolden(t *testing.T) {
	t.Parallel()
	d, err := NewDesign(Spec{Approx: Chebyshev, Ripple: 0.5, Pass: 2000, Order: 5, Odd: OddThreePole}, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	st, err := d.Scale(Scaling{Anchor: 10e-9})
	if err != nil {
		t.Fatal(err)
	}
	st[1].Positions[0] = Position{Arrangement: Series, Parts: []float64{st[1].Positions[0].Parts[0] - 1000, 1000}}
	for _, c := range []struct {
		file string
		o    NetlistOptions
	}{
		{"testdata/chebyshev5.cir", NetlistOptions{Title: "5th-order 0.5 dB Chebyshev low-pass, 2 kHz"}},
		{"testdata/chebyshev5-gbw.cir", NetlistOptions{Title: "5th-order 0.5 dB Chebyshev low-pass, 2 kHz", OpAmp: &OpAmp{DCGain: 2e5, GBW: 1e6}, FStart: 100, FStop: 20e3, PointsPerDecade: 40}},
	} {
		t.Run(c.file, func(t *testing.T) {
			got := Netlist(st, c.o)
			if *update {
				if err := os.WriteFile(c.file, []byte(got), 0o644); err != nil {
					t.Fatal(err)
				}
			}
			want, err := os.ReadFile(c.file)
			if err != nil {
				t.Fatalf("%v (run with -update to create it)", err)
			}
			if got != string(want) {
				t.Errorf("netlist differs from %s:\n%s", c.file, got)
			}
		})
	}
}
