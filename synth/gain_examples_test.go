package synth

import (
	"math"
	"testing"

	"drawerfit/internal/testkit"
)

// TestEqualComponentSallenKey reproduces the equal-component Sallen-Key
// design (R1 = R2, Cf = Cg, gain K = 3 - 1/Q) with its printed gains for
// Butterworth sections: 1.586 for n = 2, 1.152 and 2.235 for n = 4 (Texas
// Instruments, Op Amps for Everyone, SLOD006B, ch. 16, "Sallen-Key
// topology", and D. Lancaster, Active-Filter Cookbook; from memory;
// docs/check-values.md, "Worked examples"). Given equal capacitors and the
// printed gain, our gain solver must return equal resistors (to the 4
// printed digits) of 1/(w0·C).
func TestEqualComponentSallenKey(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		order   int
		printed []float64 // K per 2-pole section in rising Q, as printed
	}{{2, []float64{1.586}}, {4, []float64{1.152, 2.235}}} {
		d, err := NewDesign(Spec{Approx: Butterworth, Pass: 1000, Order: c.order}, 0, 0)
		if err != nil {
			t.Fatal(err)
		}
		for i, sec := range d.Sections {
			k := c.printed[i]
			testkit.Close(t, "K = 3 - 1/Q", 3-1/sec.Q, k, testkit.Abs(5e-4))
			const cap = 10e-9
			w0 := 2 * math.Pi * sec.F0
			sols, ok := SallenKeyGainLowPass().SolveGain([]float64{0, 0, cap, cap, 10e3, 0}, sec.Den, 3-1/sec.Q)
			if !ok {
				t.Fatalf("n=%d section %d: no solution", c.order, i+1)
			}
			found := false
			for _, v := range sols {
				if math.Abs(v[0]/v[1]-1) < 1e-6 {
					found = true
					testkit.Close(t, "R = 1/(w0·C)", v[0], 1/(w0*cap), testkit.Rel(1e-9))
				}
			}
			if !found {
				t.Errorf("n=%d section %d: no equal-resistor solution among %v", c.order, i+1, sols)
			}
			// With the printed (rounded) gain the resistors stay equal to
			// about the printed digits.
			sols, ok = SallenKeyGainLowPass().SolveGain([]float64{0, 0, cap, cap, 10e3, 0}, sec.Den, k)
			if !ok {
				t.Fatalf("n=%d section %d: no solution at the printed gain", c.order, i+1)
			}
			best := math.Inf(1)
			for _, v := range sols {
				best = math.Min(best, math.Abs(v[0]/v[1]-1))
			}
			if best > 0.02 {
				t.Errorf("n=%d section %d: printed gain %g gives R1/R2 off by %.3g", c.order, i+1, k, best)
			}
		}
	}
}

// TestMFBHandbookEquations holds our multiple-feedback solvers to the design
// equations of Texas Instruments, Op Amps for Everyone (SLOD006B), ch. 16,
// "Multiple feedback topology" (from memory; docs/check-values.md,
// "Section circuits"), written out here in the book's notation, for
// Butterworth n = 2 at fc = 1 kHz (a1 = √2, b1 = 1). The book's C1 is the
// feedback capacitor (our Cf), its C2 the one to ground (our Cg). The
// figures below are recomputed from the equations, not read from a printed
// example.
func TestMFBHandbookEquations(t *testing.T) {
	t.Parallel()
	const fc = 1000.0
	a1, b1 := math.Sqrt2, 1.0
	wc := 2 * math.Pi * fc
	d, err := NewDesign(Spec{Approx: Butterworth, Pass: fc, Order: 2}, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	den := d.Sections[0].Den
	t.Run("lowpass", func(t *testing.T) {
		for _, c := range []struct{ a0, c1, c2 float64 }{{-1, 10e-9, 100e-9}, {-10, 10e-9, 330e-9}} {
			// Book: C2 >= C1·4b1(1-A0)/a1².
			if c.c2 < c.c1*4*b1*(1-c.a0)/(a1*a1) {
				t.Fatalf("example violates the book's capacitor condition")
			}
			r2 := (a1*c.c2 - math.Sqrt(a1*a1*c.c2*c.c2-4*c.c1*c.c2*b1*(1-c.a0))) / (2 * wc * c.c1 * c.c2)
			r1 := r2 / -c.a0
			r3 := b1 / (wc * wc * c.c1 * c.c2 * r2)
			sols, ok := MFBLowPass().SolveGain([]float64{0, 0, 0, c.c2, c.c1}, den, -c.a0)
			if !ok {
				t.Fatal("no solution")
			}
			found := false
			for _, v := range sols {
				if math.Abs(v[1]/r2-1) < 1e-9 {
					found = true
					testkit.Close(t, "R1", v[0], r1, testkit.Rel(1e-9))
					testkit.Close(t, "R3", v[2], r3, testkit.Rel(1e-9))
				}
			}
			if !found {
				t.Errorf("A0 %g: book R2 = %g not among %v", c.a0, r2, sols)
			}
		}
	})
	t.Run("highpass", func(t *testing.T) {
		// Book, unity gain: C1 = C3 = C2 = C, R1 (ground) and R2 (feedback):
		// R1 = a1/(ωc·b1·C·(1-2A∞)) ... with A∞ = -1 the book's feedback
		// resistor is (1-2A∞)/(ωc·C·a1) and the one to ground
		// a1/(ωc·b1·C·(1-2A∞)).
		const c = 10e-9
		rg := a1 / (wc * b1 * c * 3)
		rf := 3 / (wc * c * a1)
		_, hden := pairPoly(HighPass, 2*math.Pi*fc/1, 1/math.Sqrt2)
		sols, ok := MFBHighPass().SolveGain([]float64{c, c, c, 0, 0}, hden, 1)
		if !ok {
			t.Fatal("no solution")
		}
		testkit.Close(t, "R1 (to ground)", sols[0][3], rg, testkit.Rel(1e-9))
		testkit.Close(t, "R2 (feedback)", sols[0][4], rf, testkit.Rel(1e-9))
	})
}
