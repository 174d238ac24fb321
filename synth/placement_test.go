package synth

import (
	"math"
	"strings"
	"testing"

	"drawerfit/internal/testkit"
)

// butterworthAtten is the Butterworth magnitude |H|² = 1/(1 + (f/f3)^(2n))
// (docs/check-values.md, "Approximations"), in dB of attenuation, written
// here without synth's pole code.
func butterworthAtten(f, f3 float64, n int) float64 {
	return 10 * math.Log10(1+math.Pow(f/f3, 2*float64(n)))
}

// chebyshevAtten is the Chebyshev type I attenuation relative to the
// passband maximum, 10 log10(1 + ε² T_n²(x)) with ε² = 10^(r/10) - 1 and x
// the frequency over the ripple-band edge (docs/check-values.md,
// "Approximations", where ε is defined; the magnitude form is the standard
// one of Williams and Taylor, Electronic Filter Design Handbook, ch. 2, from
// memory).
func chebyshevAtten(x, r float64, n int) float64 {
	e2 := math.Pow(10, r/10) - 1
	var t float64
	if x <= 1 {
		t = math.Cos(float64(n) * math.Acos(x))
	} else {
		t = math.Cosh(float64(n) * math.Acosh(x))
	}
	return 10 * math.Log10(1+e2*t*t)
}

// TestPlacementInside checks the inside placement against the handbook
// magnitudes: the target is centred in log frequency (the response can
// shift by the same factor either way before it fails at fp or at fs), and
// a Chebyshev target also has equal dB margins at fp and fs.
func TestPlacementInside(t *testing.T) {
	t.Parallel()
	for _, kind := range []Kind{LowPass, HighPass} {
		for _, a := range []Approx{Butterworth, Chebyshev, Bessel} {
			for n := 2; n <= 8; n++ {
				name := kind.String() + "-" + a.String() + "-" + string(rune('0'+n))
				t.Run(name, func(t *testing.T) {
					t.Parallel()
					s := Spec{Kind: kind, Approx: a, Pass: 1000, Order: n, Placement: PlaceInside}
					// Enough stopband to leave slack at order n: the classical
					// design's own attenuation at 3·fp (fp/3), less 3 dB.
					c := s
					c.Placement = PlaceEdge
					stopF := 3000.0
					if kind == HighPass {
						stopF = 1000.0 / 3
					}
					cd, err := NewDesign(c, n, OddOnePole)
					if err != nil {
						t.Fatal(err)
					}
					s.Stop, s.StopAtten = stopF, cd.AttenuationAt(stopF)-3
					if s.StopAtten <= 4 {
						t.Skip("too little attenuation at this order for a stopband limit")
					}
					d, err := NewDesign(s, n, OddOnePole)
					if err != nil {
						t.Fatal(err)
					}
					s = d.Spec
					p := d.Placing
					if p.Used != PlaceInside {
						t.Fatalf("placement %v, want inside (%s)", p.Used, p.Why)
					}
					k := 1 + p.Shift
					lp := func(x float64) float64 { // low-pass axis to Hz
						if kind == HighPass {
							return 1000 / x
						}
						return 1000 * x
					}
					even := 0.0
					if a == Chebyshev && n%2 == 0 {
						even = p.Ripple // stopband measured from the DC gain, the ripple minimum
					}
					// Shifted down by k the passband figure reaches Ap at fp;
					// shifted up by k the stopband reaches As at fs.
					passAt := d.AttenuationAt(lp(k)) + even
					stopAt := d.AttenuationAt(lp(3 / k))
					if kind == HighPass {
						stopAt = d.AttenuationAt(1000.0 / 3 * k)
					}
					if !testkit.Abs(1e-6).Equal(passAt, s.PassAtten) || !testkit.Abs(1e-6).Equal(stopAt, s.StopAtten) {
						t.Errorf("shift %.4f: %.6f dB at the shifted fp (want %.6f), %.6f dB at the shifted fs (want %.6f)",
							p.Shift, passAt, s.PassAtten, stopAt, s.StopAtten)
					}
					if !(p.PassMargin > 0 && p.StopMargin > 0) {
						t.Errorf("margins %.4f / %.4f dB, want both positive", p.PassMargin, p.StopMargin)
					}
					switch a {
					case Butterworth:
						// The -3 dB point of the handbook form.
						f3 := p.Edge
						if kind == HighPass {
							f3 = 1e6 / p.Edge // mirrored: f -> fp²/f
						}
						ff := 1000.0
						got := butterworthAtten(ff, f3, n)
						if !testkit.Abs(1e-6).Equal(got, s.PassAtten-p.PassMargin) {
							t.Errorf("handbook attenuation at fp %.6f dB, design margin says %.6f", got, s.PassAtten-p.PassMargin)
						}
					case Chebyshev:
						x := 1000 / p.Edge
						if kind == HighPass {
							x = p.Edge / 1000
						}
						if x > 1 {
							t.Fatalf("ripple band ends before fp (x = %.4f)", x)
						}
						xs := 3 * x
						got := chebyshevAtten(xs, p.Ripple, n) - even
						if !testkit.Abs(1e-6).Equal(got, s.StopAtten+p.StopMargin) {
							t.Errorf("handbook attenuation at fs %.6f dB, design margin says %.6f", got, s.StopAtten+p.StopMargin)
						}
						if x < 1 && !testkit.Abs(1e-6).Equal(p.PassMargin, p.StopMargin) && p.PassMargin < p.StopMargin {
							t.Errorf("dB margins %.4f at fp and %.4f at fs: the ripple could be smaller", p.PassMargin, p.StopMargin)
						}
					}
					if !strings.Contains(d.Notes[0], "target placed inside the specification") {
						t.Errorf("first note %q does not say where the target was placed", d.Notes[0])
					}
				})
			}
		}
	}
}

// TestPlacementNoSlack checks that a specification without slack keeps the
// classical placement, identical to PlaceEdge, and says why.
func TestPlacementNoSlack(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		s    Spec
		why  string
	}{
		{"order-only", Spec{Approx: Butterworth, Pass: 1000, Order: 4, Placement: PlaceInside}, "no stopband limit"},
		{"below-minimum", Spec{Approx: Chebyshev, Pass: 1000, Stop: 1500, StopAtten: 60, Order: 3, Placement: PlaceInside}, "below the minimum"},
		{"delay-bessel", Spec{Approx: Bessel, BesselNorm: BesselDelay, Pass: 1000, Stop: 5000, StopAtten: 12, Placement: PlaceInside}, "unit-delay"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			d, err := NewDesign(c.s, c.s.Order, OddOnePole)
			if err != nil {
				t.Fatal(err)
			}
			if d.Placing.Used != PlaceEdge || !strings.Contains(d.Placing.Why, c.why) || !strings.Contains(d.Placing.Why, "classical placement") {
				t.Fatalf("placing %+v, want the classical placement because %q", d.Placing, c.why)
			}
			e := c.s
			e.Placement = PlaceEdge
			de, err := NewDesign(e, e.Order, OddOnePole)
			if err != nil {
				t.Fatal(err)
			}
			for i := range d.Sections {
				if d.Sections[i].F0 != de.Sections[i].F0 || d.Sections[i].Q != de.Sections[i].Q {
					t.Fatalf("section %d differs from the classical design", i+1)
				}
			}
			joined := strings.Join(d.Notes, "\n")
			if !strings.Contains(joined, "classical placement") {
				t.Errorf("notes do not say the classical placement was kept:\n%s", joined)
			}
		})
	}
}
