package tolerance

import (
	"context"
	"math"
	"testing"

	"drawerfit/internal/testkit"
	"drawerfit/optimize"
	"drawerfit/synth"
)

// TestPlacementCompared holds the figures behind the choice of placement:
// for specifications with slack, the best candidate (by yield, from the
// same pool search) of the target centred in frequency (synth.PlaceInside)
// against the target whose dB margins at fp and fs are equal (the classical
// shape with its edge moved until Ap - A(fp) = A(fs) - As). The centred
// target must do at least as well, within the combined 95 % intervals.
// Long: DRAWERFIT_LONG=1 go test ./tolerance -run TestPlacementCompared -v
func TestPlacementCompared(t *testing.T) {
	if !testkit.Long() {
		t.Skip("long: set DRAWERFIT_LONG=1")
	}
	t.Parallel()
	items := sampleStock(t)
	specs := []synth.Spec{
		{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Stop: 3000, StopAtten: 40},
		{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Stop: 3000, StopAtten: 45},
		{Kind: synth.HighPass, Approx: synth.Butterworth, Pass: 1000, Stop: 400, StopAtten: 30},
		{Kind: synth.LowPass, Approx: synth.Bessel, Pass: 1000, Stop: 4000, StopAtten: 20},
		{Kind: synth.HighPass, Approx: synth.Butterworth, Pass: 1000, Stop: 1000.0 / 3, StopAtten: 60},
	}
	for _, s := range specs {
		if err := s.Normalize(); err != nil {
			t.Fatal(err)
		}
		n, err := synth.MinOrder(s)
		if err != nil {
			t.Fatal(err)
		}
		s.Order = n
		classical, err := synth.NewDesign(s, n, synth.OddOnePole)
		if err != nil {
			t.Fatal(err)
		}
		// at is the classical design's attenuation at f with its
		// frequencies scaled by k inside the specification.
		at := func(f, k float64) float64 {
			if s.Kind == synth.HighPass {
				return classical.AttenuationAt(f * k)
			}
			return classical.AttenuationAt(f / k)
		}
		lo, hi := 0.0, math.Abs(math.Log(s.Stop/s.Pass))
		for range 100 {
			m := 0.5 * (lo + hi)
			if s.PassAtten-at(s.Pass, math.Exp(m)) < at(s.Stop, math.Exp(m))-s.StopAtten {
				lo = m
			} else {
				hi = m
			}
		}
		k := math.Exp(0.5 * (lo + hi))
		balanced := s
		balanced.Pass = s.Pass * k
		if s.Kind == synth.HighPass {
			balanced.Pass = s.Pass / k
		}
		centred := s
		centred.Placement = synth.PlaceInside
		fo := optimize.DefaultOptions()
		fo.Top, fo.GoodEnough = PoolSize(10), poolGoodEnough(centred, fo.GoodEnough)
		best := func(fs synth.Spec) Ranked {
			r, err := optimize.Fit(context.Background(), items, fs, fo)
			if err != nil || len(r.Candidates) == 0 {
				t.Fatalf("%+v: no candidates (%v)", fs, err)
			}
			// Judged against the original specification.
			rk, err := RankByYield(context.Background(), r.Candidates, s, RankOptions{Options: Options{Trials: 2000, Seed: 3}, Top: 1})
			if err != nil {
				t.Fatal(err)
			}
			return rk.Listed[0]
		}
		c, b := best(centred), best(balanced)
		t.Logf("%s %s order %d, As %g dB: centred %d parts, yield %.1f%% (%.1f-%.1f); dB-balanced %d parts, yield %.1f%% (%.1f-%.1f)",
			s.Approx, s.Kind, n, s.StopAtten, c.Candidate.PartCount, 100*c.Yield.Fraction, 100*c.Yield.CILow, 100*c.Yield.CIHigh,
			b.Candidate.PartCount, 100*b.Yield.Fraction, 100*b.Yield.CILow, 100*b.Yield.CIHigh)
		if ok, _, _ := agree(c.Yield.Passed, c.Yield.Trials, b.Yield.Passed, b.Yield.Trials); !ok && c.Yield.Passed < b.Yield.Passed {
			t.Errorf("the dB-balanced target does clearly better")
		}
	}
}
