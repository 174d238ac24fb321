package production

import (
	"context"
	"testing"

	"drawerfit/internal/testkit"
	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// applySuggestion returns a copy of items with the suggestion bought:
// new rows appended with fresh ids, top-ups added to their rows.
func applySuggestion(items []stock.Item, s Suggestion) []stock.Item {
	out := append([]stock.Item(nil), items...)
	var next int64
	for _, it := range out {
		next = max(next, it.ID)
	}
	for _, add := range s.Items {
		if add.ID == 0 {
			next++
			add.ID = next
			out = append(out, add)
			continue
		}
		for i := range out {
			if out[i].ID == add.ID {
				out[i].Quantity += add.Quantity
			}
		}
	}
	return out
}

func checkSuggestion(t *testing.T, s Suggestion, after Outcome, r ranker) {
	t.Helper()
	for _, it := range s.Items {
		if !inPreferred(it) || it.Quantity <= 0 {
			t.Errorf("item %s × %d is not a preferred value to buy", it.Label(), it.Quantity)
		}
	}
	if r.cmp(after.score(), s.After.score()) > 0 {
		t.Errorf("bought: %+v, claimed %+v", after.score(), s.After.score())
	}
	if r.cmp(after.score(), s.Before.score()) >= 0 {
		t.Errorf("bought: %+v, no better than before %+v", after.score(), s.Before.score())
	}
	if s.ClosesShortfall() && !after.Feasible {
		t.Errorf("claimed to close the shortfall, but the stock still falls short")
	}
}

// TestSuggestionsDeliverWhatTheyClaim asks for suggestions for an invented
// wind-noise low-pass on the sample drawer, for one board and for more
// boards than the drawer covers, buys each suggestion on a copy of the
// stock and fits again with the full search. The default suite searches
// single parts (the same suggestion code, a tenth of the search); the long
// sweep (DRAWERFIT_LONG=1) repeats it with series and parallel pairs.
func TestSuggestionsDeliverWhatTheyClaim(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("several fits of the sample drawer")
	}
	// The drawer loses the resistor values of the best design's sections:
	// all of them for single parts, the first section's with pairs (pairs
	// find their way around one missing value more easily, so the gap must
	// be smaller to leave a purchase worth suggesting, and the search is
	// ten times dearer).
	base, sections := singlePartOptions(), 0
	if testkit.Long() {
		base, sections = optimize.DefaultOptions(), 1
	}
	full := sampleStock(t)
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Stop: 3000, StopAtten: 40}
	if err := spec.Normalize(); err != nil {
		t.Fatal(err)
	}
	// Without those values the best design left is worse, and buying a
	// value near the missing ones must help.
	first, err := optimize.Fit(context.Background(), full, spec, base)
	if err != nil || len(first.Candidates) == 0 {
		t.Fatalf("fit: %v", err)
	}
	gone := map[int64]bool{}
	secs := first.Candidates[0].Sections
	if sections > 0 {
		secs = secs[:sections]
	}
	for _, sec := range secs {
		for _, comp := range sec.Components {
			if comp.Kind == synth.Resistor {
				for _, p := range comp.Parts {
					gone[p.StockID] = true
				}
			}
		}
	}
	var items []stock.Item
	for _, it := range full {
		if !gone[it.ID] {
			items = append(items, it)
		}
	}
	for _, c := range []struct {
		name      string
		boards    int
		wantClose bool
	}{
		{"one board", 1, false},
		{"more boards than the drawer covers", 80, true},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			o := base
			o.Boards = c.boards
			res, err := optimize.Fit(context.Background(), items, spec, o)
			if err != nil {
				t.Fatal(err)
			}
			sg, err := SuggestFit(context.Background(), items, spec, o, res, SuggestOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if len(sg) == 0 {
				t.Fatal("no suggestion")
			}
			if c.wantClose && !sg[0].ClosesShortfall() {
				t.Fatalf("first suggestion %s does not close the shortfall", sg[0].Buys())
			}
			r := ranker{rank: o.Rank, goodEnough: o.GoodEnough}
			for _, s := range sg {
				t.Logf("%d item(s), first %s × %d: %s", len(s.Items), s.Items[0].Label(), s.Items[0].Quantity, s.Buys())
				bought, err := optimize.Fit(context.Background(), applySuggestion(items, s), spec, o)
				if err != nil {
					t.Fatal(err)
				}
				after, _ := fitOutcome(bought, c.boards)
				checkSuggestion(t, s, after, r)
			}
		})
	}
}

func TestPlanSuggestionClosesShortfall(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("several fits of the sample drawer")
	}
	items := sampleStock(t)
	// An invented two-channel hearing-loop amplifier for 70 boards.
	p := Plan{Name: "hearing loop", Boards: 70, Filters: []PlanFilter{
		{Label: "left voice band", Spec: synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 4000, Order: 4}},
		{Label: "right voice band", Spec: synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 4000, Order: 4}},
	}}
	o := PlanOptions{Fit: singlePartOptions()}
	pr, err := FitPlan(context.Background(), items, p, o)
	if err != nil {
		t.Fatal(err)
	}
	if len(pr.Boards) != 0 {
		t.Fatalf("the drawer covers %d boards already; the test needs a shortfall", p.Boards)
	}
	sg, err := SuggestPlan(context.Background(), items, pr, o, SuggestOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(sg) == 0 || !sg[0].ClosesShortfall() {
		t.Fatalf("suggestions %+v", sg)
	}
	r := ranker{rank: o.Fit.Rank, goodEnough: o.Fit.GoodEnough}
	for _, s := range sg {
		bought, err := FitPlan(context.Background(), applySuggestion(items, s), p, o)
		if err != nil {
			t.Fatal(err)
		}
		checkSuggestion(t, s, boardOutcome(bought), r)
		t.Logf("%d item(s): %s", len(s.Items), s.Buys())
	}
}

func TestCandidateValuesAreSeriesNeighbours(t *testing.T) {
	t.Parallel()
	o := optimize.DefaultOptions()
	// 4.53 kΩ exactly needed: E24 brackets it with 4.3k and 4.7k (4.3k is
	// in stock) and E96 has it (IEC 60063 E24 and E96 tables).
	got := candidateValues(synth.Resistor, []float64{4530}, o, map[float64]bool{4300: true})
	want := map[float64]bool{4700: true, 4530: true}
	if len(got) != len(want) {
		t.Fatalf("values %v, want %v", got, want)
	}
	for _, v := range got {
		if !want[v] {
			t.Fatalf("value %g not expected (%v)", v, got)
		}
	}
	// Capacitors: E6/E12 around 3.0 nF: 3.3 nF (nearest, both series), 2.7 nF
	// (E12 below) and 2.2 nF (E6 below) (IEC 60063 E6 and E12 tables).
	got = candidateValues(synth.Capacitor, []float64{3.0e-9}, o, nil)
	for _, v := range got {
		if !testkit.Abs(1e-15).Equal(v, 3.3e-9) && !testkit.Abs(1e-15).Equal(v, 2.7e-9) && !testkit.Abs(1e-15).Equal(v, 2.2e-9) {
			t.Fatalf("capacitor value %g not expected (%v)", v, got)
		}
	}
	if len(got) != 3 {
		t.Fatalf("capacitor values %v", got)
	}
	// 500 Ω: its E24 (470, 510) and E96 (499, 511) neighbours all lie
	// below the 1 kΩ range limit.
	if got := candidateValues(synth.Resistor, []float64{500}, o, nil); len(got) != 0 {
		t.Fatalf("below 1 kΩ: %v", got)
	}
}

// TestTopUpIncludesAmplifiers: when an amplifier row is what is short, the
// top-up buys its missing packages.
func TestTopUpIncludesAmplifiers(t *testing.T) {
	t.Parallel()
	items := []stock.Item{
		{ID: 1, Kind: stock.Resistor, Value: 10e3, Tolerance: 0.01, Quantity: 100},
		{ID: 2, Kind: stock.OpAmp, Name: "test quad", Channels: 4, GBW: 1e6, Quantity: 3},
	}
	tr, ok := topUpTrial(items, []stock.ShortRow{{StockID: 2, Needed: 5, OnHand: 3}})
	if !ok || len(tr.items) != 1 || tr.items[0].ID != 2 || tr.items[0].Quantity != 2 {
		t.Fatalf("top-up %+v, %v", tr.items, ok)
	}
}
