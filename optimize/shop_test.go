package optimize

import (
	"context"
	"math"
	"strings"
	"testing"

	"drawerfit/stock"
	"drawerfit/synth"
)

// pricedStock is a small invented stock with unit prices and capacitor
// voltage ratings: E12 resistors 1 kΩ to 820 kΩ and E6 capacitors 1 nF to
// 680 nF (IEC 60063 values). Capacitor ratings cycle 16 V, 50 V and none;
// resistor prices rise with the value and capacitor prices vary, so that
// cost tells candidates apart. Every seventh row has no price when
// gaps is set.
func pricedStock(gaps bool) []stock.Item {
	var items []stock.Item
	id := int64(1)
	for dec := 3; dec <= 5; dec++ {
		for _, m := range e12 {
			p := stock.MoneyFromMicros(int64(5_000 + 1_000*int(id%9)))
			if gaps && id%7 == 0 {
				p = stock.Money{}
			}
			items = append(items, stock.Item{ID: id, Kind: stock.Resistor, Value: round3(m * math.Pow(10, float64(dec))),
				Tolerance: 0.01, Quantity: 40, Price: p})
			id++
		}
	}
	e6 := []float64{1.0, 1.5, 2.2, 3.3, 4.7, 6.8}
	volts := []float64{16, 50, 0}
	for dec := -9; dec <= -7; dec++ {
		for i, m := range e6 {
			p := stock.MoneyFromMicros(int64(30_000 + 7_000*int(id%5)))
			if gaps && id%7 == 0 {
				p = stock.Money{}
			}
			items = append(items, stock.Item{ID: id, Kind: stock.Capacitor, Value: m * math.Pow(10, float64(dec)),
				Tolerance: 0.05, Quantity: 40, Dielectric: "C0G", Voltage: volts[i%3], Price: p})
			id++
		}
	}
	return items
}

func shopSpec() synth.Spec {
	// A 4th-order Butterworth low-pass at 1 kHz (invented target).
	return synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: 4}
}

func byID(items []stock.Item) map[int64]stock.Item {
	m := map[int64]stock.Item{}
	for _, it := range items {
		m[it.ID] = it
	}
	return m
}

func TestMinVoltageNeverUsesAnUnderRatedPart(t *testing.T) {
	t.Parallel()
	items := pricedStock(false)
	rows := byID(items)
	for _, require := range []bool{false, true} {
		o := DefaultOptions()
		o.ShowFailing, o.Top = true, 20
		o.MinVoltage, o.RequireRating = 25, require
		r, err := Fit(context.Background(), items, shopSpec(), o)
		if err != nil {
			t.Fatal(err)
		}
		if len(r.Candidates) == 0 {
			t.Fatalf("require %v: no candidates", require)
		}
		unrated := false
		for _, c := range r.Candidates {
			for _, s := range c.Sections {
				for _, comp := range s.Components {
					for _, p := range comp.Parts {
						it := rows[p.StockID]
						if it.Kind != stock.Capacitor {
							continue
						}
						if it.Voltage != 0 && it.Voltage < 25 {
							t.Fatalf("require %v: %s uses row %d rated %v V below 25 V", require, comp.Ref, p.StockID, it.Voltage)
						}
						if it.Voltage == 0 {
							if require {
								t.Fatalf("an unrated row %d used although a rating is required", p.StockID)
							}
							unrated = true
						}
					}
				}
			}
		}
		warned := false
		for _, n := range r.Notes {
			if strings.Contains(n, "without a voltage rating") {
				warned = true
			}
		}
		if unrated != warned {
			t.Errorf("require %v: unrated rows used %v, warned %v (notes %q)", require, unrated, warned, r.Notes)
		}
	}
	// No voltage given: the 16 V rows are used too (the filter is off).
	o := DefaultOptions()
	o.ShowFailing = true
	if !VoltageOK(stock.Item{Kind: stock.Capacitor, Voltage: 16}, o) {
		t.Fatal("a 16 V row refused without a minimum voltage")
	}
}

// TestCandidateCostIsTheSumOfItsParts checks every listed candidate's cost
// against a count made here from its components: each physical part, both
// parts of a pair, at its row's price, times the batch.
func TestCandidateCostIsTheSumOfItsParts(t *testing.T) {
	t.Parallel()
	for _, gaps := range []bool{false, true} {
		items := pricedStock(gaps)
		rows := byID(items)
		o := DefaultOptions()
		o.ShowFailing, o.Top, o.Boards = true, 15, 3
		r, err := Fit(context.Background(), items, shopSpec(), o)
		if err != nil {
			t.Fatal(err)
		}
		pairs := 0
		for _, c := range r.Candidates {
			var sum int64
			missing := false
			for _, s := range c.Sections {
				for _, comp := range s.Components {
					if len(comp.Parts) > 1 {
						pairs++
					}
					for _, p := range comp.Parts {
						pr := rows[p.StockID].Price
						if !pr.Known() {
							missing = true
						}
						sum += pr.Micros() * int64(o.Boards)
					}
				}
			}
			batch, _ := c.CostPerBoard.Times(o.Boards)
			if missing {
				if c.CostPerBoard.Known() {
					t.Errorf("gaps %v: cost %s known although a part has no price", gaps, c.CostPerBoard)
				}
				continue
			}
			if !batch.Known() || batch.Micros() != sum {
				t.Errorf("gaps %v: batch cost %s, parts sum %d micros", gaps, batch, sum)
			}
		}
		if !gaps && pairs == 0 {
			t.Log("no pair among the candidates; pairs not exercised by this stock")
		}
	}
}

func TestRankCostListsCheapestFirst(t *testing.T) {
	t.Parallel()
	items := pricedStock(true)
	o := DefaultOptions()
	o.ShowFailing, o.Top = true, 10
	o.Rank = RankCost
	r, err := Fit(context.Background(), items, shopSpec(), o)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Candidates) < 2 {
		t.Fatalf("%d candidates", len(r.Candidates))
	}
	for i := 1; i < len(r.Candidates); i++ {
		if r.Candidates[i-1].CostPerBoard.Cmp(r.Candidates[i].CostPerBoard) > 0 {
			t.Fatalf("#%d costs %s, #%d %s", i, r.Candidates[i-1].CostPerBoard, i+1, r.Candidates[i].CostPerBoard)
		}
	}
	// Whatever another ranking lists is no cheaper than the first by cost
	// (all rankings search the same shortlists).
	for _, rk := range []Rank{RankBalanced, RankError, RankParts} {
		o2 := o
		o2.Rank = rk
		r2, err := Fit(context.Background(), items, shopSpec(), o2)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range r2.Candidates {
			if c.CostPerBoard.Cmp(r.Candidates[0].CostPerBoard) < 0 {
				t.Errorf("rank %v lists a candidate at %s, cheaper than the cost ranking's first %s", rk, c.CostPerBoard, r.Candidates[0].CostPerBoard)
			}
		}
	}
}

func TestBalancedKeyBreaksTiesOnCost(t *testing.T) {
	t.Parallel()
	// Within the good-enough error: parts, then unique rows, then cost,
	// then error (the ordering).
	cheap := makeKey(RankBalanced, 0.05, 0.04, 10, 6, 1000)
	dear := makeKey(RankBalanced, 0.05, 0.01, 10, 6, 2000)
	if !cheap.less(dear) {
		t.Error("equal parts and unique rows: the cheaper must rank first")
	}
	fewer := makeKey(RankBalanced, 0.05, 0.04, 9, 6, 5000)
	if !fewer.less(cheap) {
		t.Error("fewer parts must beat a lower cost")
	}
	unknown := makeKey(RankBalanced, 0.05, 0.01, 10, 6, math.Inf(1))
	if !dear.less(unknown) {
		t.Error("an unknown cost must rank after a known one")
	}
}

// TestCautionDielectricsAreMarked: polyester capacitors are used but every
// candidate that has one says so, with one note; C0G-only candidates carry
// no caution.
func TestCautionDielectricsAreMarked(t *testing.T) {
	t.Parallel()
	items := pricedStock(false)
	for i := range items {
		if items[i].Kind == stock.Capacitor && i%2 == 0 {
			items[i].Dielectric = "polyester"
		}
	}
	o := DefaultOptions()
	o.ShowFailing, o.Top = true, 15
	r, err := Fit(context.Background(), items, shopSpec(), o)
	if err != nil {
		t.Fatal(err)
	}
	rows := byID(items)
	marked := 0
	for _, c := range r.Candidates {
		pet := false
		for _, s := range c.Sections {
			for _, comp := range s.Components {
				for _, p := range comp.Parts {
					if rows[p.StockID].Dielectric == "polyester" {
						pet = true
					}
				}
			}
		}
		if pet != (len(c.Cautions) == 1 && c.Cautions[0] == stock.PET) {
			t.Errorf("candidate uses PET %v, cautions %v", pet, c.Cautions)
		}
		if pet {
			marked++
		}
	}
	notes := 0
	for _, n := range r.Notes {
		if strings.Contains(n, "polyester (PET) capacitors: allowed") {
			notes++
		}
	}
	if (marked > 0) != (notes == 1) {
		t.Errorf("%d candidates with PET, %d notes: %q", marked, notes, r.Notes)
	}
	if marked == 0 {
		t.Log("no candidate chose a PET row")
	}
}
