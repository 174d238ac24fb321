package production

import (
	"reflect"
	"testing"

	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// boardDesign is an invented two-filter board made by hand: filter 1 has
// R1 (row 1), C1 (row 2) and a pair R2a/R2b of row 1; filter 2 shares
// row 2 for its C1 and takes R1 from row 3.
func boardDesign(t *testing.T) *Design {
	t.Helper()
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: 1}
	d1, err := synth.NewDesign(spec, 1, synth.OddOnePole)
	if err != nil {
		t.Fatal(err)
	}
	r := func(id int64, v float64, loc string) optimize.Part {
		return optimize.Part{StockID: id, Value: v, Tolerance: 0.01, Location: loc, Package: "0805"}
	}
	c := func(id int64, v float64, loc string) optimize.Part {
		return optimize.Part{StockID: id, Value: v, Tolerance: 0.05, Location: loc, Dielectric: "C0G", Package: "0805"}
	}
	f1 := &optimize.Candidate{Design: d1, Sections: []optimize.SectionFit{{Target: d1.Sections[0], Components: []optimize.Component{
		{Ref: "R1", Kind: synth.Resistor, Value: 15e3, Parts: []optimize.Part{r(1, 15e3, "A1")}},
		{Ref: "C1", Kind: synth.Capacitor, Value: 10e-9, Parts: []optimize.Part{c(2, 10e-9, "C1")}},
		{Ref: "R2", Kind: synth.Resistor, Value: 30e3, Arrangement: synth.Series, Parts: []optimize.Part{r(1, 15e3, "A1"), r(1, 15e3, "A1")}},
	}}}, StockUse: []optimize.StockUse{{StockID: 1, PerBoard: 3}, {StockID: 2, PerBoard: 1}}}
	f2 := &optimize.Candidate{Design: d1, Sections: []optimize.SectionFit{{Target: d1.Sections[0], Components: []optimize.Component{
		{Ref: "R1", Kind: synth.Resistor, Value: 16e3, Parts: []optimize.Part{r(3, 16e3, "a0")}},
		{Ref: "C1", Kind: synth.Capacitor, Value: 10e-9, Parts: []optimize.Part{c(2, 10e-9, "C1")}},
	}}}, StockUse: []optimize.StockUse{{StockID: 2, PerBoard: 1}, {StockID: 3, PerBoard: 1}}}
	return &Design{ID: "abcdef", Boards: 4, Filters: []Filter{{Label: "one", Spec: spec, Candidate: f1}, {Label: "two", Spec: spec, Candidate: f2}}}
}

func TestBatchPickList(t *testing.T) {
	t.Parallel()
	d := boardDesign(t)
	b, err := NewBatch(d, 5)
	if err != nil {
		t.Fatal(err)
	}
	type line struct {
		id   int64
		loc  string
		qty  int
		refs []string
	}
	var got []line
	for _, p := range b.Picks {
		got = append(got, line{p.StockID, p.Part.Location, p.Quantity, p.Refs})
	}
	// By bin without regard to case ("a0" before "A1"), then row.
	want := []line{
		{3, "a0", 5, []string{"F2.R1"}},
		{1, "A1", 15, []string{"F1.R1", "F1.R2a", "F1.R2b"}},
		{2, "C1", 10, []string{"F1.C1", "F2.C1"}},
	}
	if !reflect.DeepEqual(got, want) {
		t.Fatalf("picks %+v, want %+v", got, want)
	}
	deltas := b.Deltas()
	if len(deltas) != 3 || deltas[1] != (stock.Delta{StockID: 1, Change: -15}) {
		t.Fatalf("deltas %+v", deltas)
	}
	if _, err := NewBatch(d, 0); err == nil {
		t.Fatal("a batch of no boards")
	}
	if d.UniqueParts() != 3 {
		t.Fatalf("unique %d, want rows 1, 2 and 3", d.UniqueParts())
	}
}

func TestBatchCheck(t *testing.T) {
	t.Parallel()
	d := boardDesign(t)
	item := func(id int64, k stock.Kind, v, tol float64, diel, loc string, qty int) stock.Item {
		return stock.Item{ID: id, Kind: k, Value: v, Tolerance: tol, Dielectric: diel, Location: loc, Quantity: qty, Package: "0805"}
	}
	cases := []struct {
		name  string
		rows  []stock.Item
		kinds []IssueKind
		sub   int64
	}{
		{"all as saved", []stock.Item{item(1, stock.Resistor, 15e3, 0.01, "", "A1", 100), item(2, stock.Capacitor, 10e-9, 0.05, "C0G", "C1", 100),
			item(3, stock.Resistor, 16e3, 0.01, "", "a0", 100)}, nil, 0},
		{"short row", []stock.Item{item(1, stock.Resistor, 15e3, 0.01, "", "A1", 14), item(2, stock.Capacitor, 10e-9, 0.05, "C0G", "C1", 100),
			item(3, stock.Resistor, 16e3, 0.01, "", "a0", 100)}, []IssueKind{Short}, 0},
		{"moved and retoleranced", []stock.Item{item(1, stock.Resistor, 15e3, 0.01, "", "A1", 100), item(2, stock.Capacitor, 10e-9, 0.1, "C0G", "C9", 100),
			item(3, stock.Resistor, 16e3, 0.01, "", "a0", 100)}, []IssueKind{Altered, Moved}, 0},
		{"missing with a substitute", []stock.Item{item(1, stock.Resistor, 15e3, 0.01, "", "A1", 100), item(2, stock.Capacitor, 10e-9, 0.05, "C0G", "C1", 100),
			item(7, stock.Resistor, 16e3, 0.01, "", "overflow", 40)}, []IssueKind{Missing}, 7},
		{"changed value", []stock.Item{item(1, stock.Resistor, 15e3, 0.01, "", "A1", 100), item(2, stock.Capacitor, 10e-9, 0.05, "X7R", "C1", 100),
			item(3, stock.Resistor, 16e3, 0.01, "", "a0", 100)}, []IssueKind{Changed}, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			b, _ := NewBatch(d, 5)
			rows := map[int64]stock.Item{}
			for _, it := range c.rows {
				rows[it.ID] = it
			}
			issues := b.Check(rows, c.rows)
			var kinds []IssueKind
			for _, i := range issues {
				kinds = append(kinds, i.Kind)
				if i.Kind == Missing && i.Substitute != c.sub {
					t.Errorf("substitute %d, want %d", i.Substitute, c.sub)
				}
				if len(i.Refs) == 0 || i.String() == "" {
					t.Errorf("issue without refs or text: %+v", i)
				}
			}
			if !reflect.DeepEqual(kinds, c.kinds) {
				t.Fatalf("issues %v, want %v", kinds, c.kinds)
			}
			if c.name == "moved and retoleranced" {
				for _, p := range b.Picks {
					if p.StockID == 2 && p.Part.Location != "C9" {
						t.Fatalf("pick of a moved row shows %q", p.Part.Location)
					}
				}
			}
			if got := Shortfall(issues); c.name == "short row" && (len(got) != 1 || got[0] != (stock.ShortRow{StockID: 1, Needed: 15, OnHand: 14})) {
				t.Fatalf("shortfall %+v", got)
			}
		})
	}
}

func TestIssueTouchesFilter(t *testing.T) {
	t.Parallel()
	board := &Design{Filters: make([]Filter, 3)}
	single := &Design{Filters: make([]Filter, 1)}
	is := Issue{Kind: Short, Refs: []string{"F2.R3a", "F3.C1"}}
	for _, c := range []struct {
		d    *Design
		fi   int
		want bool
	}{
		{board, 0, false},
		{board, 1, true},
		{board, 2, true},
		{single, 0, true}, // one filter: every issue is its own
	} {
		if got := is.Touches(c.d, c.fi); got != c.want {
			t.Errorf("filters %d, filter %d: touches %v, want %v", len(c.d.Filters), c.fi+1, got, c.want)
		}
	}
	// F1. must not match F10. or F11. on a large board.
	big := &Design{Filters: make([]Filter, 11)}
	if (Issue{Refs: []string{"F10.R1", "F11.C2"}}).Touches(big, 0) {
		t.Error("filter 1 matched the designators of filters 10 and 11")
	}
}

// TestDesignBoardSharedRows: rows used by two distinct filters count once
// each; two filters built alike (one candidate) share nothing with
// themselves.
func TestDesignBoardSharedRows(t *testing.T) {
	t.Parallel()
	a := &optimize.Candidate{StockUse: []optimize.StockUse{{StockID: 1, PerBoard: 2}, {StockID: 2, PerBoard: 1}}}
	b := &optimize.Candidate{StockUse: []optimize.StockUse{{StockID: 2, PerBoard: 2}, {StockID: 3, PerBoard: 1}}}
	c := &optimize.Candidate{StockUse: []optimize.StockUse{{StockID: 1, PerBoard: 1}, {StockID: 2, PerBoard: 1}}}
	for _, tc := range []struct {
		name    string
		filters []*optimize.Candidate
		want    int
	}{
		{"one filter", []*optimize.Candidate{a}, 0},
		{"identical filters, one candidate", []*optimize.Candidate{a, a}, 0},
		{"row 2 shared", []*optimize.Candidate{a, b}, 1},
		{"rows 1 and 2 shared, row 3 not", []*optimize.Candidate{a, b, c}, 2},
	} {
		d := &Design{}
		for _, f := range tc.filters {
			d.Filters = append(d.Filters, Filter{Candidate: f})
		}
		if got := d.Board(nil); got.Shared != tc.want || len(got.Filters) != len(tc.filters) {
			t.Errorf("%s: shared %d with %d filters, want %d", tc.name, got.Shared, len(got.Filters), tc.want)
		}
	}
}
