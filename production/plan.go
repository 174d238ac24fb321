package production

import (
	"context"
	"fmt"
	"sort"
	"strings"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// Plan describes one board: a name, how many boards a batch has, and the
// filters the board carries.
type Plan struct {
	Name    string
	Boards  int
	Filters []PlanFilter
}

// PlanFilter is one filter of a plan.
type PlanFilter struct {
	// Label names the filter on the board; labels are unique in a plan.
	Label string
	// Spec is the filter's specification (normalised by FitPlan).
	Spec synth.Spec
}

// MaxPlanFilters is the most filters a plan may have: a busy board of
// eight stereo channels, far beyond what the joint search is tuned for
// (common practice, no source).
const MaxPlanFilters = 16

// Validate checks the plan and normalises its specifications in place.
// Errors are fault.Invalid naming the filter.
func (p *Plan) Validate() error {
	if r := stock.TextProblem(p.Name, false); r != "" {
		return fault.Invalidf("plan name %s: %s", stock.Excerpt(p.Name, 40), r)
	}
	if p.Boards < 1 || p.Boards > stock.MaxQuantity {
		// The upper bound: every board takes parts from rows that hold
		// at most MaxQuantity, and it keeps boards times copies from
		// overflowing.
		return fault.Invalidf("plan %q: boards must be from 1 to %d, not %d", p.Name, stock.MaxQuantity, p.Boards)
	}
	if len(p.Filters) == 0 {
		return fault.Invalidf("plan %q has no filters", p.Name)
	}
	if len(p.Filters) > MaxPlanFilters {
		return fault.Invalidf("plan %q has %d filters; at most %d are supported", p.Name, len(p.Filters), MaxPlanFilters)
	}
	seen := map[string]int{}
	for i := range p.Filters {
		f := &p.Filters[i]
		f.Label = strings.TrimSpace(f.Label)
		if f.Label == "" {
			return fault.Invalidf("plan %q: filter %d has no label", p.Name, i+1)
		}
		if r := stock.TextProblem(f.Label, false); r != "" {
			return fault.Invalidf("plan %q: the label of filter %d, %s, %s", p.Name, i+1, stock.Excerpt(f.Label, 40), r)
		}
		if j, dup := seen[strings.ToLower(f.Label)]; dup {
			return fault.Invalidf("plan %q: filters %d and %d are both labelled %q", p.Name, j+1, i+1, f.Label)
		}
		seen[strings.ToLower(f.Label)] = i
		if err := f.Spec.Normalize(); err != nil {
			return fault.Invalidf("plan %q, filter %q: %v", p.Name, f.Label, err)
		}
	}
	return nil
}

// PlanOptions controls FitPlan.
type PlanOptions struct {
	// Fit is the template for every filter's search; its Boards and Top
	// are set by FitPlan (Boards from the plan times the filter's copies,
	// Top from Pool). Rank, GoodEnough and ShowFailing also order and
	// filter the board list.
	Fit optimize.Options
	// Pool is how many alternatives each distinct filter's search keeps
	// for the joint search (0: DefaultPool).
	Pool int
	// Top is how many board candidates to list besides the Pareto front
	// (0: Fit.Top).
	Top int
	// NodeBudget bounds the joint search (0: DefaultNodeBudget).
	NodeBudget int
	// Progress, when set, is called as the filters' searches finish.
	Progress func(done, total int)
	// FitFunc is each filter's search (nil: optimize.Fit); the fit with
	// amplifiers (optimize.FitAmps) plugs in here. The joint search counts
	// each filter's amplifier packages on their own (a bound that can only
	// over-count); the boards it lists count the packages the filters
	// share (Design.BoardAmps).
	FitFunc func(ctx context.Context, items []stock.Item, spec synth.Spec, o optimize.Options) (*optimize.Result, error)
}

// DefaultPool is the default number of alternatives per distinct filter.
// On the sample drawer a fit's list of 40 holds 50 to 65 distinct stock
// rows, and a list of 100 cost no more time than one of 10 (measured
// during development), so the pool is cheap; the joint search grows with
// its size to the power of the number of distinct filters.
const DefaultPool = 40

// DefaultNodeBudget bounds the joint search: a few seconds at the rate of
// the four-filter benchmark (114 000 partial boards in 25 ms on this
// project's machines).
const DefaultNodeBudget = 20_000_000

// Board is one board candidate: a candidate for every filter of the plan
// and the board's figures.
type Board struct {
	// Filters are parallel to the plan's filters; identical filters that
	// the stock allows to be built alike share one candidate.
	Filters []*optimize.Candidate
	// WorstError is the largest filter response error, dB.
	WorstError float64
	// MeetsSpec is true when every filter meets its specification.
	MeetsSpec bool
	// PartCount is the number of physical parts on one board.
	PartCount int
	// UniqueParts is the number of distinct stock rows one board uses.
	UniqueParts int
	// StockUse is how many parts of each row one board takes.
	StockUse []optimize.StockUse
	// BoardsBuildable is how many boards the stock covers.
	BoardsBuildable int
	// Pareto is true when no combination the joint search considered
	// beats the board in worst error, parts and unique parts at once.
	Pareto bool
	// Shared counts the stock rows that two or more distinct filters use.
	Shared int
}

func (b *Board) score() score {
	return score{meets: b.MeetsSpec, err: b.WorstError, parts: b.PartCount, unique: b.UniqueParts}
}

// Group is a set of identical filters of a plan, fitted once.
type Group struct {
	// Members are the indexes of the plan's filters in the group.
	Members []int
	// Spec is their common (normalised) specification.
	Spec synth.Spec
	// Result is the search of the group's filter, with Boards set to the
	// plan's boards times len(Members).
	Result *optimize.Result
}

// PlanResult is the outcome of FitPlan.
type PlanResult struct {
	Plan Plan
	// Boards are the board candidates, best first by the fit's ranking:
	// the Top best and every board of the Pareto front.
	Boards []*Board
	// Groups are the distinct filters and their searches.
	Groups []*Group
	// Split is true when the stock could not build identical filters
	// alike, so that each copy was fitted on its own.
	Split bool
	// Limits say what stopped the plan when no board could be built.
	Limits []string
	// Notes are remarks on the search.
	Notes []string
	// Nodes counts the joint search's partial boards.
	Nodes int
}

// FitPlan fits every filter of p to the stock items jointly: one search
// (optimize.Fit) per distinct filter, keeping Pool alternatives each, then
// a branch-and-bound over their combinations in which quantities are
// shared by all filters and all boards, and the board's distinct stock
// rows are counted once. Identical filters are one filter used several
// times, so they come out identical; only when no board can be built that
// way are the copies fitted separately (PlanResult.Split).
//
// Errors: fault.Invalid for a bad plan or options, fault.Infeasible when
// the stock cannot be searched at all. A plan that no stock combination
// can build is a result without boards and with Limits. The search stops
// soon after ctx is done and then returns an error wrapping ctx.Err().
func FitPlan(ctx context.Context, items []stock.Item, p Plan, o PlanOptions) (*PlanResult, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	if o.Fit.Rank == optimize.RankCost {
		// The joint search bounds boards by error, parts and unique parts
		// only; ranking whole boards by cost is not built.
		return nil, fault.Invalidf("a board plan cannot be ranked by cost; rank it balanced, by error, parts or unique parts (each filter's candidates still show their cost)")
	}
	fits := map[string]*optimize.Result{}
	pr := &PlanResult{Plan: p}
	groups := groupFilters(p)
	done := 0
	for _, g := range groups {
		r, err := fitGroup(ctx, items, p, g, o, fits)
		if err != nil {
			return nil, err
		}
		g.Result = r
		done++
		if o.Progress != nil {
			o.Progress(done, len(groups))
		}
	}
	js := newJointSearch(items, p, groups, o)
	boards, err := js.run(ctx)
	if err != nil {
		return nil, err
	}
	pr.Nodes = js.nodes
	if len(boards) == 0 && anyShared(groups) {
		// The stock cannot build the copies alike: fit each on its own.
		split, err := splitGroups(ctx, items, p, groups, o, fits)
		if err != nil {
			return nil, err
		}
		js2 := newJointSearch(items, p, split, o)
		b2, err := js2.run(ctx)
		if err != nil {
			return nil, err
		}
		if len(b2) > 0 {
			boards, groups, js = b2, split, js2
			pr.Split = true
			pr.Notes = append(pr.Notes, "the stock cannot build identical filters alike for this many boards; their copies use different parts")
		}
		pr.Nodes += js2.nodes
	}
	pr.Groups = groups
	pr.Boards = boards
	if js.truncated {
		pr.Notes = append(pr.Notes, fmt.Sprintf("the joint search stopped after %d partial boards; the list may miss some boards", js.nodes))
	}
	if len(boards) == 0 {
		pr.Limits = js.limits()
	}
	return pr, nil
}

// splitGroups makes one group per filter. The first copy of a set of
// identical filters is fitted to the stock; each further copy to the
// stock that the earlier copies' best candidates leave, and it may also
// take the first copy's alternatives, so that the copies find different
// rows when the drawer holds the same value in several bins.
func splitGroups(ctx context.Context, items []stock.Item, p Plan, groups []*Group, o PlanOptions, cache map[string]*optimize.Result) ([]*Group, error) {
	out := make([]*Group, len(p.Filters))
	for _, g := range groups {
		left := append([]stock.Item(nil), items...)
		var first *optimize.Result
		for j, m := range g.Members {
			one := &Group{Members: []int{m}, Spec: g.Spec}
			var r *optimize.Result
			var err error
			if j == 0 {
				r, err = fitGroup(ctx, left, p, one, o, cache)
				first = r
			} else {
				r, err = fitGroup(ctx, left, p, one, o, map[string]*optimize.Result{})
				if err == nil {
					merged := *r
					merged.Candidates = append(append([]*optimize.Candidate(nil), r.Candidates...), first.Candidates...)
					r = &merged
				}
			}
			if err != nil {
				return nil, err
			}
			one.Result = r
			out[m] = one
			if len(r.Candidates) > 0 {
				take(left, r.Candidates[0].StockUse, p.Boards)
			}
		}
	}
	return out, nil
}

// take lowers the quantities of items by what boards boards of use need
// (not below zero).
func take(items []stock.Item, use []optimize.StockUse, boards int) {
	for _, u := range use {
		for i := range items {
			if items[i].ID == u.StockID {
				items[i].Quantity = max(0, items[i].Quantity-u.PerBoard*boards)
			}
		}
	}
}

// fitGroup runs the search of one group, reusing an identical earlier one.
func fitGroup(ctx context.Context, items []stock.Item, p Plan, g *Group, o PlanOptions, cache map[string]*optimize.Result) (*optimize.Result, error) {
	fo := o.Fit
	fo.Boards = p.Boards * len(g.Members)
	fo.Top = o.pool()
	fo.Progress = nil
	key := fmt.Sprintf("%+v/%d", g.Spec, fo.Boards)
	if r, ok := cache[key]; ok {
		return r, nil
	}
	fit := o.FitFunc
	if fit == nil {
		fit = optimize.Fit
	}
	r, err := fit(ctx, items, g.Spec, fo)
	if fault.KindOf(err) == fault.Infeasible {
		// Nothing usable for this many copies and boards: an empty pool,
		// which the joint search reports (and may split the copies).
		r, err = &optimize.Result{Spec: g.Spec, Limits: []string{err.Error()}}, nil
	}
	if err != nil {
		return nil, fmt.Errorf("filter %q: %w", p.Filters[g.Members[0]].Label, err)
	}
	cache[key] = r
	return r, nil
}

func (o PlanOptions) pool() int {
	if o.Pool > 0 {
		return o.Pool
	}
	return DefaultPool
}

func (o PlanOptions) top() int {
	if o.Top > 0 {
		return o.Top
	}
	if o.Fit.Top > 0 {
		return o.Fit.Top
	}
	return 10
}

func (o PlanOptions) budget() int {
	if o.NodeBudget > 0 {
		return o.NodeBudget
	}
	return DefaultNodeBudget
}

// groupFilters puts filters with equal specifications together, in order
// of first appearance.
func groupFilters(p Plan) []*Group {
	var out []*Group
	for i, f := range p.Filters {
		found := false
		for _, g := range out {
			if g.Spec == f.Spec {
				g.Members = append(g.Members, i)
				found = true
				break
			}
		}
		if !found {
			out = append(out, &Group{Members: []int{i}, Spec: f.Spec})
		}
	}
	return out
}

func anyShared(gs []*Group) bool {
	for _, g := range gs {
		if len(g.Members) > 1 {
			return true
		}
	}
	return false
}

// Design turns a board into a design to save, with the plan's name and
// labels; rank is its place in the list (1 = best).
func (pr *PlanResult) Design(b *Board, rank int, s Settings) *Design {
	d := &Design{Name: pr.Plan.Name, Boards: pr.Plan.Boards, Rank: rank, Pareto: b.Pareto, Settings: s}
	for i, c := range b.Filters {
		f := pr.Plan.Filters[i]
		d.Filters = append(d.Filters, Filter{Label: f.Label, Spec: f.Spec, Candidate: c})
	}
	return d
}

// Board returns the board figures of a saved design: its filters'
// candidates, worst error, parts, unique rows, stock use, the rows shared
// by distinct filters (as the joint search counts them) and the boards the
// stock items cover.
func (d *Design) Board(items []stock.Item) *Board {
	b := &Board{WorstError: d.WorstError(), MeetsSpec: d.MeetsSpec(), PartCount: d.PartCount(),
		UniqueParts: d.UniqueParts(), StockUse: d.StockUse(), BoardsBuildable: d.BoardsBuildable(items), Pareto: d.Pareto}
	for _, f := range d.Filters {
		b.Filters = append(b.Filters, f.Candidate)
	}
	b.Shared = sharedRows(b.Filters)
	return b
}

// sharedRows counts rows used by two or more distinct candidates.
func sharedRows(cs []*optimize.Candidate) int {
	users := map[int64]map[*optimize.Candidate]bool{}
	for _, c := range cs {
		for _, u := range c.StockUse {
			if users[u.StockID] == nil {
				users[u.StockID] = map[*optimize.Candidate]bool{}
			}
			users[u.StockID][c] = true
		}
	}
	n := 0
	for _, m := range users {
		if len(m) > 1 {
			n++
		}
	}
	return n
}

// sortBoards orders boards by the ranking, ties by their filters' choice
// so that the order never depends on the search's order.
func sortBoards(bs []*Board, r ranker) {
	sort.SliceStable(bs, func(a, b int) bool { return r.cmp(bs[a].score(), bs[b].score()) < 0 })
}
