package optimize

import (
	"math"
	"sort"

	"drawerfit/stock"
	"drawerfit/synth"
)

// Nearest finds the realisable resistor nearest a target value in a stock,
// for positions outside the fitted sections (for example the bias-current
// compensation resistor of a follower, which does not change the response).
// Rows are filtered as the fit filters them (resistors in [RMin, RMax]);
// each part of a row must leave Boards parts for the batch after the parts
// already reserved.
type Nearest struct {
	opt      Options
	rows     []nearRow
	reserved map[int64]int
}

type nearRow struct {
	part Part
	qty  int
}

// NewNearest prepares the resistor rows of items under options o (Combine,
// Boards, RMin, RMax). reserved counts parts already taken per stock row for
// the whole batch (for example a candidate's StockUse times the boards).
func NewNearest(items []stock.Item, o Options, reserved map[int64]int) *Nearest {
	n := &Nearest{opt: o, reserved: map[int64]int{}}
	for id, q := range reserved {
		n.reserved[id] = q
	}
	for _, it := range items {
		if it.Kind != stock.Resistor || it.Value < o.RMin*(1-1e-12) || it.Value > o.RMax*(1+1e-12) {
			continue
		}
		n.rows = append(n.rows, nearRow{part: Part{StockID: it.ID, Value: it.Value, Tolerance: it.Tolerance,
			Location: it.Location, Package: it.Package}, qty: it.Quantity})
	}
	sort.SliceStable(n.rows, func(a, b int) bool { return n.rows[a].part.Value < n.rows[b].part.Value })
	return n
}

// Take returns the realisable value nearest target (relative error; ties go
// to fewer parts): a single part or, with Combine 2, a pair in series or
// parallel. Its parts are reserved for later calls. ok is false when no row
// has parts left.
func (n *Nearest) Take(target float64) (c Component, ok bool) {
	boards := max(n.opt.Boards, 1)
	var avail []nearRow
	for _, r := range n.rows {
		if r.qty-n.reserved[r.part.StockID] >= boards {
			avail = append(avail, r)
		}
	}
	bestErr := math.Inf(1)
	consider := func(v float64, arr synth.Arrangement, parts ...Part) {
		e := math.Abs(v/target - 1)
		if e < bestErr-1e-12 || (e <= bestErr+1e-12 && len(parts) < len(c.Parts)) {
			bestErr = e
			c = Component{Kind: synth.Resistor, Value: v, Arrangement: arr, Parts: append([]Part(nil), parts...)}
		}
	}
	for _, r := range avail {
		consider(r.part.Value, synth.Single, r.part)
	}
	if n.opt.Combine >= 2 && len(avail) > 0 {
		vals := make([]float64, len(avail))
		for i, r := range avail {
			vals[i] = r.part.Value
		}
		// For a fixed first part a pair's value is monotonic in the
		// second, so the nearest pair has its second part next to the
		// ideal partner.
		partner := func(i int, ideal float64, arr synth.Arrangement) {
			if !(ideal > 0) || math.IsInf(ideal, 0) {
				return
			}
			k := sort.SearchFloat64s(vals, ideal)
			usable := func(j int) bool {
				return j != i || avail[i].qty-n.reserved[avail[i].part.StockID] >= 2*boards
			}
			for j := k - 1; j >= 0; j-- {
				if usable(j) {
					consider(synth.Resistor.Combine(arr, vals[i], vals[j]), arr, avail[i].part, avail[j].part)
					break
				}
			}
			for j := k; j < len(vals); j++ {
				if usable(j) {
					consider(synth.Resistor.Combine(arr, vals[i], vals[j]), arr, avail[i].part, avail[j].part)
					break
				}
			}
		}
		for i, a := range vals {
			partner(i, target-a, synth.Series)
			if a > target {
				partner(i, 1/(1/target-1/a), synth.Parallel)
			}
		}
	}
	if len(c.Parts) == 0 {
		return Component{}, false
	}
	for _, p := range c.Parts {
		n.reserved[p.StockID] += boards
	}
	return c, true
}
