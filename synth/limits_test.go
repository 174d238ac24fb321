package synth

import (
	"testing"
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
