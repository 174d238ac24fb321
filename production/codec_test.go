package production

import (
	"context"
	"math"
	"reflect"
	"strings"
	"testing"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// fitSample fits spec to the sample drawer with single parts only (fast)
// and returns the result.
func fitSample(t *testing.T, spec synth.Spec, boards int) *optimize.Result {
	t.Helper()
	o := optimize.DefaultOptions()
	o.Combine, o.Boards = 1, boards
	r, err := optimize.Fit(context.Background(), sampleStock(t), spec, o)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Candidates) == 0 {
		t.Fatalf("no candidate for %+v", spec)
	}
	return r
}

func TestDesignDocumentRoundTrip(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		spec synth.Spec
	}{
		// Invented uses: a greenhouse sensor's mains-hum low-pass, a
		// hydrophone's high-pass with a stopband, an odd Chebyshev order.
		{"butterworth low-pass order 4", synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 10, Order: 4}},
		{"bessel high-pass with stopband", synth.Spec{Kind: synth.HighPass, Approx: synth.Bessel, Pass: 2000, Stop: 500, StopAtten: 20}},
		// The Chebyshev is placed inside its specification: on the edge its
		// ripple sits on the limit, which single parts rarely meet.
		{"chebyshev low-pass order 5", synth.Spec{Kind: synth.LowPass, Approx: synth.Chebyshev, Pass: 3000, Ripple: 0.5, Order: 5,
			Stop: 9000, StopAtten: 40, Placement: synth.PlaceInside}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := fitSample(t, c.spec, 1)
			o := optimize.DefaultOptions()
			o.Combine = 1
			d := &Design{Boards: 3, Rank: 2, Settings: SettingsOf(o),
				Filters: []Filter{{Spec: r.Spec, Candidate: r.Candidates[1%len(r.Candidates)]}}}
			doc, err := EncodeDesign(d)
			if err != nil {
				t.Fatal(err)
			}
			got, err := DecodeDesign(doc)
			if err != nil {
				t.Fatal(err)
			}
			want := d.Filters[0].Candidate
			gc := got.Filters[0].Candidate
			if got.Filters[0].Spec != d.Filters[0].Spec || got.Boards != 3 || got.Rank != 2 {
				t.Fatalf("header or spec differ: %+v", got)
			}
			if !reflect.DeepEqual(gc.Sections, want.Sections) {
				t.Fatalf("sections differ")
			}
			if !reflect.DeepEqual(gc.Design.Sections, want.Design.Sections) || gc.Design.Order != want.Design.Order {
				t.Fatalf("ideal design differs")
			}
			sameNaN := math.IsNaN(gc.StopAtten) == math.IsNaN(want.StopAtten)
			if !sameNaN || (!math.IsNaN(want.StopAtten) && gc.StopAtten != want.StopAtten) ||
				gc.ResponseError != want.ResponseError || gc.PartCount != want.PartCount || !reflect.DeepEqual(gc.StockUse, want.StockUse) {
				t.Fatalf("figures differ: %+v vs %+v", gc, want)
			}
			opts, err := got.Settings.Options()
			if err != nil || opts.Combine != 1 || opts.Rank != optimize.RankBalanced || opts.RMin != o.RMin {
				t.Fatalf("settings: %+v %v", opts, err)
			}
		})
	}
}

func TestDecodeRefusesUnknownFormat(t *testing.T) {
	t.Parallel()
	for _, doc := range []string{`{"format":2,"filters":[]}`, `not json`, `{"format":1,"filters":[]}`} {
		if _, err := DecodeDesign([]byte(doc)); fault.KindOf(err) != fault.Conflict {
			t.Errorf("%s: %v", doc, err)
		}
	}
}

func TestEncodeRefusesUnstoredRows(t *testing.T) {
	t.Parallel()
	r := fitSample(t, synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: 2}, 1)
	c := *r.Candidates[0]
	c.Sections = append([]optimize.SectionFit(nil), c.Sections...)
	comps := append([]optimize.Component(nil), c.Sections[0].Components...)
	comps[0].Parts = []optimize.Part{{StockID: 0, Value: comps[0].Value}}
	c.Sections[0].Components = comps
	_, err := EncodeDesign(&Design{Boards: 1, Filters: []Filter{{Spec: r.Spec, Candidate: &c}}})
	if fault.KindOf(err) != fault.Invalid || !strings.Contains(err.Error(), "stored stock rows") {
		t.Fatalf("encode with an unstored part: %v", err)
	}
}

// TestDesignDocumentKeepsTheAmplifier: a candidate fitted with an amplifier
// row comes back with the same amplifier, slots, packages and ideal-amplifier
// error; its stock use and pick list keep the packages.
func TestDesignDocumentKeepsTheAmplifier(t *testing.T) {
	t.Parallel()
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: 5}
	o := optimize.DefaultOptions()
	o.Combine, o.Top = 1, 3
	items := sampleStock(t)
	var dual int64
	for _, it := range items {
		if it.Kind == stock.OpAmp && it.Channels == 2 {
			dual = it.ID
		}
	}
	r, err := optimize.FitAmps(context.Background(), items, spec, o, optimize.AmpChoice{Mode: optimize.AmpPinned, StockID: dual})
	if err != nil || len(r.Candidates) == 0 {
		t.Fatalf("fit: %v", err)
	}
	c := r.Candidates[0]
	d := &Design{Boards: 1, Settings: SettingsOf(o), Filters: []Filter{{Spec: r.Spec, Candidate: c}}}
	doc, err := EncodeDesign(d)
	if err != nil {
		t.Fatal(err)
	}
	got, err := DecodeDesign(doc)
	if err != nil {
		t.Fatal(err)
	}
	gc := got.Filters[0].Candidate
	if !reflect.DeepEqual(gc.Amp, c.Amp) || !reflect.DeepEqual(gc.AmpSlots, c.AmpSlots) || gc.AmpPackages != c.AmpPackages ||
		gc.IdealAmpError != c.IdealAmpError || !reflect.DeepEqual(gc.StockUse, c.StockUse) {
		t.Fatalf("amplifier after the round trip: %+v %+v %d, want %+v %+v %d", gc.Amp, gc.AmpSlots, gc.AmpPackages, c.Amp, c.AmpSlots, c.AmpPackages)
	}
	b, err := NewBatch(got, 2)
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, p := range b.Picks {
		if p.StockID == dual {
			found = p.Quantity == 2*c.AmpPackages && len(p.Refs) == len(c.Sections) && p.Part.Kind == stock.OpAmp
		}
	}
	if !found {
		t.Fatalf("no pick of %d packages of row %d: %+v", 2*c.AmpPackages, dual, b.Picks)
	}
}
