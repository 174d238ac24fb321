package report

import (
	"context"
	"math"
	"strings"
	"testing"

	"drawerfit/internal/testkit"
	"drawerfit/respplot"
	"drawerfit/synth"
	"drawerfit/tolerance"
)

func TestEnvelope(t *testing.T) {
	t.Parallel()
	c := lowpass4(t)
	st := c.Stages()
	f := []float64{100, 1000, 3000}
	nominal := make([]float64, len(f))
	for i, fi := range f {
		nominal[i] = respplot.GainDB(synth.CascadeResponse(st, 2*math.Pi*fi))
	}
	t.Run("contains the nominal response", func(t *testing.T) {
		b := Envelope(c, EnvelopeOptions{Trials: 400, Seed: 1, Freq: f})
		for i := range f {
			if !(b.Lo[i] <= nominal[i] && nominal[i] <= b.Hi[i]) {
				t.Errorf("at %g Hz nominal %.3f dB outside %.3f..%.3f", f[i], nominal[i], b.Lo[i], b.Hi[i])
			}
		}
		// Near fs the gain moves fastest with f0: the band is wider there
		// than deep in the passband (1st-order sensitivity; the slope is
		// about 80 dB per decade beyond the edge of a 4th-order filter).
		if w100, w3k := b.Hi[0]-b.Lo[0], b.Hi[2]-b.Lo[2]; !(w3k > w100) {
			t.Errorf("band at 3 kHz (%.3f dB) not wider than at 100 Hz (%.3f dB)", w3k, w100)
		}
	})
	t.Run("zero tolerance collapses", func(t *testing.T) {
		z := lowpass4(t)
		for i := range z.Sections {
			for j := range z.Sections[i].Components {
				for k := range z.Sections[i].Components[j].Parts {
					z.Sections[i].Components[j].Parts[k].Tolerance = 0
				}
			}
		}
		b := Envelope(z, EnvelopeOptions{Trials: 20, Freq: f})
		for i := range f {
			if !testkit.Abs(1e-12).Equal(b.Hi[i], nominal[i]) || !testkit.Abs(1e-12).Equal(b.Lo[i], nominal[i]) {
				t.Errorf("at %g Hz band %.6f..%.6f, want the nominal %.6f", f[i], b.Lo[i], b.Hi[i], nominal[i])
			}
		}
	})
	t.Run("same seed same band", func(t *testing.T) {
		a := Envelope(c, EnvelopeOptions{Trials: 50, Seed: 9, Freq: f, Normal: true})
		b := Envelope(c, EnvelopeOptions{Trials: 50, Seed: 9, Freq: f, Normal: true})
		for i := range f {
			if a.Lo[i] != b.Lo[i] || a.Hi[i] != b.Hi[i] {
				t.Fatal("bands differ for the same seed")
			}
		}
	})
	t.Run("default grid", func(t *testing.T) {
		b := Envelope(c, EnvelopeOptions{Trials: 10})
		if len(b.Freq) != 200 || !strings.Contains(b.Label, "10 boards") {
			t.Errorf("%d frequencies, label %q", len(b.Freq), b.Label)
		}
	})
}

// TestYieldFromTolerance runs the real yield analysis on the fixture and
// checks that the sheet's summary carries its figures.
func TestYieldFromTolerance(t *testing.T) {
	t.Parallel()
	c := lowpass4(t)
	r, err := tolerance.Run(context.Background(), c, c.Design.Spec, tolerance.Options{Trials: 300, Seed: 3, Brief: true, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	y := YieldFrom(r)
	if y.Yield != r.Yield || y.Trials != 300 || y.Seed != 3 || y.Dist != "uniform" {
		t.Errorf("summary %+v from %+v", y, r)
	}
	if len(y.Blame) != len(r.Blame) {
		t.Errorf("%d blame lines, want %d", len(y.Blame), len(r.Blame))
	}
	joined := ""
	for _, f := range y.Facts {
		joined += f.Label + ": " + f.Value + "\n"
	}
	if r.Edge != nil && !strings.Contains(joined, "5th to 95th percentile") {
		t.Errorf("facts lack the edge spread:\n%s", joined)
	}
	y.Bands = []respplot.Band{Envelope(c, EnvelopeOptions{Trials: 100})}
	b, err := HTML(&Sheet{Candidate: c, Yield: y, Warnings: r.Warnings})
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), "simulated boards pass") || !strings.Contains(string(b), "of 100 boards") {
		t.Error("sheet lacks the yield headline or the envelope legend")
	}
	if YieldFrom(nil) != nil {
		t.Error("YieldFrom(nil) is not nil")
	}
}
