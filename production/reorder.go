package production

import (
	"sort"
	"strings"

	"drawerfit/optimize"
	"drawerfit/stock"
)

// ReorderLine is one stock row to reorder: below its minimum now, or below
// it (or short) after a batch.
type ReorderLine struct {
	// Row is the stock row as it is now.
	Row stock.Item
	// Needed is how many parts the batch takes from the row (0 for the
	// list of the stock as it is).
	Needed int
	// After is Row.Quantity - Needed: what the row holds after the batch;
	// negative when the batch is short of parts.
	After int
	// ToBuy is what brings the row back to its minimum (or, without a
	// minimum, covers the batch), rounded up to whole packs when the row
	// has a pack size. Always > 0.
	ToBuy int
	// Cost is ToBuy at the row's unit price; unknown without a price.
	Cost stock.Money
}

// Reorder lists the rows of items that need buying once take (parts per
// stock id, e.g. a batch's picks; nil for the stock as it is) is drawn:
// every row left below its minimum, and every row the draw would take
// below zero even without a minimum. Quantities to buy are the minimum
// minus what is left, rounded up to the pack size. Rows are ordered by
// location (without letter case), then id. Take for ids not among items
// is ignored (the build refuses such a design anyway).
func Reorder(items []stock.Item, take map[int64]int) []ReorderLine {
	var out []ReorderLine
	for _, it := range items {
		need := take[it.ID]
		after := it.Quantity - need
		if after >= it.Min && after >= 0 {
			continue
		}
		buy := max(it.Min, 0) - after
		if it.Pack > 1 {
			buy = (buy + it.Pack - 1) / it.Pack * it.Pack
		}
		cost, ok := it.Price.Times(buy)
		if !ok {
			cost = stock.Money{}
		}
		out = append(out, ReorderLine{Row: it, Needed: need, After: after, ToBuy: buy, Cost: cost})
	}
	sort.SliceStable(out, func(a, b int) bool {
		la, lb := strings.ToLower(out[a].Row.Location), strings.ToLower(out[b].Row.Location)
		if la != lb {
			return la < lb
		}
		return out[a].Row.ID < out[b].Row.ID
	})
	return out
}

// ReorderCost sums the cost of the lines: the total of the priced ones
// and how many lines have no price.
func ReorderCost(lines []ReorderLine) (priced stock.Money, unpriced int) {
	var t stock.Tally
	for _, l := range lines {
		t.Add(l.Row.Price, l.ToBuy)
	}
	p, ok := t.Partial()
	if !ok {
		p = stock.Money{}
	}
	return p, t.Missing()
}

// Takes returns how many parts the batch takes from each stock row.
func (b *Batch) Takes() map[int64]int {
	out := map[int64]int{}
	for _, p := range b.Picks {
		out[p.StockID] += p.Quantity
	}
	return out
}

// UseCost is the parts cost of one board that takes use from the stock
// items: each part at its row's unit price, exactly; unknown when a row
// used has no price or is not among items.
func UseCost(use []optimize.StockUse, items []stock.Item) stock.Money {
	price := map[int64]stock.Money{}
	for _, it := range items {
		price[it.ID] = it.Price
	}
	var t stock.Tally
	for _, u := range use {
		t.Add(price[u.StockID], u.PerBoard)
	}
	return t.Total()
}
