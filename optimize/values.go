package optimize

import (
	"math"
	"sort"

	"drawerfit/fault"
	"drawerfit/stock"
	"drawerfit/synth"
)

// Row is one usable stock row as the search sees it.
type Row struct {
	Part
	Kind     synth.PartKind
	Quantity int
	// Price is the row's unit price (unknown when the stock has none).
	Price stock.Money
}

// real is one realisable value: a single part or a pair of parts in series
// or parallel.
type real struct {
	value float64
	rows  [2]int32 // indices into the rows slice; rows[1] < 0 for a single
	arr   synth.Arrangement
	n     int8 // physical parts: 1 or 2
}

// valueSet is every realisable value of one kind, sorted by value (ties by
// part count, then rows, so the order is deterministic).
type valueSet struct {
	kind  synth.PartKind
	vals  []float64
	reals []real
	// sub[n] holds the realisations of n parts (n = 1, 2) in the same
	// order, with global giving each one's index in the parent set.
	sub    [3]*valueSet
	global []int32
}

// maxRealisations bounds the pairs built from one kind of part, so a huge
// stock fails with a clear message instead of exhausting memory.
const maxRealisations = 4_000_000

// buildValues returns the realisable values of kind k from rows, singles and,
// with combine >= 2, every pair in series and in parallel. A pair of one row
// needs two parts per board, so it is formed only when the row holds 2·boards.
// Values outside [lo, hi] are dropped.
func buildValues(rows []Row, k synth.PartKind, combine, boards int, lo, hi float64) (*valueSet, error) {
	var idx []int
	for i, r := range rows {
		if r.Kind == k {
			idx = append(idx, i)
		}
	}
	n := len(idx)
	if combine >= 2 && n*(n+1) > maxRealisations {
		return nil, fault.Invalidf("the stock holds %d usable %ss: pairing them would need %d combinations (limit %d); use --combine 1 or narrow the value range",
			n, k, n*(n+1), maxRealisations)
	}
	vs := &valueSet{kind: k}
	add := func(v float64, a, b int, arr synth.Arrangement, parts int8) {
		if v < lo*(1-1e-12) || v > hi*(1+1e-12) {
			return
		}
		vs.reals = append(vs.reals, real{value: v, rows: [2]int32{int32(a), int32(b)}, arr: arr, n: parts})
	}
	for _, i := range idx {
		add(rows[i].Value, i, -1, synth.Single, 1)
	}
	if combine >= 2 {
		for x, i := range idx {
			for _, j := range idx[x:] {
				if i == j && rows[i].Quantity < 2*boards {
					continue
				}
				a, b := rows[i].Value, rows[j].Value
				add(k.Combine(synth.Series, a, b), i, j, synth.Series, 2)
				add(k.Combine(synth.Parallel, a, b), i, j, synth.Parallel, 2)
			}
		}
	}
	sort.Slice(vs.reals, func(a, b int) bool {
		ra, rb := vs.reals[a], vs.reals[b]
		if ra.value != rb.value {
			return ra.value < rb.value
		}
		if ra.n != rb.n {
			return ra.n < rb.n
		}
		if ra.rows != rb.rows {
			if ra.rows[0] != rb.rows[0] {
				return ra.rows[0] < rb.rows[0]
			}
			return ra.rows[1] < rb.rows[1]
		}
		return ra.arr < rb.arr
	})
	vs.vals = make([]float64, len(vs.reals))
	for i, r := range vs.reals {
		vs.vals[i] = r.value
	}
	for n := 1; n <= 2; n++ {
		sub := &valueSet{kind: k}
		for i, r := range vs.reals {
			if int(r.n) == n {
				sub.reals = append(sub.reals, r)
				sub.vals = append(sub.vals, r.value)
				sub.global = append(sub.global, int32(i))
			}
		}
		vs.sub[n] = sub
	}
	return vs, nil
}

// span returns the index range [i, j) of values in [lo, hi].
func (vs *valueSet) span(lo, hi float64) (int, int) {
	if !(lo <= hi) || math.IsNaN(lo) {
		return 0, 0
	}
	i := sort.SearchFloat64s(vs.vals, lo)
	j := sort.Search(len(vs.vals), func(k int) bool { return vs.vals[k] > hi })
	return i, j
}
