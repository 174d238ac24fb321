package tolerance

import (
	"context"
	"math"
	"strings"
	"testing"

	"drawerfit/internal/testkit"
	"drawerfit/optimize"
	"drawerfit/synth"
)

// TestDefaultFitPassesPracticalChecks: the fit's default search range and
// the practical checks read the same limits (synth.PracticalLimits), so
// no candidate of a default fit draws a value warning. The invented
// low-frequency high-pass (a 20 Hz rumble filter) pulls the resistors
// high, where a fit with the old 1 MΩ ceiling chose 560 kΩ.
func TestDefaultFitPassesPracticalChecks(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("fits the sample drawer")
	}
	items := sampleStock(t)
	for _, spec := range []synth.Spec{
		{Kind: synth.HighPass, Approx: synth.Bessel, Pass: 20, Order: 4},
		{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 50, Order: 2},
	} {
		o := optimize.DefaultOptions()
		o.Combine = 1
		r, err := optimize.Fit(context.Background(), items, spec, o)
		if err != nil {
			t.Fatal(err)
		}
		for i, c := range r.Candidates {
			ws, err := Practical(c)
			if err != nil {
				t.Fatal(err)
			}
			for _, w := range ws {
				if strings.Contains(w, "below about") || strings.Contains(w, "above about") {
					t.Errorf("%v candidate %d: %s", spec.Kind, i+1, w)
				}
			}
		}
	}
}

func TestQuantileType7(t *testing.T) {
	t.Parallel()
	// Type-7 quantiles (R's default, Hyndman and Fan 1996, from memory):
	// h = p·(n-1), interpolate between the order statistics around h.
	data := []float64{1, 2, 3, 4, 10}
	for _, c := range []struct{ p, want float64 }{
		{0, 1}, {0.05, 1.2}, {0.5, 3}, {0.9, 7.6}, {1, 10},
	} {
		testkit.Close(t, "quantile", Quantile(data, c.p), c.want, testkit.Abs(1e-12))
	}
	if !math.IsNaN(Quantile(nil, 0.5)) {
		t.Error("the quantile of no data is not NaN")
	}
}
