package optimize

import (
	"fmt"
	"math"
	"sort"
	"sync"
	"sync/atomic"

	"drawerfit/synth"
)

// The exact phase (see doc.go, "Exactness"). With an incumbent bound B on
// the cascade error, an interval branch and bound over the joint
// parameters of all sections finds, for every section, a rectangle of its
// own (x, y) = (ln w0/w0t, ln Q/Qt) that contains every value for which
// some values of the other sections give a cascade error at most B. Every
// realisation inside is enumerated (no shortlist cut) and the combiner runs
// over the complete lists.

// jointSections is the largest number of sections the joint branch and
// bound is tried on: its cost grows steeply with the dimension (two
// parameters per 2-pole section), and beyond two sections it rarely ends
// within the budget.
const jointSections = 2

// jointBudget bounds the nodes of the joint branch and bound per design; a
// design that needs more is reported as not proven exact.
const jointBudget = 200_000

// devBounds returns, for every grid point of idx, an interval holding the
// signed deviation (dB) of every ideal section in the cell.
func (t *target) devBounds(c cell, idx []int, lo, hi []float64) {
	sh := t.sh
	w0lo, w0hi := t.w0*math.Exp(c.x0), t.w0*math.Exp(c.x1)
	var iqlo, iqhi float64
	if sh.poles == 2 {
		iqlo = math.Exp(-2*c.y1) / (t.q * t.q)
		iqhi = math.Exp(-2*c.y0) / (t.q * t.q)
	}
	for k, g := range idx {
		w := t.grid.w[g]
		ulo, uhi := w/w0hi, w/w0lo
		if sh.inverse {
			ulo, uhi = w0lo/w, w0hi/w
		}
		u2lo, u2hi := ulo*ulo, uhi*uhi
		var dlo, dhi float64
		if sh.poles == 1 {
			dlo, dhi = 1+u2lo, 1+u2hi
		} else {
			alo, ahi := (1-u2lo)*(1-u2lo), (1-u2hi)*(1-u2hi)
			if alo > ahi {
				alo, ahi = ahi, alo
			}
			if u2lo <= 1 && 1 <= u2hi {
				alo = 0
			}
			dlo, dhi = alo+u2lo*iqlo, ahi+u2hi*iqhi
		}
		td := t.tdb[g]
		lo[k] = -10*math.Log10(dhi) - td
		hi[k] = -10*math.Log10(dlo) - td
	}
}

// jointNode is one box of the joint parameter space: a cell per section.
type jointNode struct {
	cells []cell
}

// region is the outcome of the joint search for one section.
type region struct {
	box box
	// lo, hi bound the section's deviation on the subset idx over every
	// kept cell (for the candidate filter).
	lo, hi []float64
}

// jointRegions runs the branch and bound for cascade error level B over
// the targets' domains. ok is false when a section has no proven domain
// (a 3-pole section) or the node budget ran out; none is empty when a
// section can take no value at all (no cascade reaches B).
func jointRegions(ts []*target, B float64, idx []int, stop func() bool) (regs []region, ok bool) {
	m := len(ts)
	if m > jointSections {
		return nil, false
	}
	for _, t := range ts {
		if !t.hasDom {
			return nil, false
		}
	}
	// The deviation bounds of a cell are needed by many nodes.
	type cellKey struct {
		s    int
		cell cell
	}
	cache := map[cellKey][]float64{}
	bounds := func(s int, c cell, lo, hi []float64) {
		k := cellKey{s, c}
		if v, ok := cache[k]; ok {
			copy(lo, v[:len(lo)])
			copy(hi, v[len(lo):])
			return
		}
		ts[s].devBounds(c, idx, lo, hi)
		if len(cache) < 1<<20 {
			cache[k] = append(append(make([]float64, 0, 2*len(lo)), lo...), hi...)
		}
	}
	n := len(idx)
	regs = make([]region, m)
	for s := range regs {
		regs[s].box = box{xlo: math.Inf(1), xhi: math.Inf(-1), ylo: math.Inf(1), yhi: math.Inf(-1)}
		regs[s].lo = make([]float64, n)
		regs[s].hi = make([]float64, n)
		for k := range regs[s].lo {
			regs[s].lo[k], regs[s].hi[k] = math.Inf(1), math.Inf(-1)
		}
	}
	root := jointNode{cells: make([]cell, m)}
	for s, t := range ts {
		d := t.dom
		c := cell{x0: d.xlo, x1: d.xhi}
		if t.sh.poles == 2 {
			c.y0, c.y1 = d.ylo, d.yhi
		}
		root.cells[s] = c
	}
	lo := make([][]float64, m)
	hi := make([][]float64, m)
	for s := range lo {
		lo[s], hi[s] = make([]float64, n), make([]float64, n)
	}
	keep := func(nd *jointNode) {
		for s := range nd.cells {
			c := nd.cells[s]
			r := &regs[s]
			r.box.xlo, r.box.xhi = math.Min(r.box.xlo, c.x0), math.Max(r.box.xhi, c.x1)
			r.box.ylo, r.box.yhi = math.Min(r.box.ylo, c.y0), math.Max(r.box.yhi, c.y1)
			for k := range idx {
				r.lo[k] = math.Min(r.lo[k], lo[s][k])
				r.hi[k] = math.Max(r.hi[k], hi[s][k])
			}
		}
	}
	// Two sections of the same topology can trade their values without
	// changing the cascade or its parts, so only the order in which the
	// realised Q follow the targets' Q is searched (the other order is
	// the same design).
	type pair struct{ lo, hi int }
	var ordered []pair
	for s := 0; s < m; s++ {
		for t := s + 1; t < m; t++ {
			if ts[s].topo == ts[t].topo && ts[s].sh.poles == 2 {
				if ts[s].q <= ts[t].q {
					ordered = append(ordered, pair{s, t})
				} else {
					ordered = append(ordered, pair{t, s})
				}
			}
		}
	}
	lim := B*(1+1e-9) + 1e-12
	stack := []jointNode{root}
	nodes := 0
	for len(stack) > 0 {
		nodes++
		if nodes > jointBudget || (nodes&1023 == 0 && stop()) {
			return nil, false
		}
		nd := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		swapped := false
		for _, p := range ordered {
			if math.Log(ts[p.lo].q)+nd.cells[p.lo].y0 > math.Log(ts[p.hi].q)+nd.cells[p.hi].y1 {
				swapped = true
				break
			}
		}
		if swapped {
			continue
		}
		for s := range ts {
			bounds(s, nd.cells[s], lo[s], hi[s])
		}
		pruned, inside := false, true
		var widest float64
		split := -1
		for k := 0; k < n; k++ {
			var sl, sh float64
			for s := 0; s < m; s++ {
				sl += lo[s][k]
				sh += hi[s][k]
			}
			if sl > lim || sh < -lim {
				pruned = true
				break
			}
			if sl < -lim || sh > lim {
				inside = false
			}
			for s := 0; s < m; s++ {
				if wd := hi[s][k] - lo[s][k]; wd > widest {
					widest, split = wd, s
				}
			}
		}
		if pruned {
			continue
		}
		// A node whose deviation sums all lie within B, or whose
		// intervals are already narrower than B, is kept whole: its
		// cells enlarge the rectangles by at most their own size.
		if inside || widest <= leafWidth*B || split < 0 {
			keep(&nd)
			continue
		}
		c := nd.cells[split]
		a, b := nd, nd
		a.cells = append([]cell(nil), nd.cells...)
		b.cells = append([]cell(nil), nd.cells...)
		if ts[split].sh.poles == 1 || c.x1-c.x0 >= c.y1-c.y0 {
			xm := 0.5 * (c.x0 + c.x1)
			if !(xm > c.x0 && xm < c.x1) {
				keep(&nd) // below float resolution
				continue
			}
			a.cells[split].x1, b.cells[split].x0 = xm, xm
		} else {
			ym := 0.5 * (c.y0 + c.y1)
			if !(ym > c.y0 && ym < c.y1) {
				keep(&nd)
				continue
			}
			a.cells[split].y1, b.cells[split].y0 = ym, ym
		}
		stack = append(stack, a, b)
	}
	for s := range regs {
		b := &regs[s].box
		if ts[s].sh.poles == 1 {
			if b.xlo <= b.xhi {
				b.ylo, b.yhi = math.Inf(-1), math.Inf(1)
			}
		}
		b.e2xhi, b.e2xlo = math.Exp(-2*b.xhi), math.Exp(-2*b.xlo)
		b.eyhi, b.eylo = math.Exp(b.yhi), math.Exp(b.ylo)
		b.exhi, b.exlo = math.Exp(-b.xhi), math.Exp(-b.xlo)
	}
	return regs, true
}

// enumerate returns every realisation of the section inside the fixed box
// that passes the quantity check and whose deviation, on the subset idx,
// lies where the other sections' regions leave room for a cascade error of
// at most B: at each point, within [-B - Σ hi_o, B - Σ lo_o].
func (s *sectionSearch) enumerate(workers int, b box, idx []int, allow [2][]float64, partner *onePole, w0In spans, B float64) ([]sectionCand, spans, bool) {
	s.fixed = &b
	defer func() { s.fixed = nil }()
	ws := make([]*worker, max(workers, 1))
	var wg sync.WaitGroup
	count := new(atomic.Int64)
	for i := range ws {
		ws[i] = &worker{s: s, list: newShortlist(s.k, math.Inf(1)), collect: true, idx: idx, allow: allow,
			partner: partner, bound: B, count: count, w0In: w0In}
		wg.Add(1)
		go func(w *worker, part int) {
			defer wg.Done()
			w.walk(part, len(ws))
		}(ws[i], i)
	}
	wg.Wait()
	var out []sectionCand
	var sp [][2]float64
	for _, w := range ws {
		if w.over {
			return nil, nil, false
		}
		out = append(out, w.all...)
		sp = append(sp, w.spans...)
	}
	sort.Slice(out, func(a, b int) bool { return out[a].less(&out[b]) })
	// The same assignment can be offered by two walks (a symmetric pair).
	k := 0
	for i := range out {
		if k > 0 && out[k-1].reals == out[i].reals {
			continue
		}
		out[k] = out[i]
		k++
	}
	return out[:k], mergeSpans(sp), true
}

// exactNodes bounds the combiner's nodes in the exact phase of a design.
const exactNodes = 20_000_000

// collectEvals bounds the assignments one worker scores in the exact
// phase of one section; beyond it the design is not proven exact.
const collectEvals = 1_000_000

// collectLimit bounds the candidates the exact phase collects for one
// section; beyond it the design is reported as not proven exact.
const collectLimit = 50_000

// onePole is the other section of a 1-pole + 2-pole design, for the exact
// test of a 2-pole candidate: is there any natural frequency of an ideal
// 1-pole section that brings the cascade within B?
type onePole struct {
	t *target
	// With a part budget, w0s[p] holds the sorted natural frequencies
	// of every realisable 1-pole of p parts (p = 2, 3), and maxParts the
	// budget of the whole design (0: none).
	w0s      [4][]float64
	maxParts int
}

// newOnePole prepares the partner test for the 1-pole target t.
func newOnePole(t *target, res, caps *valueSet, maxParts int) *onePole {
	p := &onePole{t: t, maxParts: maxParts}
	if maxParts == 0 {
		return p
	}
	for rn := 1; rn <= 2; rn++ {
		for cn := 1; cn <= 2; cn++ {
			if rn+cn > 3 {
				continue
			}
			for _, R := range res.sub[rn].vals {
				for _, C := range caps.sub[cn].vals {
					p.w0s[rn+cn] = append(p.w0s[rn+cn], 1/(R*C))
				}
			}
		}
	}
	for i := range p.w0s {
		sort.Float64s(p.w0s[i])
	}
	return p
}

// realisable reports whether a 1-pole of at most parts parts has its
// natural frequency in [lo, hi]; above 3 parts it answers true (the
// pairs are dense).
func (p *onePole) realisable(lo, hi float64, parts int) bool {
	if p.maxParts == 0 || parts >= 4 {
		return true
	}
	for q := 2; q <= parts && q < len(p.w0s); q++ {
		v := p.w0s[q]
		i := sort.SearchFloat64s(v, lo)
		if i < len(v) && v[i] <= hi {
			return true
		}
	}
	return false
}

// admits reports whether some 1-pole natural frequency w0 gives
// |dev(g) + d1(g; w0)| <= B at every grid point. The 1-pole's gain in dB
// at each frequency is monotone in w0, so each point allows an interval
// of w0, and the answer is whether the intervals meet.
func (p *onePole) admits(dev []float64, B float64) (lo, hi float64, ok bool) {
	t := p.t
	lo, hi = 0.0, math.Inf(1) // allowed range of w0 (rad/s)
	hp := t.sh.inverse
	for g, w := range t.grid.w {
		// The 1-pole's gain (dB) must lie in [vlo, vhi].
		vlo := -B - dev[g] + t.tdb[g] - 1e-9
		vhi := B - dev[g] + t.tdb[g] + 1e-9
		if vlo > 0 {
			return 0, 0, false // a unity-gain 1-pole never has gain above 0 dB
		}
		// Gain -10 lg(1 + u²) with u = w/w0 (low-pass) or w0/w
		// (high-pass): gain >= vlo  <=>  u <= ulim.
		ulim := math.Sqrt(math.Pow(10, -vlo/10) - 1)
		if hp {
			hi = math.Min(hi, ulim*w) // w0/w <= ulim
		} else {
			lo = math.Max(lo, w/ulim) // w/w0 <= ulim
		}
		if vhi < 0 {
			umin := math.Sqrt(math.Pow(10, -vhi/10) - 1) // gain <= vhi <=> u >= umin
			if hp {
				lo = math.Max(lo, umin*w)
			} else {
				hi = math.Min(hi, w/umin)
			}
		}
		if lo > hi*(1+1e-12) {
			return 0, 0, false
		}
	}
	return lo, hi, true
}

// spans is a union of closed intervals, sorted and disjoint.
type spans [][2]float64

func mergeSpans(in [][2]float64) spans {
	sort.Slice(in, func(a, b int) bool { return in[a][0] < in[b][0] })
	var out spans
	for _, v := range in {
		if n := len(out); n > 0 && v[0] <= out[n-1][1] {
			out[n-1][1] = math.Max(out[n-1][1], v[1])
			continue
		}
		out = append(out, v)
	}
	return out
}

func (s spans) contains(x float64) bool {
	i := sort.Search(len(s), func(i int) bool { return s[i][1] >= x })
	return i < len(s) && s[i][0] <= x
}

// collectOffer is offer in the exact phase: every assignment in the box
// that the filter admits is kept, with its deviation curve.
func (w *worker) collectOffer(n int, parts int8) {
	s := w.s
	w.evals++
	if w.evals > collectEvals {
		w.over = true
		return
	}
	num, den := s.t.topo.Coeffs(w.v[:n])
	for k, g := range w.idx {
		d := 10*math.Log10(synth.Gain2(num, den, s.t.topo.Poles(), s.t.grid.w[g])) - s.t.tdb[g]
		if d < w.allow[0][k] || d > w.allow[1][k] {
			return
		}
	}
	rows, qok := w.rowUse(n)
	if !qok {
		return
	}
	dev := make([]float64, len(s.t.grid.w))
	e := s.t.fullErr(num, den, dev)
	if e > s.ceiling {
		return // no section further off than the ceiling is part of a design
	}
	if w.partner != nil {
		lo, hi, ok := w.partner.admits(dev, w.bound)
		if !ok || !w.partner.realisable(lo*(1-1e-9), hi*(1+1e-9), w.partner.maxParts-int(parts)) {
			return
		}
		// A small relative margin: the 1-pole realisations are tested
		// against these spans, which must not lose one by rounding.
		w.spans = append(w.spans, [2]float64{lo * (1 - 1e-9), hi * (1 + 1e-9)})
	}
	if w.w0In != nil && !w.w0In.contains(1/(w.v[0]*w.v[1])) {
		return
	}
	if w.count.Add(1) > collectLimit {
		w.over = true
		return
	}
	var tol float64
	for i := 0; i < n; i++ {
		tol += realTolerance(s.t.topo.Element(i).Kind, w.realOf(i), s.rows)
	}
	w.all = append(w.all, sectionCand{err: e, parts: parts, reals: w.r, vals: w.v, rows: rows, tol: tol, dev: dev})
}

// proofBound is the cascade error B that the first candidate's key
// implies for any design that could rank before it: its error for the
// error ranking; for the balanced ranking the good-enough error when the
// first candidate is within it, else its error. The other rankings put no
// bound on the error.
//
// parts, when positive, bounds the part count of such a design: for the
// balanced ranking with a first candidate within the good-enough error,
// only designs with no more parts can rank before it.
func proofBound(top *topList, o Options) (B float64, parts int, ok bool) {
	best := math.Inf(1)
	var first *combo
	for _, c := range top.list {
		if c.meets {
			best = math.Min(best, c.err)
			if first == nil {
				first = c
			}
		}
	}
	if first == nil {
		return 0, 0, false
	}
	switch o.Rank {
	case RankError:
		return best, 0, true
	case RankBalanced:
		if first.err <= o.GoodEnough {
			return o.GoodEnough, first.parts, true
		}
		return best, 0, true
	}
	return 0, 0, false
}

// exactDesign runs the exact phase of design ji at bound B: it widens the
// design's lists to every realisation the joint regions admit and combines
// them again. It returns why the design is not proven, or "".
func (f *fitRun) exactDesign(d *synth.Design, ji int, B float64, maxParts int, lists [][][]sectionCand, closest **combo) string {
	ts := make([]*target, len(d.Sections))
	ideals := make([]*target, len(d.Sections))
	for i := range d.Sections {
		// With an amplifier the regions are those of the predistorted
		// targets, and the candidates are scored again with it (see
		// amp.go); the proof then holds for the predistorted targets only.
		ts[i], ideals[i] = ampTargets(&d.Sections[i], f.grid, f.o.Amp)
		ts[i].setDomain(f.res, f.caps)
		if !ts[i].hasDom {
			return "the proof covers unity-gain Sallen-Key and RC sections, not a " + d.Sections[i].Topology.Name() + " section"
		}
	}
	idx := ts[0].coarse()
	if len(ts) > jointSections {
		return fmt.Sprintf("designs of more than %d sections are combined from shortlists", jointSections)
	}
	regs, ok := jointRegions(ts, B, idx, f.stop.Load)
	if !ok {
		return "the joint bound of its sections needed too many boxes"
	}
	for _, rg := range regs {
		if rg.box.empty() {
			return "" // no values of the sections reach B: proven
		}
	}
	old := lists[ji]
	widened := make([][]sectionCand, len(ts))
	order := make([]int, len(ts))
	for i := range order {
		order[i] = i
	}
	// In a 1-pole + 2-pole design the 2-pole's candidates are tested
	// exactly against every 1-pole frequency; the frequencies they admit
	// then bound the 1-pole's candidates.
	var w0In spans
	onePoleOf := -1
	if len(ts) == 2 && ts[0].sh.poles != ts[1].sh.poles {
		onePoleOf = 0
		if ts[1].sh.poles == 1 {
			onePoleOf = 1
		}
		order[0], order[1] = 1-onePoleOf, onePoleOf
	}
	for _, s := range order {
		var allow [2][]float64
		allow[0], allow[1] = make([]float64, len(idx)), make([]float64, len(idx))
		for k := range idx {
			lo, hi := -B, B
			for o := range regs {
				if o != s {
					lo -= regs[o].hi[k]
					hi -= regs[o].lo[k]
				}
			}
			// A margin far above rounding: the filter must never drop an
			// assignment the bound admits.
			allow[0][k], allow[1][k] = lo-1e-9, hi+1e-9
		}
		ss := f.sectionSearch(ts[s], f.o.Shortlist)
		ss.evalBudget = 0
		if maxParts > 0 {
			// The other sections take at least one part per element.
			cap := maxParts
			for o := range ts {
				if o != s {
					cap -= ts[o].topo.NumElements()
				}
			}
			if cap < ts[s].topo.NumElements() {
				return "" // no design of this arrangement has few enough parts: proven
			}
			ss.partsCap = int8(min(cap, 127))
		}
		var partner *onePole
		var in spans
		b := regs[s].box
		switch {
		case onePoleOf >= 0 && s != onePoleOf:
			partner = newOnePole(ts[onePoleOf], f.res, f.caps, maxParts)
		case onePoleOf >= 0 && s == onePoleOf:
			if len(w0In) == 0 {
				return "" // no 2-pole candidate admits any 1-pole: proven
			}
			in = w0In
			b.xlo = math.Max(b.xlo, math.Log(w0In[0][0]/ts[s].w0))
			b.xhi = math.Min(b.xhi, math.Log(w0In[len(w0In)-1][1]/ts[s].w0))
			if b.empty() {
				return ""
			}
			b = hull(b, b) // refresh the exponentials
		}
		got, sp, ok := ss.enumerate(f.o.Workers, b, idx, allow, partner, in, B)
		if partner != nil {
			w0In = sp
		}
		if f.stop.Load() {
			return ""
		}
		if !ok {
			return fmt.Sprintf("section %d has more than %d candidates (or %d assignments to score per worker) within the proven region", s+1, collectLimit, collectEvals)
		}
		rescoreWithAmp(got, ideals[s], f.o.Amp)
		widened[s] = unionCands(old[s], got)
		sortForRank(widened[s], f.o.Rank)
	}
	// The design's combinations are searched again over the widened lists
	// (which contain the old ones).
	f.top.dropDesign(ji)
	if *closest != nil && (*closest).design == ji {
		*closest = nil
	}
	lists[ji] = widened
	cb := f.combineCapped(d, widened, ji, func(c *combiner) {
		c.capped, c.errCap, c.partsCap = true, B, maxParts
		c.budget = min(c.budget, exactNodes)
	})
	if cb.closest != nil && (*closest == nil || cb.closest.err < (*closest).err) {
		*closest = cb.closest
	}
	if cb.truncated {
		return "the cross-section search ran out of nodes"
	}
	if f.o.Amp != nil {
		return "with a finite gain-bandwidth the sections are bounded through their predistorted targets, which approximate the amplifier's effect"
	}
	return ""
}

// unionCands returns a and the candidates of b that a does not hold.
func unionCands(a, b []sectionCand) []sectionCand {
	seen := make(map[[maxElems]int32]bool, len(a))
	out := append([]sectionCand(nil), a...)
	for _, c := range a {
		seen[c.reals] = true
	}
	for _, c := range b {
		if !seen[c.reals] {
			seen[c.reals] = true
			out = append(out, c)
		}
	}
	return out
}

// leafWidth is the width of the deviation intervals, relative to B, below
// which a joint node is kept whole rather than split further.
var leafWidth = 1.0
