package production

import (
	"context"
	"fmt"
	"math"
	"math/bits"
	"sort"
	"strings"

	"drawerfit/optimize"
	"drawerfit/stock"
)

// poolCand is one alternative of a group, prepared for the joint search.
type poolCand struct {
	c     *optimize.Candidate
	err   float64
	parts int // for all copies of the group on one board
	meets bool
	uses  []rowUse // per board, all copies
	set   []uint64 // bit set of the rows it uses
}

type rowUse struct {
	row int // index into jointSearch.qty
	n   int
}

// jointSearch chooses one alternative per group so that the board's
// figures are best: a depth-first branch and bound over the groups.
type jointSearch struct {
	plan    Plan
	groups  []*Group
	order   []int // group indexes in search order
	pools   [][]poolCand
	qty     []int   // per indexed row: quantity on hand
	ids     []int64 // per indexed row: stock id
	items   map[int64]stock.Item
	words   int   // length of the bit sets
	minRest []int // per search depth: the fewest parts the remaining groups add
	rank    ranker
	boards  int
	top     int
	budget  int

	// search state
	sets      [][]uint64 // per depth: the rows used so far
	usage     []int
	choice    []int
	nodes     int
	truncated bool
	ctx       context.Context
	halted    bool   // stopped by the context
	best      []leaf // the top list, sorted
	front     []leaf // the Pareto front, one leaf per distinct score
}

type leaf struct {
	s      score
	choice []int // per group (in group index order), the pool index
}

func newJointSearch(items []stock.Item, p Plan, groups []*Group, o PlanOptions) *jointSearch {
	js := &jointSearch{plan: p, groups: groups, items: map[int64]stock.Item{},
		rank: ranker{rank: o.Fit.Rank, goodEnough: o.Fit.GoodEnough}, boards: p.Boards, top: o.top(), budget: o.budget()}
	for _, it := range items {
		js.items[it.ID] = it
	}
	index := map[int64]int{}
	rowOf := func(id int64) int {
		if i, ok := index[id]; ok {
			return i
		}
		index[id] = len(js.ids)
		js.ids = append(js.ids, id)
		js.qty = append(js.qty, js.items[id].Quantity)
		return index[id]
	}
	for _, g := range groups {
		k := len(g.Members)
		var pool []poolCand
		for _, c := range g.Result.Candidates {
			if !c.MeetsSpec && !o.Fit.ShowFailing {
				continue
			}
			pc := poolCand{c: c, err: c.ResponseError, parts: k * c.PartCount, meets: c.MeetsSpec}
			for _, u := range c.StockUse {
				pc.uses = append(pc.uses, rowUse{row: rowOf(u.StockID), n: k * u.PerBoard})
			}
			pool = append(pool, pc)
		}
		js.pools = append(js.pools, pool)
	}
	js.words = (len(js.ids) + 63) / 64
	for gi := range js.pools {
		for ci := range js.pools[gi] {
			pc := &js.pools[gi][ci]
			pc.set = make([]uint64, js.words)
			for _, u := range pc.uses {
				pc.set[u.row/64] |= 1 << (u.row % 64)
			}
		}
	}
	// Small pools first: fewer branches near the root.
	for i := range groups {
		js.order = append(js.order, i)
	}
	sort.SliceStable(js.order, func(a, b int) bool { return len(js.pools[js.order[a]]) < len(js.pools[js.order[b]]) })
	js.minRest = make([]int, len(groups)+1)
	for d := len(groups) - 1; d >= 0; d-- {
		m := math.MaxInt32
		for _, pc := range js.pools[js.order[d]] {
			m = min(m, pc.parts)
		}
		if m == math.MaxInt32 {
			m = 0
		}
		js.minRest[d] = js.minRest[d+1] + m
	}
	return js
}

// allPools reports whether every group has at least one alternative.
func (js *jointSearch) allPools() bool {
	for _, p := range js.pools {
		if len(p) == 0 {
			return false
		}
	}
	return true
}

// run searches and returns the listed boards, best first.
//
// The search stops soon after ctx is done; it then returns ctx's error.
func (js *jointSearch) run(ctx context.Context) ([]*Board, error) {
	if len(js.groups) == 0 || !js.allPools() {
		return nil, ctx.Err()
	}
	js.ctx = ctx
	js.usage = make([]int, len(js.ids))
	js.choice = make([]int, len(js.groups))
	js.sets = make([][]uint64, len(js.groups)+1)
	for i := range js.sets {
		js.sets[i] = make([]uint64, js.words)
	}
	js.dfs(0, 0, 0, true)
	if js.halted {
		return nil, fmt.Errorf("the joint plan search was interrupted: %w", ctx.Err())
	}
	return js.boardsOut(), nil
}

func (js *jointSearch) dfs(depth int, errMax float64, parts int, meets bool) {
	set := js.sets[depth]
	js.nodes++
	if js.nodes > js.budget {
		js.truncated = true
		return
	}
	if js.nodes&1023 == 0 && js.ctx.Err() != nil {
		js.halted, js.truncated = true, true
	}
	if js.halted {
		return
	}
	unique := popcount(set)
	if depth == len(js.order) {
		js.addLeaf(score{meets: meets, err: errMax, parts: parts, unique: unique})
		return
	}
	lb := score{meets: meets, err: errMax, parts: parts + js.minRest[depth], unique: unique}
	if js.prunable(lb) {
		return
	}
	g := js.order[depth]
	next := js.sets[depth+1]
	for ci := range js.pools[g] {
		pc := &js.pools[g][ci]
		if !js.fits(pc) {
			continue
		}
		for _, u := range pc.uses {
			js.usage[u.row] += u.n
		}
		for w := range set {
			next[w] = set[w] | pc.set[w]
		}
		js.choice[g] = ci
		js.dfs(depth+1, math.Max(errMax, pc.err), parts+pc.parts, meets && pc.meets)
		for _, u := range pc.uses {
			js.usage[u.row] -= u.n
		}
		if js.truncated {
			return
		}
	}
}

// fits reports whether the stock still covers the batch with pc added.
func (js *jointSearch) fits(pc *poolCand) bool {
	for _, u := range pc.uses {
		if (js.usage[u.row]+u.n)*js.boards > js.qty[u.row] {
			return false
		}
	}
	return true
}

// prunable reports whether no completion of a partial board with lower
// bound lb can enter the top list or the Pareto front.
func (js *jointSearch) prunable(lb score) bool {
	if len(js.best) < js.top || js.rank.cmp(lb, js.best[len(js.best)-1].s) < 0 {
		return false
	}
	for _, f := range js.front {
		if dominates(f.s, lb) {
			return true
		}
	}
	return false
}

func (js *jointSearch) addLeaf(s score) {
	keep := func() []int { return append([]int(nil), js.choice...) }
	// Top list: insertion into a short sorted slice.
	if len(js.best) < js.top || js.rank.cmp(s, js.best[len(js.best)-1].s) < 0 {
		at := sort.Search(len(js.best), func(i int) bool { return js.rank.cmp(s, js.best[i].s) < 0 })
		js.best = append(js.best, leaf{})
		copy(js.best[at+1:], js.best[at:])
		js.best[at] = leaf{s: s, choice: keep()}
		if len(js.best) > js.top {
			js.best = js.best[:js.top]
		}
	}
	// Pareto front: one leaf per distinct score.
	kept := js.front[:0]
	for _, f := range js.front {
		if dominates(f.s, s) || sameScore(f.s, s) {
			return
		}
		if !dominates(s, f.s) {
			kept = append(kept, f)
		}
	}
	js.front = append(kept, leaf{s: s, choice: keep()})
}

func sameScore(a, b score) bool {
	return math.Abs(a.err-b.err) <= errEpsilon && a.parts == b.parts && a.unique == b.unique
}

// maxFrontListed bounds how many Pareto boards beyond the top list are
// listed (a long front of near-equal boards helps nobody; common
// practice, no source).
const maxFrontListed = 20

// boardsOut turns the top list and the front into boards, best first.
func (js *jointSearch) boardsOut() []*Board {
	seen := map[string]bool{}
	var out []*Board
	add := func(l leaf) {
		key := fmt.Sprint(l.choice)
		if seen[key] {
			return
		}
		seen[key] = true
		out = append(out, js.board(l))
	}
	for _, l := range js.best {
		add(l)
	}
	front := append([]leaf(nil), js.front...)
	sort.SliceStable(front, func(a, b int) bool { return js.rank.cmp(front[a].s, front[b].s) < 0 })
	for i, l := range front {
		if i >= maxFrontListed {
			break
		}
		add(l)
	}
	for _, b := range out {
		b.Pareto = true
		for _, f := range js.front {
			if dominates(f.s, b.score()) {
				b.Pareto = false
				break
			}
		}
	}
	sortBoards(out, js.rank)
	return out
}

func (js *jointSearch) board(l leaf) *Board {
	b := &Board{Filters: make([]*optimize.Candidate, len(js.plan.Filters)), WorstError: l.s.err,
		MeetsSpec: l.s.meets, PartCount: l.s.parts, UniqueParts: l.s.unique}
	use := map[int64]int{}
	var distinct []*optimize.Candidate
	for gi, g := range js.groups {
		pc := &js.pools[gi][l.choice[gi]]
		for _, m := range g.Members {
			b.Filters[m] = pc.c
		}
		distinct = append(distinct, pc.c)
		for _, u := range pc.uses {
			use[js.ids[u.row]] += u.n
		}
	}
	// The filters' sections share the packages of an amplifier row: count
	// the board's packages, not each filter's.
	d := &Design{}
	for _, c := range b.Filters {
		d.Filters = append(d.Filters, Filter{Candidate: c})
	}
	for _, ba := range d.BoardAmps() {
		id := ba.Amp.StockID
		if saved := use[id] - ba.Packages; saved > 0 {
			use[id] = ba.Packages
			b.PartCount -= saved
		}
	}
	b.StockUse = sortedUse(use)
	b.BoardsBuildable = buildable(b.StockUse, js.items)
	b.Shared = sharedRows(distinct)
	return b
}

// buildable is how many boards the rows' quantities cover.
func buildable(use []optimize.StockUse, items map[int64]stock.Item) int {
	best := math.MaxInt
	for _, u := range use {
		if u.PerBoard > 0 {
			best = min(best, items[u.StockID].Quantity/u.PerBoard)
		}
	}
	if best == math.MaxInt {
		return 0
	}
	return best
}

// limits explains an empty result: the filters nothing fits, or the rows
// that the filters' first choices together lack.
func (js *jointSearch) limits() []string {
	var out []string
	for gi, g := range js.groups {
		if len(js.pools[gi]) > 0 {
			continue
		}
		label := js.plan.Filters[g.Members[0]].Label
		what := "nothing in stock meets its specification"
		if len(g.Members) > 1 {
			what += fmt.Sprintf(" for %d copies on %d boards", len(g.Members), js.boards)
		}
		out = append(out, fmt.Sprintf("filter %q: %s", label, what))
		for _, l := range g.Result.Limits {
			out = append(out, fmt.Sprintf("filter %q: %s", label, l))
		}
	}
	if len(out) > 0 {
		return out
	}
	short := js.firstChoiceShortfall()
	var parts []string
	for _, r := range short {
		parts = append(parts, fmt.Sprintf("row %d (%s) needs %d, has %d", r.StockID, js.items[r.StockID].Label(), r.Needed, r.OnHand))
	}
	return []string{fmt.Sprintf("every filter can be built on its own, but no combination fits the stock for %d boards; the best choices together lack: %s",
		js.boards, strings.Join(parts, "; "))}
}

// firstChoiceShortfall is the shortfall of every group's first
// alternative taken together.
func (js *jointSearch) firstChoiceShortfall() []stock.ShortRow {
	need := map[int64]int{}
	for gi := range js.groups {
		if len(js.pools[gi]) == 0 {
			continue
		}
		for _, u := range js.pools[gi][0].uses {
			need[js.ids[u.row]] += u.n * js.boards
		}
	}
	var out []stock.ShortRow
	for id, n := range need {
		if have := js.items[id].Quantity; n > have {
			out = append(out, stock.ShortRow{StockID: id, Needed: n, OnHand: have})
		}
	}
	sort.Slice(out, func(a, b int) bool { return out[a].StockID < out[b].StockID })
	return out
}

func popcount(set []uint64) int {
	n := 0
	for _, w := range set {
		n += bits.OnesCount64(w)
	}
	return n
}
