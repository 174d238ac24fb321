package optimize

import (
	"fmt"
	"testing"
	"time"

	"drawerfit/synth"
)

func TestQuickFit(t *testing.T) {
	items := fullSeriesStock()
	for _, n := range []int{2, 3, 4, 5, 6, 8} {
		spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: n}
		o := DefaultOptions()
		t0 := time.Now()
		r, err := Fit(items, spec, o)
		if err != nil {
			t.Fatal(err)
		}
		fmt.Println("order", n, time.Since(t0), len(r.Candidates), r.Notes)
		for i, c := range r.Candidates {
			if i > 3 {
				break
			}
			fmt.Printf("  %s err=%.5f parts=%d uniq=%d pass=%.4f meets=%v\n", c.Arrangement(), c.ResponseError, c.PartCount, c.UniqueParts, c.PassAtten, c.MeetsSpec)
		}
	}
}
