package synth

import (
	"testing"

	"drawerfit/internal/testkit"
)

func TestLimitsOutside(t *testing.T) {
	t.Parallel()
	l := Limits{RMin: 1e3, RMax: 470e3, CMin: 100e-12, CMax: 10e-6}
	// Sallen-Key low-pass elements: R1 R2 Cf Cg.
	stages := []Stage{
		StageOf(SallenKeyLowPass(), []float64{1e3, 470e3, 100e-12, 10e-6}), // every value on a limit: inside
		StageOf(SallenKeyLowPass(), []float64{999, 560e3, 47e-12, 22e-6}),
	}
	stages[1].Positions[0] = Position{Arrangement: Series, Parts: []float64{1.2e3, 820}}
	got := l.Outside(stages)
	want := []LimitIssue{
		{Stage: 1, Position: 0, Part: 1, Kind: Resistor, Value: 820, Low: true},
		{Stage: 1, Position: 1, Part: 0, Kind: Resistor, Value: 560e3, Low: false},
		{Stage: 1, Position: 2, Part: 0, Kind: Capacitor, Value: 47e-12, Low: true},
		{Stage: 1, Position: 3, Part: 0, Kind: Capacitor, Value: 22e-6, Low: false},
	}
	if len(got) != len(want) {
		t.Fatalf("issues %+v, want %+v", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("issue %d: %+v, want %+v", i, got[i], want[i])
		}
	}
	if (Limits{}).Inside(Resistor, 1e12) != true {
		t.Error("zero limits refuse a value")
	}
}

// TestScaleDefaultRangeIsPractical: the scaling default range is the
// practical one, so a plan without an anchor never produces a resistor the
// practical checks warn about.
func TestScaleDefaultRangeIsPractical(t *testing.T) {
	t.Parallel()
	d, err := NewDesign(Spec{Approx: Butterworth, Pass: 1000, Order: 4}, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	st, err := d.Scale(Scaling{})
	if err != nil {
		t.Fatal(err)
	}
	for _, is := range PracticalLimits.Outside(st) {
		if is.Kind == Resistor {
			t.Errorf("default scaling puts a resistor of %g Ω outside the practical limits", is.Value)
		}
	}
}

// TestSectionPoles recovers w0, Q and the real pole from denominators built
// from them: (1 + s/wr)(1 + s/(w0 Q) + s²/w0²) and the 1- and 2-pole forms
// (docs/check-values.md, "Section circuits").
func TestSectionPoles(t *testing.T) {
	t.Parallel()
	for _, c := range []struct{ w0, q, wr float64 }{
		{1, 0.7071, 0.5}, {1.43017, 0.52193, 1.32268}, {2e4, 8.0, 3e3}, {0.3, 0.55, 40},
	} {
		a1, a2 := 1/(c.w0*c.q), 1/(c.w0*c.w0)
		den := Poly{1, a1 + 1/c.wr, a2 + a1/c.wr, a2 / c.wr}
		w0, q, wr := SectionPoles(den, 3)
		if !near9(w0, c.w0) || !near9(q, c.q) || !near9(wr, c.wr) {
			t.Errorf("3-pole %+v: got w0 %g q %g wr %g", c, w0, q, wr)
		}
		if w0, q, _ := SectionPoles(Poly{1, a1, a2}, 2); !near9(w0, c.w0) || !near9(q, c.q) {
			t.Errorf("2-pole %+v: got w0 %g q %g", c, w0, q)
		}
		if w0, q, _ := SectionPoles(Poly{1, 1 / c.wr}, 1); !near9(w0, c.wr) || q != 0 {
			t.Errorf("1-pole %g: got w0 %g q %g", c.wr, w0, q)
		}
	}
}

func near9(a, b float64) bool { return testkit.Rel(1e-9).Equal(a, b) }
