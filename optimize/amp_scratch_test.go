package optimize

import (
	"context"
	"testing"

	"drawerfit/synth"
)

func TestScratchAmp(t *testing.T) {
	items := sampleStock(t)
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 10e3, Stop: 30e3, StopAtten: 40}
	o := DefaultOptions()
	op := synth.OpAmp{GBW: 1e6}
	ideal, err := FitAmps(context.Background(), items, spec, o, AmpChoice{Mode: AmpIdeal})
	if err != nil {
		t.Fatal(err)
	}
	for i, c := range ideal.Candidates[:3] {
		t.Logf("ideal %d: order %d err %.4f, with 1M %.4f parts %d", i, c.Order(), c.ResponseError, CascadeAmpError(c, &op), c.PartCount)
	}
	r, err := FitAmps(context.Background(), items, spec, o, AmpChoice{Mode: AmpGeneric, Generic: op})
	if err != nil {
		t.Fatal(err)
	}
	for i, c := range r.Candidates[:3] {
		t.Logf("amp %d: order %d err %.4f (recomputed %.4f) ideal %.4f meets %v parts %d", i, c.Order(), c.ResponseError, CascadeAmpError(c, &op), c.IdealAmpError, c.MeetsSpec, c.PartCount)
	}
	t.Logf("slow %+v notes %v", r.Slow, r.Notes)
}
