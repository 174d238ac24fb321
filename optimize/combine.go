package optimize

import (
	"math"
	"sort"
	"sync/atomic"
)

// Rank is the ordering of the candidate list.
type Rank uint8

const (
	// RankBalanced lists candidates within the good-enough error first, by
	// part count, then unique parts, then error; the rest by error.
	RankBalanced Rank = iota
	// RankError orders by response error (ties: parts, unique parts).
	RankError
	// RankParts orders by part count (ties: unique parts, error).
	RankParts
	// RankUnique orders by unique parts (ties: parts, error).
	RankUnique
	// RankCost orders by parts cost per board (ties: error, parts, unique
	// parts); candidates with a part of unknown price come last.
	RankCost
)

// Ranks lists every ranking in a stable order.
var Ranks = []Rank{RankBalanced, RankError, RankParts, RankUnique, RankCost}

func (r Rank) String() string {
	return [...]string{"balanced", "error", "parts", "unique", "cost"}[r]
}

// rankKey is a lexicographic sort key; smaller is better.
type rankKey [5]float64

func (a rankKey) less(b rankKey) bool {
	for i := range a {
		if a[i] != b[i] {
			return a[i] < b[i]
		}
	}
	return false
}

// makeKey is the sort key of a combination. cost is the parts cost per
// board in millionths of the currency, +Inf when a price is unknown: the
// balanced ranking breaks ties of parts and unique parts on it, RankCost
// orders by it, the others use it last.
func makeKey(r Rank, goodEnough, err float64, parts, unique int, cost float64) rankKey {
	p, u := float64(parts), float64(unique)
	switch r {
	case RankError:
		return rankKey{err, p, u, cost, 0}
	case RankParts:
		return rankKey{p, u, err, cost, 0}
	case RankUnique:
		return rankKey{u, p, err, cost, 0}
	case RankCost:
		return rankKey{cost, err, p, u, 0}
	}
	if err <= goodEnough {
		return rankKey{0, p, u, cost, err}
	}
	return rankKey{1, err, p, u, cost}
}

// combo is one complete assignment of section candidates.
type combo struct {
	key       rankKey
	design    int   // index of the design in the fit
	picks     []int // per section, the index into that section's list
	err       float64
	parts     int
	unique    int
	passAtten float64
	stopAtten float64
	meets     bool
	tol       float64 // sum of effective tolerances: among equal keys, tighter parts first
	mid       float64 // Σ |ln(R / √(Rmin·Rmax))|: how far the resistors sit from mid-range
	sig       string  // the element values of every section: equal signatures are the same circuit
}

func (a *combo) less(b *combo) bool {
	if a.key != b.key {
		return a.key.less(b.key)
	}
	if a.tol != b.tol {
		return a.tol < b.tol
	}
	if a.design != b.design {
		return a.design < b.design
	}
	for i := range a.picks {
		if a.picks[i] != b.picks[i] {
			return a.picks[i] < b.picks[i]
		}
	}
	return false
}

// sameResponse reports whether two combos are the same response at another
// impedance level (every R scaled by k, every C by 1/k): equal error and
// attenuations to 1e-9 dB, equal part counts. The list keeps the one whose
// resistors sit nearer the middle of the allowed range.
func sameResponse(a, b *combo) bool {
	eq := func(x, y float64) bool { return math.Abs(x-y) <= 1e-9 || (math.IsNaN(x) && math.IsNaN(y)) }
	return a.design == b.design && a.parts == b.parts && a.unique == b.unique &&
		eq(a.err, b.err) && eq(a.passAtten, b.passAtten) && eq(a.stopAtten, b.stopAtten)
}

// topList keeps the best k combos in order.
type topList struct {
	k    int
	list []*combo
}

func (t *topList) worst() (rankKey, bool) {
	if len(t.list) < t.k {
		return rankKey{}, false
	}
	return t.list[len(t.list)-1].key, true
}

// add inserts c unless the list is full of better combos. A combo with the
// same element values as one listed (the same circuit from other bins or
// rows) replaces it only when it is better, so the list shows distinct
// circuits.
func (t *topList) add(c *combo) {
	if len(t.list) == t.k && !c.less(t.list[len(t.list)-1]) {
		return
	}
	for i, o := range t.list {
		if o.sig == c.sig || sameResponse(o, c) {
			if o.sig != c.sig && c.mid < o.mid || o.sig == c.sig && c.less(o) {
				t.list = append(t.list[:i], t.list[i+1:]...)
				break
			}
			return
		}
	}
	at := sort.Search(len(t.list), func(i int) bool { return c.less(t.list[i]) })
	if len(t.list) < t.k {
		t.list = append(t.list, nil)
	}
	copy(t.list[at+1:], t.list[at:])
	t.list[at] = c
}

// combiner searches the product of the sections' shortlists by depth-first
// branch and bound.
type combiner struct {
	lists      [][]sectionCand
	rows       []Row
	boards     int
	rank       Rank
	goodEnough float64
	design     int
	passIdx    int // grid index of fp
	stopIdx    int // grid index of fs, or -1
	tdbTotal   []float64
	ap, as     float64 // specification limits, dB
	ripple     bool    // the passband is judged by its ripple (Chebyshev)
	passFrom   int     // grid indices of the passband: passFrom..passTo
	passTo     int
	keepFail   bool
	out        *topList
	closest    *combo // best failing combo by error, for the explanation

	// per section suffix bounds over the remaining sections
	remMin, remMax [][]float64
	remParts       []int
	remCost        []float64 // the least cost of the remaining sections (micros; +Inf if unknown)

	// cost[s][i] is the parts cost of section s's candidate i, in
	// millionths of the currency (+Inf when a price is unknown). Section
	// costs add up exactly: cost is per part, shared rows change nothing.
	cost [][]float64
	sum  float64 // the cost of the sections picked so far

	// state
	partial [][]float64 // per depth, the deviation sum so far
	counts  []int32
	unique  int
	picks   []int
	nodes   int

	resIdx [][]int // per section, the resistor positions
	rmid   float64 // √(Rmin·Rmax)

	minErr float64 // the smallest cascade error of any complete combination seen

	budget    int  // largest number of nodes to visit; 0 means no limit
	truncated bool // the budget ran out
	stop      *atomic.Bool
	// capped limits the search to combinations with error at most errCap
	// and (when positive) at most partsCap parts.
	capped   bool
	errCap   float64
	partsCap int
	probe    []int // grid points of the quick test (probeOver)
	// The last section's candidates ordered by their deviation at the
	// pivot grid point (lastKey ascending).
	pivot     int
	lastOrder [][]int // per part count
	lastKey   [][]float64
	halted    bool // stopped by the context
}

func (c *combiner) prepare() {
	m := len(c.lists)
	g := len(c.tdbTotal)
	c.remMin = make([][]float64, m+1)
	c.remMax = make([][]float64, m+1)
	c.remParts = make([]int, m+1)
	c.remCost = make([]float64, m+1)
	c.cost = make([][]float64, m)
	for s, l := range c.lists {
		c.cost[s] = make([]float64, len(l))
		for i := range l {
			c.cost[s][i] = sectionCost(&l[i], c.rows)
		}
	}
	c.remMin[m] = make([]float64, g)
	c.remMax[m] = make([]float64, g)
	for s := m - 1; s >= 0; s-- {
		mn := make([]float64, g)
		mx := make([]float64, g)
		minParts := math.MaxInt32
		minCost := math.Inf(1)
		for i := range mn {
			mn[i], mx[i] = math.Inf(1), math.Inf(-1)
		}
		for i, sc := range c.lists[s] {
			minCost = math.Min(minCost, c.cost[s][i])
			for i, d := range sc.dev {
				mn[i] = math.Min(mn[i], d)
				mx[i] = math.Max(mx[i], d)
			}
			minParts = min(minParts, int(sc.parts))
		}
		for i := range mn {
			mn[i] += c.remMin[s+1][i]
			mx[i] += c.remMax[s+1][i]
		}
		c.remMin[s], c.remMax[s] = mn, mx
		c.remParts[s] = minParts + c.remParts[s+1]
		c.remCost[s] = minCost + c.remCost[s+1]
	}
	c.partial = make([][]float64, m+1)
	for i := range c.partial {
		c.partial[i] = make([]float64, g)
	}
	c.counts = make([]int32, len(c.rows))
	c.picks = make([]int, m)
}

// lowerErr bounds the final error of any completion of the first s sections:
// at every grid point the remaining sections add a deviation within their
// shortlists' range.
func (c *combiner) lowerErr(s int) float64 {
	p := c.partial[s]
	mn, mx := c.remMin[s], c.remMax[s]
	var lb float64
	for i, v := range p {
		lo, hi := v+mn[i], v+mx[i]
		if lo > lb {
			lb = lo
		} else if -hi > lb {
			lb = -hi
		}
	}
	return lb
}

func (c *combiner) run() {
	if len(c.lists) == 0 {
		return
	}
	for _, l := range c.lists {
		if len(l) == 0 {
			return
		}
	}
	c.prepare()
	c.dfs(0, 0)
}

func (c *combiner) dfs(s, parts int) {
	c.nodes++
	m := len(c.lists)
	if s == m {
		c.leaf(parts)
		return
	}
	if c.capped && s == m-1 {
		c.lastSection(s, parts)
		return
	}
	for i := range c.lists[s] {
		c.visit(s, i, parts)
	}
}

// lastSection visits the candidates of the last section that can keep the
// error within the cap at the pivot point and the parts within their
// budget: per part count, a window of the candidates sorted by their
// deviation there.
func (c *combiner) lastSection(s, parts int) {
	c.sortLast()
	lim := c.errCap*(1+1e-9) + 1e-12
	v := c.partial[s][c.pivot]
	for p := range c.lastKey {
		if c.partsCap > 0 && parts+p > c.partsCap {
			break
		}
		keys := c.lastKey[p]
		lo := sort.SearchFloat64s(keys, -lim-v)
		hi := sort.Search(len(keys), func(k int) bool { return keys[k] > lim-v })
		for k := lo; k < hi; k++ {
			c.visit(s, c.lastOrder[p][k], parts)
		}
	}
}

// visit tries candidate i at depth s.
func (c *combiner) visit(s, i, parts int) {
	{
		sc := &c.lists[s][i]
		if c.capped {
			// A cheap test at a few grid points before the whole curve:
			// any subset of the grid bounds the final error from below.
			c.nodes++
			if c.budget > 0 && c.nodes > c.budget {
				c.truncated = true
				return
			}
			if c.partsCap > 0 && parts+int(sc.parts)+c.remParts[s+1] > c.partsCap || c.probeOver(s, sc) {
				return
			}
		}
		// Quantities across sections.
		ok := true
		added := 0
		for _, rc := range sc.rows {
			c.counts[rc.row] += rc.count
			if c.counts[rc.row] == rc.count {
				added++
			}
			if int(c.counts[rc.row])*c.boards > c.rows[rc.row].Quantity {
				ok = false
			}
		}
		c.unique += added
		if ok {
			prev, next := c.partial[s], c.partial[s+1]
			for g := range next {
				next[g] = prev[g] + sc.dev[g]
			}
			np := parts + int(sc.parts)
			c.picks[s] = i
			before := c.sum
			c.sum += c.cost[s][i]
			if c.promising(s+1, np) {
				c.dfs(s+1, np)
			}
			c.sum = before
		}
		c.unique -= added
		for _, rc := range sc.rows {
			c.counts[rc.row] -= rc.count
		}
	}
}

// promising reports whether a completion of the first s sections could
// still enter the list: until the list is full every branch is explored;
// after that only branches whose lower-bound key does not exceed the worst
// listed key. The node budget stops a runaway search (reported to the user).
func (c *combiner) promising(s, parts int) bool {
	if c.budget > 0 && c.nodes > c.budget {
		c.truncated = true
		return false
	}
	if c.nodes&1023 == 0 && c.stop != nil && c.stop.Load() {
		c.halted = true
	}
	if c.halted {
		return false
	}
	if c.capped {
		// The exact phase looks only for combinations that could rank
		// first: error within its bound, parts within its budget.
		if c.partsCap > 0 && parts+c.remParts[s] > c.partsCap {
			return false
		}
		if c.lowerErr(s) > c.errCap*(1+1e-9)+1e-12 {
			return false
		}
	}
	worst, full := c.out.worst()
	if !full {
		return true
	}
	lb := c.lowerErr(s)
	k := makeKey(c.rank, c.goodEnough, lb, parts+c.remParts[s], c.unique, c.sum+c.remCost[s])
	return !worst.less(k)
}

// sectionCost is the parts cost of one section candidate in millionths of
// the currency, +Inf when a row it uses has no price.
func sectionCost(sc *sectionCand, rows []Row) float64 {
	var t float64
	for _, rc := range sc.rows {
		p := rows[rc.row].Price
		if !p.Known() {
			return math.Inf(1)
		}
		t += float64(p.Micros()) * float64(rc.count)
	}
	return t
}

// signature encodes the element values of the current picks.
func (c *combiner) signature() string {
	var b []byte
	b = append(b, byte(c.design))
	for s, p := range c.picks {
		for _, v := range c.lists[s][p].vals {
			u := math.Float64bits(v)
			for k := 0; k < 8; k++ {
				b = append(b, byte(u>>(8*k)))
			}
		}
	}
	return string(b)
}

func (c *combiner) leaf(parts int) {
	sum := c.partial[len(c.lists)]
	var e float64
	for _, d := range sum {
		e = math.Max(e, math.Abs(d))
	}
	c.minErr = math.Min(c.minErr, e)
	pa := -(c.tdbTotal[c.passIdx] + sum[c.passIdx])
	sa := math.NaN()
	meets := passFigure(c.ripple, c.passIdx, c.passFrom, c.passTo, func(i int) float64 { return c.tdbTotal[i] + sum[i] }) <= c.ap+1e-9
	if c.stopIdx >= 0 {
		sa = -(c.tdbTotal[c.stopIdx] + sum[c.stopIdx])
		meets = meets && sa >= c.as-1e-9
	}
	var tol float64
	for s, p := range c.picks {
		tol += c.lists[s][p].tol
	}
	cb := &combo{
		key: makeKey(c.rank, c.goodEnough, e, parts, c.unique, c.sum), design: c.design,
		err: e, parts: parts, unique: c.unique, passAtten: pa, stopAtten: sa, meets: meets, tol: tol,
	}
	if meets || c.keepFail {
		if worst, full := c.out.worst(); full && worst.less(cb.key) {
			return
		}
	}
	cb.picks = append([]int(nil), c.picks...)
	cb.sig = c.signature()
	for s, p := range c.picks {
		sc := &c.lists[s][p]
		for _, i := range c.resIdx[s] {
			cb.mid += math.Abs(math.Log(sc.vals[i] / c.rmid))
		}
	}
	if !meets {
		if c.closest == nil || e < c.closest.err {
			c.closest = cb
		}
		if !c.keepFail {
			return
		}
	}
	c.out.add(cb)
}

// dropDesign removes every listed combo of design ji.
func (t *topList) dropDesign(ji int) {
	k := 0
	for _, c := range t.list {
		if c.design != ji {
			t.list[k] = c
			k++
		}
	}
	t.list = t.list[:k]
}

// probeOver reports whether adding candidate sc at depth s already
// exceeds the error cap at one of the probe points, whatever the remaining
// sections add.
func (c *combiner) probeOver(s int, sc *sectionCand) bool {
	if c.probe == nil {
		n := len(c.tdbTotal)
		for k := 0; k < 16; k++ {
			c.probe = append(c.probe, k*(n-1)/15)
		}
	}
	lim := c.errCap*(1+1e-9) + 1e-12
	prev, mn, mx := c.partial[s], c.remMin[s+1], c.remMax[s+1]
	for _, g := range c.probe {
		v := prev[g] + sc.dev[g]
		if v+mn[g] > lim || v+mx[g] < -lim {
			return true
		}
	}
	return false
}

// sortLast prepares the window search of the last section (once): the
// pivot is the grid point where its candidates' deviations spread most;
// the candidates are grouped by part count and sorted by their deviation
// at the pivot.
func (c *combiner) sortLast() {
	if c.lastOrder != nil {
		return
	}
	l := c.lists[len(c.lists)-1]
	var spread float64
	for g := range c.tdbTotal {
		lo, hi := math.Inf(1), math.Inf(-1)
		for i := range l {
			lo, hi = math.Min(lo, l[i].dev[g]), math.Max(hi, l[i].dev[g])
		}
		if hi-lo > spread {
			spread, c.pivot = hi-lo, g
		}
	}
	maxP := 0
	for i := range l {
		maxP = max(maxP, int(l[i].parts))
	}
	c.lastOrder = make([][]int, maxP+1)
	c.lastKey = make([][]float64, maxP+1)
	for i := range l {
		p := l[i].parts
		c.lastOrder[p] = append(c.lastOrder[p], i)
	}
	for p, ord := range c.lastOrder {
		sort.SliceStable(ord, func(a, b int) bool { return l[ord[a]].dev[c.pivot] < l[ord[b]].dev[c.pivot] })
		for _, i := range ord {
			c.lastKey[p] = append(c.lastKey[p], l[i].dev[c.pivot])
		}
	}
}
