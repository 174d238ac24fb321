package optimize

import (
	"math"
	"sort"
	"sync"
	"sync/atomic"

	"drawerfit/synth"
)

// maxElems is the largest element count of any topology (the 3-pole sections).
const maxElems = 6

// sectionCand is one way to build one section.
type sectionCand struct {
	err   float64
	parts int8
	reals [maxElems]int32 // per element: index into the value set of its kind
	vals  [maxElems]float64
	dev   []float64 // signed deviation from the target on the grid (filled for shortlisted ones)
	rows  []rowCount
	tol   float64 // sum of the positions' effective tolerances (a tie-break: tighter parts first)
}

// symmetricPair returns the two elements a topology's response does not
// tell apart (its transfer function depends on their sum and product).
func symmetricPair(t *synth.Topology) (int, int, bool) {
	switch t {
	case synth.SallenKeyLowPass(), synth.SallenKeyHighPass():
		return 0, 1, true
	}
	return 0, 0, false
}

// realTolerance is the effective relative tolerance of one realisation
// (Component.Tolerance of its parts).
func realTolerance(k synth.PartKind, re *real, rows []Row) float64 {
	comp := Component{Kind: k, Value: re.value, Arrangement: re.arr}
	for j := 0; j < int(re.n); j++ {
		comp.Parts = append(comp.Parts, rows[re.rows[j]].Part)
	}
	return comp.Tolerance()
}

// rowCount is how many parts of one stock row a section (or design) uses.
type rowCount struct {
	row   int32
	count int32
}

// less is the total order inside a shortlist class: error, then the
// realisations, so that the kept set never depends on the order of search.
func (a *sectionCand) less(b *sectionCand) bool {
	if a.err != b.err {
		return a.err < b.err
	}
	if a.tol != b.tol {
		return a.tol < b.tol
	}
	for i := range a.reals {
		if a.reals[i] != b.reals[i] {
			return a.reals[i] < b.reals[i]
		}
	}
	return false
}

// shortlist keeps, for every part count, the k best candidates of a section.
type shortlist struct {
	k       int
	classes [16][]sectionCand // index: part count
	cum     [16]float64       // entry limit per part count (see limit)
}

func newShortlist(k int, ceiling float64) shortlist {
	s := shortlist{k: k}
	for i := range s.cum {
		s.cum[i] = ceiling
	}
	return s
}

// limit is the error a new candidate with p parts must not exceed to enter:
// it must be among the k best of its own part count and among the k best of
// all candidates with at most p parts (a candidate with more parts and a
// larger error than k others is of no use to any ranking).
func (s *shortlist) limit(p int8, ceiling float64) float64 {
	return s.cum[p]
}

// refresh recomputes the entry limits after class p changed.
func (s *shortlist) refresh(ceiling float64) {
	// The k smallest errors over classes <= p, merged incrementally.
	var best []float64
	for p := range s.classes {
		own := ceiling
		if c := s.classes[p]; len(c) == s.k {
			own = c[len(c)-1].err
		}
		for _, c := range s.classes[p] {
			best = append(best, c.err)
		}
		sort.Float64s(best)
		if len(best) > s.k {
			best = best[:s.k]
		}
		cum := ceiling
		if len(best) == s.k {
			cum = best[s.k-1]
		}
		s.cum[p] = math.Min(own, cum)
	}
}

// maxSameValues is how many candidates with identical element values (the
// same circuit from different stock rows) a class keeps: one, and one
// alternative in case quantities or shared rows rule the first out. More
// copies would crowd distinct circuits out of the shortlist.
const maxSameValues = 2

func (s *shortlist) add(c sectionCand) {
	cl := s.classes[c.parts]
	if len(cl) == s.k && !c.less(&cl[len(cl)-1]) {
		return
	}
	same, worst := 0, -1
	for i := range cl {
		if cl[i].reals == c.reals {
			return // the same assignment, offered twice (seed and search)
		}
		if cl[i].vals == c.vals {
			same++
			worst = i // cl is sorted, so the last match is the worst
		}
	}
	if same >= maxSameValues {
		if !c.less(&cl[worst]) {
			return
		}
		cl = append(cl[:worst], cl[worst+1:]...)
	}
	at := sort.Search(len(cl), func(i int) bool { return c.less(&cl[i]) })
	if len(cl) < s.k {
		cl = append(cl, sectionCand{})
	}
	copy(cl[at+1:], cl[at:])
	cl[at] = c
	s.classes[c.parts] = cl
}

func (s *shortlist) merge(o *shortlist, ceiling float64) {
	for _, cl := range o.classes {
		for _, c := range cl {
			s.add(c)
		}
	}
	s.refresh(ceiling)
}

func (s *shortlist) all() []sectionCand {
	var out []sectionCand
	for _, cl := range s.classes {
		out = append(out, cl...)
	}
	return out
}

// sectionDiag counts what limited a section's search, for the explanation
// of an infeasible fit.
type sectionDiag struct {
	capSets      int // capacitor assignments tried
	ratioOK      int // of which admit an exact resistor solution
	inRange      int // of which had resistors in the allowed range near the solution
	quantityFail int // candidates rejected because a row lacks parts for the boards
	accepted     int
	unreachable  string // why nothing in stock comes near the section (not searched)
	evals        int    // assignments scored
	truncated    bool   // the evaluation budget stopped the search
}

func (d *sectionDiag) addFrom(o *sectionDiag) {
	d.capSets += o.capSets
	d.ratioOK += o.ratioOK
	d.inRange += o.inRange
	d.quantityFail += o.quantityFail
	d.accepted += o.accepted
}

// sectionSearch searches one section's realisations.
type sectionSearch struct {
	t        *target
	res, cap *valueSet
	rows     []Row
	boards   int
	k        int
	ceiling  float64 // the largest section error worth keeping
	rmin     float64
	rmax     float64
	threeCap bool         // 3-pole sections: allow paired capacitors
	stop     *atomic.Bool // set when the fit is cancelled; the loops poll it
	// evalBudget bounds the assignments each worker scores (0: no bound);
	// a worker that reaches it stops, and the section is not proven exact.
	evalBudget int
	// fixed, when set, is the one box every walk uses (the exact phase).
	fixed *box
	// partsCap, when positive, skips assignments of more parts.
	partsCap int8
}

// halted reports whether the fit was cancelled.
func (s *sectionSearch) halted() bool { return s.stop != nil && s.stop.Load() }

// worker holds one goroutine's state.
type worker struct {
	s    *sectionSearch
	list shortlist
	diag sectionDiag
	v    [maxElems]float64
	r    [maxElems]int32
	sols [][]float64

	boxes    map[int]box // this worker's copy of the target's boxes
	cacheLim [16]float64
	cacheBox [16]*box
	lastE    float64
	lastBox  box
	lastOK   bool

	// The search widens its error level pass by pass (passLevels). The
	// walks enumerate the boxes of the entry limits capped at the pass's
	// level, and skip every assignment inside the previous pass's box:
	// those were all scored then (against the uncapped limit, which only
	// falls), so no assignment is scored twice.
	levelCap float64
	prev     box
	hasPrev  bool
	evals    int  // assignments scored
	over     bool // the evaluation budget ran out

	// The exact phase collects every admitted assignment (collectOffer).
	collect bool
	idx     []int
	allow   [2][]float64
	all     []sectionCand
	partner *onePole      // with a 1-pole partner section: the exact test
	bound   float64       // the cascade error bound B of the exact phase
	count   *atomic.Int64 // candidates collected by all workers
	spans   [][2]float64  // the 1-pole frequencies the collected candidates admit
	w0In    spans         // for a 1-pole: the frequencies its partner admits
}

// passLevels are the error levels (dB) of the successive passes of a
// section search, up to the ceiling.
func passLevels(ceiling float64) []float64 {
	var out []float64
	for b := 0.01; b < ceiling; b *= 4 {
		out = append(out, b)
	}
	return append(out, ceiling)
}

// halted reports whether the worker must stop: the fit was cancelled or
// its evaluation budget ran out.
func (w *worker) halted() bool { return w.over || w.s.halted() }

// seen reports whether the point (x, y) was inside the previous pass's
// box, so that its assignment was scored then.
func (w *worker) seen(x, y float64) bool {
	p := &w.prev
	return w.hasPrev && x >= p.xlo && x <= p.xhi && y >= p.ylo && y <= p.yhi
}

// setPass starts a pass at error level b.
func (w *worker) setPass(b float64) {
	w.levelCap = b
	w.lastOK = false
	w.cacheBox = [16]*box{}
}

// maxClassLimit is the largest entry limit over the part counts the
// section can have.
func (w *worker) maxClassLimit() float64 {
	n := w.s.t.topo.NumElements()
	var m float64
	for p := n; p <= 2*n && p < len(w.list.cum); p++ {
		m = math.Max(m, w.list.cum[p])
	}
	return m
}

// hull returns the smallest box containing a and b.
func hull(a, b box) box {
	if a.empty() {
		return b
	}
	if b.empty() {
		return a
	}
	h := box{xlo: math.Min(a.xlo, b.xlo), xhi: math.Max(a.xhi, b.xhi), ylo: math.Min(a.ylo, b.ylo), yhi: math.Max(a.yhi, b.yhi)}
	h.e2xhi, h.e2xlo = math.Exp(-2*h.xhi), math.Exp(-2*h.xlo)
	h.eyhi, h.eylo = math.Exp(h.yhi), math.Exp(h.ylo)
	h.exhi, h.exlo = math.Exp(-h.xhi), math.Exp(-h.xlo)
	return h
}

// classBox returns the box for the entry limit of part count p, cached
// until that limit changes.
func (w *worker) classBox(p int8) *box {
	lim := w.list.cum[p]
	if w.cacheBox[p] != nil && w.cacheLim[p] == lim {
		return w.cacheBox[p]
	}
	b := w.box(lim)
	w.cacheLim[p], w.cacheBox[p] = lim, &b
	return &b
}

// box returns the (ln w0, ln Q) box for error level e.
func (w *worker) box(e float64) box {
	if e == w.lastE && w.lastOK {
		return w.lastBox
	}
	b := w.boxLevel(e)
	w.lastE, w.lastBox, w.lastOK = e, b, true
	return b
}

func (w *worker) boxLevel(e float64) box {
	if w.s.fixed != nil {
		return *w.s.fixed
	}
	if w.levelCap > 0 {
		e = math.Min(e, w.levelCap)
	}
	k := levelOf(e)
	if b, ok := w.boxes[k]; ok {
		return b
	}
	if w.boxes == nil {
		w.boxes = map[int]box{}
	}
	b := w.s.t.boxAt(k)
	w.boxes[k] = b
	return b
}

// run searches the section on the given number of goroutines and returns
// its shortlist with deviation vectors filled in.
func (s *sectionSearch) run(workers int) ([]sectionCand, sectionDiag) {
	if workers < 1 {
		workers = 1
	}
	ws := make([]*worker, workers)
	var wg sync.WaitGroup
	for i := range ws {
		ws[i] = &worker{s: s, list: newShortlist(s.k, s.ceiling)}
		wg.Add(1)
		go func(w *worker, part int) {
			defer wg.Done()
			w.search(part, workers)
		}(ws[i], i)
	}
	wg.Wait()
	final := newShortlist(s.k, s.ceiling)
	var diag sectionDiag
	for _, w := range ws {
		final.merge(&w.list, s.ceiling)
		diag.addFrom(&w.diag)
		diag.evals += w.evals
		diag.truncated = diag.truncated || w.over
	}
	out := final.all()
	for i := range out {
		c := &out[i]
		c.dev = make([]float64, len(s.t.grid.w))
		num, den := s.t.topo.Coeffs(c.vals[:s.t.topo.NumElements()])
		c.err = s.t.fullErr(num, den, c.dev)
	}
	return out, diag
}

// offer scores the element assignment in w.v/w.r and keeps it if good.
func (w *worker) offer() {
	s := w.s
	n := s.t.topo.NumElements()
	// The Sallen-Key responses are symmetric in one pair of elements (R1,
	// R2 of the low-pass; C1, C2 of the high-pass): keep the larger value
	// first so that one circuit has one form.
	if i, j, ok := symmetricPair(s.t.topo); ok && (w.v[j] > w.v[i] || (w.v[j] == w.v[i] && w.r[j] > w.r[i])) {
		w.v[i], w.v[j] = w.v[j], w.v[i]
		w.r[i], w.r[j] = w.r[j], w.r[i]
	}
	var parts int8
	for i := 0; i < n; i++ {
		parts += w.realOf(i).n
	}
	if s.partsCap > 0 && parts > s.partsCap {
		return
	}
	if w.collect {
		w.collectOffer(n, parts)
		return
	}
	lim := w.list.limit(parts, s.ceiling)
	w.evals++
	if s.evalBudget > 0 && w.evals > s.evalBudget {
		w.over = true
		return
	}
	e, ok := s.t.errFor(w.v[:n], lim)
	if !ok {
		return
	}
	rows, qok := w.rowUse(n)
	if !qok {
		w.diag.quantityFail++
		return
	}
	var tol float64
	for i := 0; i < n; i++ {
		re := w.realOf(i)
		tol += realTolerance(s.t.topo.Element(i).Kind, re, s.rows)
	}
	c := sectionCand{err: e, parts: parts, reals: w.r, vals: w.v, rows: rows, tol: tol}
	w.list.add(c)
	w.list.refresh(s.ceiling)
	w.diag.accepted++
}

func (w *worker) realOf(i int) *real {
	if w.s.t.topo.Element(i).Kind == synth.Capacitor {
		return &w.s.cap.reals[w.r[i]]
	}
	return &w.s.res.reals[w.r[i]]
}

// rowUse counts the parts each row gives to this section and checks the
// counts against the quantity for the asked boards.
func (w *worker) rowUse(n int) ([]rowCount, bool) {
	var tmp [2 * maxElems]rowCount
	m := 0
	for i := 0; i < n; i++ {
		re := w.realOf(i)
		for j := 0; j < int(re.n); j++ {
			row := re.rows[j]
			found := false
			for k := 0; k < m; k++ {
				if tmp[k].row == row {
					tmp[k].count++
					found = true
				}
			}
			if !found {
				tmp[m] = rowCount{row: row, count: 1}
				m++
			}
		}
	}
	for k := 0; k < m; k++ {
		if int(tmp[k].count)*w.s.boards > w.s.rows[tmp[k].row].Quantity {
			return nil, false
		}
	}
	out := make([]rowCount, m)
	copy(out, tmp[:m])
	sort.Slice(out, func(a, b int) bool { return out[a].row < out[b].row })
	return out, true
}

func (w *worker) search(part, of int) {
	switch searchMethod(w.s.t.topo) {
	case "three-pole":
		w.searchThreePole(part, of)
		return
	case "solved":
		w.searchSolved(part, of)
		return
	}
	w.seed(part, of)
	levels := passLevels(w.s.ceiling)
	if w.maxClassLimit() < w.s.ceiling {
		// The seeding filled every class: one pass at the limits, which
		// only fall from here.
		levels = levels[len(levels)-1:]
	}
	for _, b := range levels {
		w.setPass(b)
		w.walk(part, of)
		if w.halted() || w.maxClassLimit() <= b {
			return
		}
		w.setPass(0)
		w.prev, w.hasPrev = w.box(b), true
	}
}

// walk runs the box walk of the section's topology once.
func (w *worker) walk(part, of int) {
	switch w.s.t.topo {
	case synth.FirstOrderLowPass(), synth.FirstOrderHighPass():
		w.searchFirstOrder(part, of)
	case synth.SallenKeyLowPass():
		w.searchSallenKeyLowPass(part, of)
	case synth.SallenKeyHighPass():
		w.searchSallenKeyHighPass(part, of)
	}
}

// seed offers, for every assignment of single-part capacitors, the
// realisable resistors nearest the exact solution in each class. It only
// lowers the entry thresholds early, so that the full search that follows
// walks small boxes; it decides nothing by itself.
func (w *worker) seed(part, of int) {
	s := w.s
	topo := s.t.topo
	ci := topo.Indices(synth.Capacitor)
	ri := topo.Indices(synth.Resistor)
	single := s.cap.sub[1]
	var capSets [][]int32
	if len(ci) == 1 {
		for a := range single.reals {
			capSets = append(capSets, []int32{single.global[a]})
		}
	} else {
		for a := range single.reals {
			for b := range single.reals {
				capSets = append(capSets, []int32{single.global[a], single.global[b]})
			}
		}
	}
	for x := part; x < len(capSets) && !w.halted(); x += of {
		cs := capSets[x]
		for j, i := range ci {
			w.r[i] = cs[j]
			w.v[i] = s.cap.vals[cs[j]]
		}
		sols, _ := topo.SolveAppend(w.v[:topo.NumElements()], s.t.sec.Den, w.sols[:0])
		w.sols = sols
		if len(sols) == 0 {
			continue
		}
		sol := sols[0]
		// Neighbours per resistor position and class.
		var near [2][4]int32
		var cnt [2]int
		for k, i := range ri {
			for n := 1; n <= 2; n++ {
				sub := s.res.sub[n]
				at := sort.SearchFloat64s(sub.vals, sol[i])
				for _, j := range []int{at - 1, at} {
					if j >= 0 && j < len(sub.vals) {
						near[k][cnt[k]] = sub.global[j]
						cnt[k]++
					}
				}
			}
		}
		if len(ri) == 1 {
			for a := 0; a < cnt[0]; a++ {
				w.r[ri[0]] = near[0][a]
				w.v[ri[0]] = s.res.vals[near[0][a]]
				w.offer()
			}
			continue
		}
		for a := 0; a < cnt[0]; a++ {
			for b := 0; b < cnt[1]; b++ {
				w.r[ri[0]], w.r[ri[1]] = near[0][a], near[1][b]
				w.v[ri[0]], w.v[ri[1]] = s.res.vals[near[0][a]], s.res.vals[near[1][b]]
				w.offer()
			}
		}
	}
}

// searchFirstOrder: w0 = 1/(RC); for each capacitor the resistors whose w0
// lies in the box of the current error level, single parts and pairs
// searched separately so that each has its own entry threshold.
func (w *worker) searchFirstOrder(part, of int) {
	s := w.s
	t := s.t
	ri, ci := 0, 1
	if t.topo.Element(0).Kind == synth.Capacitor {
		ri, ci = 1, 0
	}
	for c := part; c < len(s.cap.reals) && !w.halted(); c += of {
		cr := &s.cap.reals[c]
		w.diag.capSets++
		w.diag.ratioOK++
		C := cr.value
		for n := 1; n <= 2; n++ {
			if s.partsCap > 0 && cr.n+int8(n) > s.partsCap {
				continue
			}
			rs := s.res.sub[n]
			b := w.box(w.list.limit(cr.n+int8(n), s.ceiling))
			lo := math.Exp(-b.xhi) / (t.w0 * C)
			hi := math.Exp(-b.xlo) / (t.w0 * C)
			i0, i1 := rs.span(lo, hi)
			if i0 < i1 {
				w.diag.inRange++
			}
			for r := i0; r < i1; r++ {
				if w.seen(math.Log(1/(rs.vals[r]*C*t.w0)), 0) {
					continue
				}
				w.r[ri], w.r[ci] = rs.global[r], int32(c)
				w.v[ri], w.v[ci] = rs.vals[r], C
				w.offer()
			}
		}
	}
}

// searchSallenKeyLowPass: the response depends on w0² = 1/(R1 R2 Cf Cg) and
// Q = √(R1 R2 Cf Cg)/(Cg (R1+R2)), and is symmetric in R1, R2, so R1 takes
// the larger value. For a given Cg the sum S = R1+R2 = 1/(w0 Q Cg) depends
// on w0·Q only, so the box in (ln w0, ln Q) of the current error level
// bounds S without looking at Cf; then, for each R1, R2 lies in a window of
// S, and for each (R1, R2) the box bounds Cf through w0 and through Q. The
// resistors are walked with R1 descending so that both window edges only
// move forward (two pointers), and the capacitors found by binary search.
// Single parts and pairs of resistors are separate classes, each with the
// box of its own entry threshold (the loosest over the Cf classes).
func (w *worker) searchSallenKeyLowPass(part, of int) {
	s := w.s
	for g := part; g < len(s.cap.reals); g += of {
		cgR := &s.cap.reals[g]
		w.diag.capSets += len(s.cap.reals)
		any := false
		for big := 1; big <= 2; big++ {
			for small := 1; small <= 2; small++ {
				if w.skLowPassClass(g, cgR, s.res.sub[big], s.res.sub[small], big == small, int8(big+small)) {
					any = true
				}
			}
		}
		if any {
			w.diag.ratioOK++
			w.diag.inRange++
		}
	}
}

// skLowPassClass searches one class of resistor pairs for capacitor Cg:
// R1 from big (the larger value), R2 from small. It reports whether any
// resistor pair had a capacitor Cf in range.
func (w *worker) skLowPassClass(g int, cgR *real, big, small *valueSet, same bool, rparts int8) bool {
	s := w.s
	if s.partsCap > 0 && cgR.n+1+rparts > s.partsCap {
		return false
	}
	t := s.t
	w0t, qt := t.w0, t.q
	Cg := cgR.value
	// The window must hold the box of each class it can end in.
	b := hull(w.box(w.list.limit(cgR.n+1+rparts, s.ceiling)), w.box(w.list.limit(cgR.n+2+rparts, s.ceiling)))
	if b.empty() {
		return false
	}
	s0 := 1 / (w0t * qt * Cg)
	sLo := s0 * math.Exp(-(b.xhi + b.yhi))
	sHi := s0 * math.Exp(-(b.xlo + b.ylo))
	found := false
	// R1 from the top of its range down to S/2.
	top := sort.Search(len(big.vals), func(i int) bool { return big.vals[i] > sHi })
	jl, jh := 0, 0
	ns := len(small.vals)
	for r1 := top - 1; r1 >= 0 && !w.halted(); r1-- {
		R1 := big.vals[r1]
		if 2*R1 < sLo {
			break
		}
		for jl < ns && small.vals[jl] < sLo-R1 {
			jl++
		}
		for jh < ns && small.vals[jh] <= sHi-R1 {
			jh++
		}
		for r2 := jl; r2 < jh; r2++ {
			R2 := small.vals[r2]
			if R2 > R1 || (same && r2 > r1) {
				break
			}
			P, S := R1*R2, R1+R2
			// Cf from w0 (x) and from Q (y): w0² = 1/(P Cf Cg),
			// Q² = P Cf / (Cg S²).
			k := P * Cg * w0t * w0t
			lo := b.e2xhi / k
			hi := b.e2xlo / k
			q2 := Cg * S * S / P
			lo = math.Max(lo, qt*qt*b.eylo*b.eylo*q2)
			hi = math.Min(hi, qt*qt*b.eyhi*b.eyhi*q2)
			f0, f1 := s.cap.span(lo, hi)
			if f0 >= f1 {
				continue
			}
			found = true
			w.v[0], w.v[1], w.v[3] = R1, R2, Cg
			w.r[0], w.r[1], w.r[3] = big.global[r1], small.global[r2], int32(g)
			for f := f0; f < f1; f++ {
				cfR := &s.cap.reals[f]
				Cf := cfR.value
				cb := w.classBox(cgR.n + cfR.n + rparts)
				x := math.Log(1 / (math.Sqrt(P*Cf*Cg) * w0t))
				y := math.Log(math.Sqrt(P*Cf*Cg) / (Cg * S) / qt)
				if x < cb.xlo || x > cb.xhi || y < cb.ylo || y > cb.yhi || w.seen(x, y) {
					continue
				}
				w.v[2], w.r[2] = Cf, int32(f)
				w.offer()
			}
		}
	}
	return found
}

// searchSallenKeyHighPass: the response depends on C1+C2 and C1·C2 (so
// C1 >= C2), with w0² = 1/(Rf Rg C1 C2) and Q = √(Rf Rg C1 C2)/(Rf (C1+C2)).
// Rf·(C1+C2) = 1/(w0 Q) depends on w0·Q only, so for a given C1 the box in
// (ln w0, ln Q) bounds Rf, and for each Rf a window of C2; for each
// (C1, C2, Rf) the box bounds Rg through w0 and through Q. Rf is walked
// descending so that the C2 window only moves up (two pointers). Resistor
// classes (single or pair, per position) are searched separately with the
// loosest box over the classes they can end in.
func (w *worker) searchSallenKeyHighPass(part, of int) {
	s := w.s
	t := s.t
	w0t, qt := t.w0, t.q
	caps := s.cap.vals
	for c1 := part; c1 < len(caps); c1 += of {
		c1R := &s.cap.reals[c1]
		C1 := c1R.value
		w.diag.capSets += c1 + 1
		any := false
		for nf := 1; nf <= 2; nf++ {
			if s.partsCap > 0 && c1R.n+1+int8(nf)+1 > s.partsCap {
				continue
			}
			fs := s.res.sub[nf]
			// The window must hold the box of each class it can end in.
			b := box{xlo: 1, xhi: -1, ylo: 1, yhi: -1}
			for c2n := int8(1); c2n <= 2; c2n++ {
				for ng := int8(1); ng <= 2; ng++ {
					b = hull(b, w.box(w.list.limit(c1R.n+c2n+int8(nf)+ng, s.ceiling)))
				}
			}
			if b.empty() {
				continue
			}
			aLo := math.Exp(-(b.xhi + b.yhi)) / (w0t * qt)
			aHi := math.Exp(-(b.xlo + b.ylo)) / (w0t * qt)
			top := sort.Search(len(fs.vals), func(i int) bool { return fs.vals[i] > aHi/C1 })
			jl, jh := 0, 0
			for rf := top - 1; rf >= 0 && !w.halted(); rf-- {
				Rf := fs.vals[rf]
				if Rf < aLo/(2*C1) {
					break
				}
				lo, hi := aLo/Rf-C1, aHi/Rf-C1
				for jl <= c1 && caps[jl] < lo {
					jl++
				}
				for jh <= c1 && caps[jh] <= hi {
					jh++
				}
				for c2 := jl; c2 < jh; c2++ {
					c2R := &s.cap.reals[c2]
					C2 := c2R.value
					sum, prod := C1+C2, C1*C2
					rgLo := math.Max(b.e2xhi/(w0t*w0t*Rf*prod), qt*qt*b.eylo*b.eylo*Rf*sum*sum/prod)
					rgHi := math.Min(b.e2xlo/(w0t*w0t*Rf*prod), qt*qt*b.eyhi*b.eyhi*Rf*sum*sum/prod)
					if rgLo > rgHi {
						continue
					}
					for ng := 1; ng <= 2; ng++ {
						gs := s.res.sub[ng]
						g0, g1 := gs.span(rgLo, rgHi)
						if g0 < g1 {
							any = true
						}
						parts := c1R.n + c2R.n + int8(nf+ng)
						for rg := g0; rg < g1; rg++ {
							Rg := gs.vals[rg]
							cb := w.classBox(parts)
							P := Rf * Rg
							x := math.Log(1 / (math.Sqrt(P*prod) * w0t))
							y := math.Log(math.Sqrt(Rg*prod/Rf) / sum / qt)
							if x < cb.xlo || x > cb.xhi || y < cb.ylo || y > cb.yhi || w.seen(x, y) {
								continue
							}
							w.v[0], w.v[1], w.v[2], w.v[3] = C1, C2, Rf, Rg
							w.r[0], w.r[1], w.r[2], w.r[3] = int32(c1), int32(c2), fs.global[rf], gs.global[rg]
							w.offer()
						}
					}
				}
			}
		}
		if any {
			w.diag.ratioOK++
			w.diag.inRange++
		}
	}
}

// threePoleWindow is how many neighbouring resistor values on each side of
// the exact solution a 3-pole section tries.
const threePoleWindow = 2

// threePoleDense is the number of realisable resistor values (pairs make
// thousands) above which the 3-pole window narrows to the nearest value on
// each side: neighbours are then a fraction of a percent apart.
const threePoleDense = 1000

// searchThreePole: every triple of capacitors (single parts unless
// threeCap), the resistors solved exactly (Topology.Solve), then the
// realisable resistors nearest each solved value.
func (w *worker) searchThreePole(part, of int) {
	s := w.s
	t := s.t
	topo := t.topo
	ci := topo.Indices(synth.Capacitor)
	ri := topo.Indices(synth.Resistor)
	den := t.sec.Den
	var capIdx []int
	for i, r := range s.cap.reals {
		if r.n == 1 || s.threeCap {
			capIdx = append(capIdx, i)
		}
	}
	// a3 = (product of the capacitors)·(product of the resistors).
	prodLo := den[3] / (s.rmax * s.rmax * s.rmax)
	prodHi := den[3] / (s.rmin * s.rmin * s.rmin)
	for x := part; x < len(capIdx); x += of {
		a := capIdx[x]
		for _, bb := range capIdx {
			if w.halted() {
				return
			}
			for _, c := range capIdx {
				ca, cb, cc := s.cap.reals[a].value, s.cap.reals[bb].value, s.cap.reals[c].value
				p := ca * cb * cc
				w.diag.capSets++
				if p < prodLo || p > prodHi || !threePoleAdmits(topo, ca, cb, cc, den, s.rmin, s.rmax) {
					continue
				}
				w.v[ci[0]], w.v[ci[1]], w.v[ci[2]] = ca, cb, cc
				w.r[ci[0]], w.r[ci[1]], w.r[ci[2]] = int32(a), int32(bb), int32(c)
				if len(s.res.vals) <= threePoleFull {
					w.diag.ratioOK++
					w.tryAllResistors(ri)
					continue
				}
				w.sols = topo.SolveExactAppend(w.v[:6], den, w.sols[:0])
				if len(w.sols) == 0 {
					continue
				}
				w.diag.ratioOK++
				for _, sol := range w.sols {
					w.tryResistorWindow(sol, ri)
				}
			}
		}
	}
}

// threePoleAdmits applies necessary conditions for resistors in
// [rmin, rmax] to exist: each coefficient of D(s) is a sum of products of
// resistors with fixed capacitor factors, so it lies between those factors
// times the smallest and the largest resistor products. Capacitors are in
// Elements order (a, b, c).
func threePoleAdmits(t *synth.Topology, a, b, c float64, den synth.Poly, rmin, rmax float64) bool {
	var k1, k2 float64
	if t.Response() == synth.LowPass {
		// Elements Ca, Cf, Cb: a1 = Ca R1 + Cb(R1+R2+R3),
		// a2 = Ca Cb R1(R2+R3) + Cb Cf R3(R1+R2).
		ca, cf, cb := a, b, c
		k1 = ca + 3*cb
		k2 = 2*ca*cb + 2*cb*cf
	} else {
		// a1 = (C1+C2)Ra + (C2+C3)Rf, a2 = Ra Rf (C1C2+C1C3+C2C3) + C2 C3 Rb Rf.
		k1 = a + 2*b + c
		k2 = a*b + a*c + b*c + b*c
	}
	return den[1] >= k1*rmin && den[1] <= k1*rmax && den[2] >= k2*rmin*rmin && den[2] <= k2*rmax*rmax
}

// threePoleFull is the largest number of realisable resistor values for
// which a 3-pole section tries every resistor triple for every capacitor
// triple (an exact search); above it, the neighbours of the exact solution.
const threePoleFull = 40

// tryAllResistors offers every triple of realisable resistors.
func (w *worker) tryAllResistors(ri []int) {
	s := w.s
	w.diag.inRange++
	for a := range s.res.vals {
		for b := range s.res.vals {
			for c := range s.res.vals {
				w.v[ri[0]], w.v[ri[1]], w.v[ri[2]] = s.res.vals[a], s.res.vals[b], s.res.vals[c]
				w.r[ri[0]], w.r[ri[1]], w.r[ri[2]] = int32(a), int32(b), int32(c)
				w.offer()
			}
		}
	}
}

func (w *worker) tryResistorWindow(sol []float64, ri []int) {
	s := w.s
	var lo, hi [3]int
	for k, i := range ri {
		v := sol[i]
		if v < s.rmin || v > s.rmax {
			return
		}
		at := sort.SearchFloat64s(s.res.vals, v)
		win := threePoleWindow
		if len(s.res.vals) >= threePoleDense {
			win = 1
		}
		lo[k] = max(0, at-win)
		hi[k] = min(len(s.res.vals), at+win)
		if lo[k] >= hi[k] {
			return
		}
	}
	w.diag.inRange++
	for a := lo[0]; a < hi[0]; a++ {
		for b := lo[1]; b < hi[1]; b++ {
			for c := lo[2]; c < hi[2]; c++ {
				w.v[ri[0]], w.v[ri[1]], w.v[ri[2]] = s.res.vals[a], s.res.vals[b], s.res.vals[c]
				w.r[ri[0]], w.r[ri[1]], w.r[ri[2]] = int32(a), int32(b), int32(c)
				w.offer()
			}
		}
	}
}
