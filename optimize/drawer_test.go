package optimize_test

// The random-drawer check of the fit's exactness. Small drawers are drawn
// with a fixed seed (4 to 8 resistor rows, 3 to 6 capacitor rows, 1 to 4
// parts each, IEC 60063 E12/E24 values, some rows sharing a value), and the
// fit's first candidate is compared with an independent enumeration of
// every assignment of realisable values to every position of the design,
// with quantities counted over the whole design and the boards, among the
// designs that meet the specification. This file is an external test
// package so that the enumeration can share no code with optimize: it
// computes responses with synth's Topology.Eval (complex arithmetic) and
// the target with Design.Target, and builds its own scoring grid from the
// definition in optimize/doc.go.

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"drawerfit/internal/testkit"
	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// IEC 60063 E12 and E24 mantissas.
var (
	e12 = []float64{1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2}
	e24 = []float64{1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
		3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1}
)

// randomDrawer draws an invented drawer: resistors 1 kΩ–91 kΩ, capacitors
// 1 nF–82 nF, about one row in five repeating an earlier row's value in
// another bin.
func randomDrawer(rng *rand.Rand, nr, nc int) []stock.Item {
	var items []stock.Item
	id := int64(1)
	add := func(k stock.Kind, v float64, diel string) {
		items = append(items, stock.Item{ID: id, Kind: k, Value: v, Tolerance: []float64{0.01, 0.05}[rng.IntN(2)],
			Quantity: 1 + rng.IntN(4), Dielectric: diel, Location: fmt.Sprintf("B%d", id)})
		id++
	}
	series := func() []float64 {
		if rng.IntN(2) == 0 {
			return e12
		}
		return e24
	}
	for i := 0; i < nr; i++ {
		if i > 0 && rng.IntN(5) == 0 {
			add(stock.Resistor, items[rng.IntN(len(items))].Value, "")
			continue
		}
		s := series()
		add(stock.Resistor, math.Round(s[rng.IntN(len(s))]*math.Pow(10, float64(3+rng.IntN(2)))), "")
	}
	first := len(items)
	for i := 0; i < nc; i++ {
		if i > 0 && rng.IntN(5) == 0 {
			add(stock.Capacitor, items[first+rng.IntN(len(items)-first)].Value, "C0G")
			continue
		}
		s := series()
		add(stock.Capacitor, s[rng.IntN(len(s))]*math.Pow(10, float64(-9+rng.IntN(2))), "C0G")
	}
	return items
}

// realisation is one way to fill a position: a row, or two parts in
// series or parallel (two of one row, or one of each of two rows).
type realisation struct {
	value float64
	rows  []int // indices into the drawer, one per part
}

// realisations lists every realisation of kind k within [lo, hi]; a pair
// of one row needs 2·boards parts of it.
func realisations(items []stock.Item, k stock.Kind, pairs bool, boards int, lo, hi float64) []realisation {
	var idx []int
	for i, it := range items {
		if it.Kind == k && it.Quantity >= boards {
			idx = append(idx, i)
		}
	}
	var out []realisation
	in := func(v float64) bool { return v >= lo*(1-1e-12) && v <= hi*(1+1e-12) }
	for _, i := range idx {
		if v := items[i].Value; in(v) {
			out = append(out, realisation{v, []int{i}})
		}
	}
	if !pairs {
		return out
	}
	for a, i := range idx {
		for _, j := range idx[a:] {
			if i == j && items[i].Quantity < 2*boards {
				continue
			}
			x, y := items[i].Value, items[j].Value
			sum, par := x+y, x*y/(x+y)
			if k == stock.Capacitor {
				sum, par = par, sum // capacitors in series combine as resistors in parallel
			}
			for _, v := range []float64{sum, par} {
				if in(v) {
					out = append(out, realisation{v, []int{i, j}})
				}
			}
		}
	}
	return out
}

// scoringGrid is the fit's grid as optimize/doc.go defines it: a low-pass
// from fp/10 to 3·fp (a high-pass from fp/3 to 10·fp), 100 points per
// decade, with fp itself on the grid.
func scoringGrid(s synth.Spec) []float64 {
	lo, hi := s.Pass/10, 3*s.Pass
	if s.Kind == synth.HighPass {
		lo, hi = s.Pass/3, 10*s.Pass
	}
	dec := math.Log10(hi / lo)
	n := int(math.Ceil(dec*100)) + 1
	var f []float64
	for i := 0; i < n; i++ {
		f = append(f, lo*math.Pow(10, dec*float64(i)/float64(n-1)))
	}
	at := sort.SearchFloat64s(f, s.Pass)
	if at < len(f) && math.Abs(f[at]-s.Pass) <= 1e-12*s.Pass {
		f[at] = s.Pass
	} else {
		f = append(f[:at], append([]float64{s.Pass}, f[at:]...)...)
	}
	return f
}

// sectionCeiling is the product's rule that no section further than 6 dB
// from its own target section is part of a design (optimize/doc.go,
// "Exactness"); the enumeration applies it too.
const sectionCeiling = 6.0

// sectionAssign is one assignment of a section with its gain curve.
type sectionAssign struct {
	db   []float64
	rows []int // every part's row
}

// bruteKey is the optimum the enumeration finds.
type bruteKey struct {
	found         bool
	within        bool // balanced ranking: within the good-enough error
	err           float64
	parts, unique int
}

// bruteForce enumerates every assignment of design d and returns the best
// key under rank among the designs that meet the specification (the
// attenuation at fp at most Ap).
func bruteForce(d *synth.Design, spec synth.Spec, items []stock.Item, pairs bool, boards int, rank optimize.Rank, goodEnough float64) bruteKey {
	o := optimize.DefaultOptions()
	res := realisations(items, stock.Resistor, pairs, boards, o.RMin, o.RMax)
	caps := realisations(items, stock.Capacitor, pairs, boards, o.CMin, o.CMax)
	f := scoringGrid(spec)
	pass := sort.SearchFloat64s(f, spec.Pass)
	tdb := make([]float64, len(f))
	for i, x := range f {
		tdb[i] = synth.MagnitudeDB(d.Target(2 * math.Pi * x))
	}
	var secs [][]sectionAssign
	for si := range d.Sections {
		sec := &d.Sections[si]
		t := sec.Topology
		own := make([]float64, len(f))
		for j, x := range f {
			own[j] = synth.MagnitudeDB(sec.Eval(2 * math.Pi * x))
		}
		var list []sectionAssign
		v := make([]float64, t.NumElements())
		var rows []int
		var rec func(i int)
		rec = func(i int) {
			if i == len(v) {
				c := sectionAssign{db: make([]float64, len(f)), rows: append([]int(nil), rows...)}
				for j, x := range f {
					c.db[j] = synth.MagnitudeDB(t.Eval(v, 2*math.Pi*x))
					if math.Abs(c.db[j]-own[j]) > sectionCeiling+1e-9 {
						return
					}
				}
				list = append(list, c)
				return
			}
			rs := res
			if t.Element(i).Kind == synth.Capacitor {
				rs = caps
			}
			for _, r := range rs {
				v[i] = r.value
				n := len(rows)
				rows = append(rows, r.rows...)
				rec(i + 1)
				rows = rows[:n]
			}
		}
		rec(0)
		secs = append(secs, list)
	}
	// Probe points for a quick lower bound of a combination's error: any
	// subset of the grid bounds the maximum from below.
	probe := []int{0, pass, len(f) - 1, len(f) / 2, len(f) / 4, 3 * len(f) / 4}
	var best bruteKey
	var bestWithin *bruteKey
	bestErr := math.Inf(1)
	sum := make([]float64, len(f))
	used := make([]int, len(items))
	var rows []int
	better := func(k bruteKey) bool {
		switch rank {
		case optimize.RankError:
			if !best.found || k.err < best.err-1e-12 {
				return true
			}
			if k.err > best.err+1e-12 {
				return false
			}
			return k.parts < best.parts || k.parts == best.parts && k.unique < best.unique
		}
		return false
	}
	var rec func(s int)
	rec = func(s int) {
		if s == len(secs) {
			lim := bestErr
			if rank == optimize.RankBalanced {
				lim = math.Max(goodEnough, bestErr)
			}
			for _, j := range probe {
				if math.Abs(sum[j]-tdb[j]) > lim+1e-9 {
					return
				}
			}
			var e float64
			for j := range sum {
				e = math.Max(e, math.Abs(sum[j]-tdb[j]))
			}
			if -sum[pass] > spec.PassAtten+1e-9 {
				return // misses the specification
			}
			uniq := 0
			for _, r := range rows {
				if used[r] > 0 {
					uniq++
					used[r] = -used[r] // count each row once
				}
			}
			for _, r := range rows {
				if used[r] < 0 {
					used[r] = -used[r]
				}
			}
			k := bruteKey{found: true, err: e, parts: len(rows), unique: uniq}
			if rank == optimize.RankError {
				if better(k) {
					best = k
				}
				bestErr = math.Min(bestErr, e)
				return
			}
			if e <= goodEnough {
				if bestWithin == nil || k.parts < bestWithin.parts || k.parts == bestWithin.parts &&
					(k.unique < bestWithin.unique || k.unique == bestWithin.unique && k.err < bestWithin.err) {
					kk := k
					bestWithin = &kk
				}
			}
			if e < bestErr {
				bestErr = e
				best = k
			}
			return
		}
		for _, c := range secs[s] {
			ok := true
			for _, r := range c.rows {
				used[r]++
				if used[r]*boards > items[r].Quantity {
					ok = false
				}
			}
			if ok {
				for j := range sum {
					sum[j] += c.db[j]
				}
				n := len(rows)
				rows = append(rows, c.rows...)
				rec(s + 1)
				rows = rows[:n]
				for j := range sum {
					sum[j] -= c.db[j]
				}
			}
			for _, r := range c.rows {
				used[r]--
			}
		}
	}
	rec(0)
	if bestWithin != nil {
		bestWithin.within = true
		return *bestWithin
	}
	return best
}

// drawerEdge is 1/(2π R C) for the geometric middles of the drawer's
// resistor and capacitor values, to three significant figures.
func drawerEdge(items []stock.Item) float64 {
	lo := map[stock.Kind]float64{stock.Resistor: math.Inf(1), stock.Capacitor: math.Inf(1)}
	hi := map[stock.Kind]float64{}
	for _, it := range items {
		lo[it.Kind] = math.Min(lo[it.Kind], it.Value)
		hi[it.Kind] = math.Max(hi[it.Kind], it.Value)
	}
	f := 1 / (2 * math.Pi * math.Sqrt(lo[stock.Resistor]*hi[stock.Resistor]*lo[stock.Capacitor]*hi[stock.Capacitor]))
	p := math.Pow(10, math.Floor(math.Log10(f))-2)
	return math.Round(f/p) * p
}

func TestFitExactOnRandomDrawers(t *testing.T) {
	t.Parallel()
	lp := func(n int) synth.Spec {
		// Sallen-Key sections: the proof covers them (doc.go, "Exactness").
		return synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: n, Topology: synth.TopologySallenKey}
	}
	hp := lp(2)
	hp.Kind = synth.HighPass
	type drawerCase struct {
		name          string
		spec          synth.Spec
		pairs         bool
		boards        int
		nrMax, ncMax  int // drawer size: 4..nrMax resistor rows, 3..ncMax capacitor rows
		drawers, long int // drawers in the default run and in the long sweep
	}
	cases := []drawerCase{
		{"lowpass-2-pairs", lp(2), true, 1, 4, 3, 2, 40},
		{"highpass-2-pairs", hp, true, 1, 4, 3, 2, 40},
		{"lowpass-3-rc-pairs", lp(3), true, 1, 4, 3, 1, 20},
		{"lowpass-4-singles", lp(4), false, 1, 8, 6, 4, 100},
		{"lowpass-2-pairs-boards2", lp(2), true, 2, 4, 3, 2, 40},
		{"lowpass-4-singles-boards2", lp(4), false, 2, 8, 6, 3, 60},
	}
	for ci, tc := range cases {
		n := tc.drawers
		if testkit.Long() {
			n = tc.long
		}
		for _, rank := range []optimize.Rank{optimize.RankBalanced, optimize.RankError} {
			if testing.Short() && tc.pairs && rank == optimize.RankError {
				continue // the pair enumerations are the slow ones; the long sweep runs them
			}
			t.Run(tc.name+"-"+rank.String(), func(t *testing.T) {
				t.Parallel()
				rng := rand.New(rand.NewPCG(uint64(ci+1), 2026))
				compared := 0
				for k := 0; k < n; k++ {
					items := randomDrawer(rng, 4+rng.IntN(tc.nrMax-3), 3+rng.IntN(tc.ncMax-2))
					// The edge where the drawer's middle values put a
					// section, so that most drawers can meet it.
					spec := tc.spec
					spec.Pass = drawerEdge(items)
					o := optimize.DefaultOptions()
					o.Rank, o.Boards, o.Top, o.Combine = rank, tc.boards, 3, 1
					if tc.pairs {
						o.Combine = 2
					}
					odd := synth.OddOnePole
					o.Odd = &odd
					r, err := optimize.Fit(context.Background(), items, spec, o)
					if err != nil {
						continue // nothing usable in this drawer (e.g. no row with enough parts)
					}
					want := bruteForce(r.Designs[0], r.Spec, items, tc.pairs, tc.boards, rank, o.GoodEnough)
					if !want.found {
						if len(r.Candidates) > 0 {
							t.Errorf("drawer %d: the fit lists a design meeting the specification, the enumeration finds none", k)
						}
						continue
					}
					compared++
					if len(r.Candidates) == 0 {
						t.Errorf("drawer %d: no candidate; the enumeration finds error %.6f dB, %d parts, %d rows", k, want.err, want.parts, want.unique)
						continue
					}
					c := r.Candidates[0]
					if !r.Proven {
						t.Errorf("drawer %d: not proven exact: %v", k, r.Notes)
					}
					// Equal errors within 1e-9 dB (float noise of equal circuits).
					// Parts and rows decide only within the good-enough error
					// of the balanced ranking; elsewhere ties in error may
					// be listed in another order.
					if math.Abs(c.ResponseError-want.err) > 1e-9 || want.within && (c.PartCount != want.parts || c.UniqueParts != want.unique) {
						t.Errorf("drawer %d: fit #1 %.9f dB, %d parts, %d rows; enumeration %.9f dB, %d parts, %d rows",
							k, c.ResponseError, c.PartCount, c.UniqueParts, want.err, want.parts, want.unique)
					}
				}
				t.Logf("%d of %d drawers compared (the others meet the specification nowhere)", compared, n)
			})
		}
	}
}
