package production

import (
	"context"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// SuggestOptions controls the purchase suggestions.
type SuggestOptions struct {
	// Max is how many suggestions to return (0: 5).
	Max int
	// Trials is how many single additions get a full search (0: 6); the
	// screen orders them first.
	Trials int
	// Fit is the search SuggestFit runs (nil: optimize.Fit); the fit with
	// amplifiers (optimize.FitAmps) plugs in here, so that amplifier
	// packages are counted and can be what is short.
	Fit func(ctx context.Context, items []stock.Item, spec synth.Spec, o optimize.Options) (*optimize.Result, error)
}

func (o SuggestOptions) fit() func(context.Context, []stock.Item, synth.Spec, optimize.Options) (*optimize.Result, error) {
	if o.Fit != nil {
		return o.Fit
	}
	return optimize.Fit
}

func (o SuggestOptions) max() int {
	if o.Max > 0 {
		return o.Max
	}
	return 5
}

func (o SuggestOptions) trials() int {
	if o.Trials > 0 {
		return o.Trials
	}
	return 6
}

// Outcome is the best result of a search, as a suggestion compares it.
type Outcome struct {
	// Feasible is true when a design meets the specification and the stock
	// covers the boards asked for.
	Feasible bool
	// WorstError is the best design's (worst filter's) response error, dB;
	// +Inf when nothing can be built.
	WorstError  float64
	PartCount   int
	UniqueParts int
	// Uses is how many parts of each stock row the batch takes.
	Uses map[int64]int
	// Shortfall lists the rows the best design lacks when the stock does
	// not cover the batch (filled by the relaxed search of an infeasible
	// result).
	Shortfall []stock.ShortRow
}

func (o Outcome) score() score {
	return score{meets: o.Feasible, err: o.WorstError, parts: o.PartCount, unique: o.UniqueParts}
}

// Suggestion is one purchase and what it buys, measured by searching again
// with the purchase added to a copy of the stock.
type Suggestion struct {
	// Items are the parts to buy: one new row (ID 0), or more of existing
	// rows (their IDs) when the purchase closes a shortfall. Quantity is the
	// number to buy for the asked boards.
	Items []stock.Item
	// Before and After are the best results without and with the purchase.
	Before, After Outcome
}

// Cost is what the purchase costs: each item's quantity at its unit price.
// A new row's price is an estimate (newPart), so estimated is true when
// the purchase has one; the total is unknown when an item has no price.
func (s Suggestion) Cost() (total stock.Money, estimated bool) {
	var t stock.Tally
	for _, it := range s.Items {
		t.Add(it.Price, it.Quantity)
		if it.ID == 0 {
			estimated = true
		}
	}
	return t.Total(), estimated
}

// ClosesShortfall reports whether the purchase makes the batch buildable.
func (s Suggestion) ClosesShortfall() bool { return !s.Before.Feasible && s.After.Feasible }

// UniqueSaved is how many fewer distinct rows the best board uses (0 when
// the purchase does not save any or the batch was not buildable before).
func (s Suggestion) UniqueSaved() int {
	if !s.Before.Feasible || !s.After.Feasible {
		return 0
	}
	return max(0, s.Before.UniqueParts-s.After.UniqueParts)
}

// Buys says in a few words what the purchase buys.
func (s Suggestion) Buys() string {
	var out []string
	if s.ClosesShortfall() {
		out = append(out, "closes the shortfall")
	}
	if s.After.Feasible {
		if s.Before.Feasible && s.After.WorstError < s.Before.WorstError-errEpsilon {
			out = append(out, fmt.Sprintf("response error %.3f → %.3f dB", s.Before.WorstError, s.After.WorstError))
		} else {
			out = append(out, fmt.Sprintf("response error %.3f dB", s.After.WorstError))
		}
	}
	if n := s.UniqueSaved(); n > 0 {
		out = append(out, fmt.Sprintf("%d fewer unique %s", n, map[bool]string{true: "part", false: "parts"}[n == 1]))
	}
	if s.Before.Feasible && s.After.PartCount < s.Before.PartCount {
		n := s.Before.PartCount - s.After.PartCount
		out = append(out, fmt.Sprintf("%d fewer %s per board", n, map[bool]string{true: "part", false: "parts"}[n == 1]))
	}
	return strings.Join(out, "; ")
}

// searchFunc runs the search again on items; groups names the plan groups
// whose needs produced the addition (nil: all).
type searchFunc func(items []stock.Item, groups []int) (Outcome, error)

// trial is one purchase to test.
type trial struct {
	items  []stock.Item // new rows (fresh ids) and top-ups (their ids, Quantity = the addition)
	groups []int
	est    score // the screen's estimate, for ordering
}

// trialStock is a generous quantity for a new row during a trial, so that
// the search is limited by nothing but the value: 64 uses per board, more
// than any board of this tool has positions (common practice, no source).
const trialStock = 64

// suggestCore runs the trials and keeps those that improve on base.
func suggestCore(ctx context.Context, items []stock.Item, boards int, base Outcome, trials []trial, run searchFunc, r ranker, so SuggestOptions) ([]Suggestion, error) {
	var out []Suggestion
	for _, tr := range trials {
		if err := ctx.Err(); err != nil {
			return nil, fmt.Errorf("the purchase suggestions were interrupted: %w", err)
		}
		trialItems, ids := applyTrial(items, tr.items, boards)
		after, err := run(trialItems, tr.groups)
		if err != nil {
			return nil, err
		}
		if r.cmp(after.score(), base.score()) >= 0 {
			continue
		}
		sg := Suggestion{Before: base, After: after}
		useful := true
		for i, it := range tr.items {
			if it.ID == 0 {
				n := after.Uses[ids[i]]
				if n == 0 {
					useful = false
					break
				}
				it.Quantity = n
			}
			sg.Items = append(sg.Items, it)
		}
		if useful {
			out = append(out, sg)
		}
	}
	sort.SliceStable(out, func(a, b int) bool {
		if ca, cb := out[a].ClosesShortfall(), out[b].ClosesShortfall(); ca != cb {
			return ca
		}
		if c := r.cmp(out[a].After.score(), out[b].After.score()); c != 0 {
			return c < 0
		}
		return len(out[a].Items) < len(out[b].Items)
	})
	if len(out) > so.max() {
		out = out[:so.max()]
	}
	return out, nil
}

// applyTrial returns a copy of items with the additions: top-ups add their
// Quantity to the row, new rows get fresh ids and trialStock parts per
// board. ids holds each addition's row id.
func applyTrial(items []stock.Item, adds []stock.Item, boards int) ([]stock.Item, []int64) {
	out := append([]stock.Item(nil), items...)
	var next int64
	for _, it := range items {
		next = max(next, it.ID)
	}
	ids := make([]int64, len(adds))
	for i, a := range adds {
		if a.ID != 0 {
			for j := range out {
				if out[j].ID == a.ID {
					out[j].Quantity += a.Quantity
				}
			}
			ids[i] = a.ID
			continue
		}
		next++
		a.ID = next
		a.Quantity = min(stock.MaxQuantity, trialStock*boards)
		out = append(out, a)
		ids[i] = a.ID
	}
	return out, ids
}

// relaxed returns a copy of items where every row holds enough for any
// batch, to find the design the drawer would give if quantities were no
// limit.
func relaxed(items []stock.Item, boards int) []stock.Item {
	out := append([]stock.Item(nil), items...)
	for i := range out {
		out[i].Quantity = max(out[i].Quantity, min(stock.MaxQuantity, trialStock*boards))
	}
	return out
}

// preferredSeries are the IEC 60063 series a suggestion buys from: E24
// and E96 resistors, E6 and E12 capacitors (what small shops stock;
// common practice, no source).
func preferredSeries(k synth.PartKind) []stock.Series {
	if k == synth.Capacitor {
		return []stock.Series{stock.E6, stock.E12}
	}
	return []stock.Series{stock.E24, stock.E96}
}

func inPreferred(it stock.Item) bool {
	if !it.Kind.Passive() {
		return false
	}
	k := synth.Resistor
	if it.Kind == stock.Capacitor {
		k = synth.Capacitor
	}
	for _, s := range preferredSeries(k) {
		if s.Contains(it.Value) {
			return true
		}
	}
	return false
}

// candidateValues lists series values near the exact values a candidate
// needs: for every needed value the nearest member of each preferred
// series and the member on its other side, within the fit's range and not
// already a usable row.
func candidateValues(k synth.PartKind, need []float64, o optimize.Options, have map[float64]bool) []float64 {
	lo, hi := o.RMin, o.RMax
	if k == synth.Capacitor {
		lo, hi = o.CMin, o.CMax
	}
	seen := map[float64]bool{}
	var out []float64
	add := func(v float64) {
		v = roundSig(v)
		if v < lo*(1-1e-9) || v > hi*(1+1e-9) || seen[v] || have[v] {
			return
		}
		seen[v] = true
		out = append(out, v)
	}
	for _, v := range need {
		if !(v > 0) || math.IsInf(v, 0) {
			continue
		}
		for _, s := range preferredSeries(k) {
			n := s.Nearest(v)
			below, above := s.Neighbours(v)
			add(n)
			switch {
			case math.Abs(n-v) <= 1e-9*v:
				// A member is exactly what is needed.
			case n > v:
				add(below)
			default:
				add(above)
			}
		}
	}
	return out
}

// roundSig removes floating-point noise from a series value (3 or fewer
// significant digits in every IEC 60063 series up to E192): the nearest
// float64 to its three-digit decimal form.
func roundSig(v float64) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'e', 2, 64), 64)
	if err != nil {
		return v
	}
	return r
}

// usableValues returns the values of the rows a fit with o may use, by
// kind (ascending), keyed for lookups too.
func usableValues(items []stock.Item, o optimize.Options) (res, caps []float64, have map[synth.PartKind]map[float64]bool) {
	allowed := map[string]bool{}
	for _, d := range o.AllowDielectric {
		allowed[stock.NormalizeDielectric(d)] = true
	}
	have = map[synth.PartKind]map[float64]bool{synth.Resistor: {}, synth.Capacitor: {}}
	for _, it := range items {
		if !it.Kind.Passive() {
			continue
		}
		if it.Kind == stock.Capacitor {
			if !stock.SignalPathOK(it.Dielectric) && !allowed[stock.NormalizeDielectric(it.Dielectric)] {
				continue
			}
			if !have[synth.Capacitor][roundSig(it.Value)] {
				caps = append(caps, it.Value)
			}
			have[synth.Capacitor][roundSig(it.Value)] = true
			continue
		}
		if !have[synth.Resistor][roundSig(it.Value)] {
			res = append(res, it.Value)
		}
		have[synth.Resistor][roundSig(it.Value)] = true
	}
	sort.Float64s(res)
	sort.Float64s(caps)
	return res, caps, have
}

// newPart is the row a suggestion would add: the drawer's most common
// tolerance and package for the kind, C0G for capacitors. Its price is an
// estimate, the most common unit price of rows of the same kind, package
// and dielectric (unknown when none has one); a capacitor is rated at the
// most common rating of such rows that the fit's minimum voltage allows,
// else at that minimum.
func newPart(items []stock.Item, k synth.PartKind, v float64, o optimize.Options) stock.Item {
	it := newPartShape(items, k, v)
	prices, volts := map[int64]int{}, map[float64]int{}
	for _, r := range items {
		if r.Kind != it.Kind || r.Package != it.Package || stock.NormalizeDielectric(r.Dielectric) != it.Dielectric {
			continue
		}
		if r.Price.Known() {
			prices[r.Price.Micros()]++
		}
		if r.Voltage > 0 && r.Voltage >= o.MinVoltage {
			volts[r.Voltage]++
		}
	}
	if p, ok := mostCommon(prices); ok {
		it.Price = stock.MoneyFromMicros(p)
	}
	if it.Kind == stock.Capacitor {
		if vv, ok := mostCommon(volts); ok {
			it.Voltage = vv
		} else {
			it.Voltage = o.MinVoltage
		}
	}
	return it
}

func newPartShape(items []stock.Item, k synth.PartKind, v float64) stock.Item {
	kind := stock.Resistor
	tol := 0.01 // a 1 % metal-film resistor (common practice, no source)
	diel := ""
	if k == synth.Capacitor {
		kind, tol, diel = stock.Capacitor, 0.05, stock.C0G // 5 % C0G (common practice, no source)
	}
	tols, pkgs := map[float64]int{}, map[string]int{}
	for _, it := range items {
		if it.Kind == kind && (kind == stock.Resistor || stock.SignalPathOK(it.Dielectric)) {
			tols[it.Tolerance]++
			pkgs[it.Package]++
		}
	}
	if t, ok := mostCommon(tols); ok && t > 0 {
		tol = t
	}
	pkg, _ := mostCommon(pkgs)
	return stock.Item{Kind: kind, Value: v, Tolerance: tol, Package: pkg, Dielectric: diel, Note: "suggested purchase"}
}

func mostCommon[K comparable](m map[K]int) (K, bool) {
	var best K
	n := 0
	keys := make([]K, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(a, b int) bool { return fmt.Sprint(keys[a]) < fmt.Sprint(keys[b]) })
	for _, k := range keys {
		if m[k] > n {
			best, n = k, m[k]
		}
	}
	return best, n > 0
}

// newValueTrials screens the values near what the reference candidates
// need and returns the most promising as trials. refs[i] belongs to plan
// group groups[i] (nil groups for a single fit).
func newValueTrials(items []stock.Item, refs []*optimize.Candidate, groups []int, o optimize.Options, n int) []trial {
	r := ranker{rank: o.Rank, goodEnough: o.GoodEnough}
	resVals, _, have := usableValues(items, o)
	resVals = realisable(resVals, o)
	type cand struct {
		k      synth.PartKind
		v      float64
		est    score
		groups map[int]bool
	}
	byKey := map[string]*cand{}
	var all []*cand
	for ri, c := range refs {
		if c == nil {
			continue
		}
		sc := newScreen(c, resVals)
		needR, needC, exact := needed(c)
		for _, k := range []synth.PartKind{synth.Resistor, synth.Capacitor} {
			need := needR
			if k == synth.Capacitor {
				need = needC
			}
			for _, v := range candidateValues(k, need, o, have[k]) {
				key := fmt.Sprintf("%d/%g", k, v)
				est := sc.estimate(k, v, exact)
				cd, ok := byKey[key]
				if !ok {
					cd = &cand{k: k, v: v, est: est, groups: map[int]bool{}}
					byKey[key] = cd
					all = append(all, cd)
				}
				if r.cmp(est, cd.est) < 0 {
					cd.est = est
				}
				if groups != nil {
					cd.groups[groups[ri]] = true
				}
			}
		}
	}
	sort.SliceStable(all, func(a, b int) bool {
		if c := r.cmp(all[a].est, all[b].est); c != 0 {
			return c < 0
		}
		return all[a].v < all[b].v
	})
	// Half the trials for each kind: the screen's capacitor guesses are
	// rougher than its resistor guesses, so one list would starve them.
	var out []trial
	taken := map[synth.PartKind]int{}
	quota := map[synth.PartKind]int{synth.Resistor: (n + 1) / 2, synth.Capacitor: n / 2}
	// Values the screen finds no place for come last: a full search may
	// still use them (in a pair, say) when the budget allows.
	sort.SliceStable(all, func(a, b int) bool {
		return !math.IsInf(all[a].est.err, 1) && math.IsInf(all[b].est.err, 1)
	})
	for _, cd := range all {
		if taken[cd.k] >= quota[cd.k] {
			continue
		}
		taken[cd.k]++
		tr := trial{items: []stock.Item{newPart(items, cd.k, cd.v, o)}, est: cd.est}
		if groups != nil {
			for g := range cd.groups {
				tr.groups = append(tr.groups, g)
			}
			sort.Ints(tr.groups)
		}
		out = append(out, tr)
	}
	return out
}

// topUpTrial is the purchase that closes a shortfall: more of every short
// row the relaxed best design uses, where the row's value is a preferred
// series value or the row is an amplifier (more packages of the part the
// drawer has). It returns false when there is nothing to buy.
func topUpTrial(items []stock.Item, short []stock.ShortRow) (trial, bool) {
	byID := map[int64]stock.Item{}
	for _, it := range items {
		byID[it.ID] = it
	}
	var tr trial
	for _, r := range short {
		it, ok := byID[r.StockID]
		if !ok || !(inPreferred(it) || it.Kind == stock.OpAmp) {
			continue
		}
		it.Quantity = r.Needed - r.OnHand
		tr.items = append(tr.items, it)
	}
	return tr, len(tr.items) > 0
}

// shortOf lists the rows of uses (per batch) that items do not cover.
func shortOf(items []stock.Item, uses map[int64]int) []stock.ShortRow {
	var out []stock.ShortRow
	for _, it := range items {
		if n := uses[it.ID]; n > it.Quantity {
			out = append(out, stock.ShortRow{StockID: it.ID, Needed: n, OnHand: it.Quantity})
		}
	}
	sort.Slice(out, func(a, b int) bool { return out[a].StockID < out[b].StockID })
	return out
}

// fitOutcome is the best candidate of a fit for boards boards.
func fitOutcome(r *optimize.Result, boards int) (Outcome, *optimize.Candidate) {
	if len(r.Candidates) == 0 {
		return Outcome{WorstError: math.Inf(1)}, nil
	}
	c := r.Candidates[0]
	o := Outcome{Feasible: c.MeetsSpec, WorstError: c.ResponseError, PartCount: c.PartCount, UniqueParts: c.UniqueParts, Uses: map[int64]int{}}
	for _, u := range c.StockUse {
		o.Uses[u.StockID] = u.PerBoard * boards
	}
	if !o.Feasible {
		o.WorstError = math.Inf(1)
	}
	return o, c
}

// SuggestFit returns the few purchases that would most improve the fit
// res of spec on items with options o: values near those the best design
// needs (or, when the stock cannot cover o.Boards boards, the design the
// drawer would give without quantity limits), each tested by fitting
// again with the purchase added to a copy of the stock. Top-ups of short
// rows come as one suggestion.
func SuggestFit(ctx context.Context, items []stock.Item, spec synth.Spec, o optimize.Options, res *optimize.Result, so SuggestOptions) ([]Suggestion, error) {
	o.Progress = nil
	// Trials search only the order and arrangement of the reference
	// design, which halves their cost; a full fit can only do as well or
	// better, so what a suggestion claims stays true.
	tspec, topt := spec, o
	fit := so.fit()
	run := func(its []stock.Item, _ []int) (Outcome, error) {
		r, err := fit(ctx, its, tspec, topt)
		if err != nil {
			return Outcome{}, err
		}
		out, _ := fitOutcome(r, o.Boards)
		return out, nil
	}
	base, ref := fitOutcome(res, o.Boards)
	var trials []trial
	if !base.Feasible {
		r, err := fit(ctx, relaxed(items, o.Boards), spec, o)
		if err != nil {
			return nil, err
		}
		rel, rc := fitOutcome(r, o.Boards)
		if rc != nil {
			ref = rc
			base.Shortfall = shortOf(items, rel.Uses)
			if tr, ok := topUpTrial(items, base.Shortfall); ok {
				trials = append(trials, tr)
			}
		}
	}
	if ref == nil {
		ref = res.Closest
	}
	if ref != nil {
		tspec.Order = ref.Order()
		odd := ref.Design.Odd
		topt.Odd = &odd
		trials = append(trials, newValueTrials(items, []*optimize.Candidate{ref}, nil, o, so.trials())...)
	}
	return suggestCore(ctx, items, o.Boards, base, trials, run, ranker{rank: o.Rank, goodEnough: o.GoodEnough}, so)
}

// boardOutcome is the best board of a plan result.
func boardOutcome(pr *PlanResult) Outcome {
	if len(pr.Boards) == 0 || !pr.Boards[0].MeetsSpec {
		return Outcome{WorstError: math.Inf(1)}
	}
	b := pr.Boards[0]
	o := Outcome{Feasible: true, WorstError: b.WorstError, PartCount: b.PartCount, UniqueParts: b.UniqueParts, Uses: map[int64]int{}}
	for _, u := range b.StockUse {
		o.Uses[u.StockID] = u.PerBoard * pr.Plan.Boards
	}
	return o
}

// SuggestPlan is SuggestFit for a plan result pr of FitPlan(items, p, o):
// each addition is tested by fitting again the filters whose needs it
// came from and repeating the joint search over all filters.
func SuggestPlan(ctx context.Context, items []stock.Item, pr *PlanResult, o PlanOptions, so SuggestOptions) ([]Suggestion, error) {
	o.Progress = nil
	base := boardOutcome(pr)
	run := func(its []stock.Item, groups []int) (Outcome, error) {
		r, err := refitPlan(ctx, its, pr, o, groups)
		if err != nil {
			return Outcome{}, err
		}
		return boardOutcome(r), nil
	}
	var trials []trial
	var ref *Board
	if len(pr.Boards) > 0 {
		ref = pr.Boards[0]
	}
	if !base.Feasible {
		rel, err := refitPlan(ctx, relaxed(items, pr.Plan.Boards), pr, o, nil)
		if err != nil {
			return nil, err
		}
		if len(rel.Boards) > 0 {
			ref = rel.Boards[0]
			base.Shortfall = shortOf(items, filterUses(ref, pr.Plan.Boards))
			if tr, ok := topUpTrial(items, base.Shortfall); ok {
				trials = append(trials, tr) // nil groups: every filter is fitted again
			}
		}
	}
	if ref != nil {
		var refs []*optimize.Candidate
		var groups []int
		for gi, g := range pr.Groups {
			refs = append(refs, ref.Filters[g.Members[0]])
			groups = append(groups, gi)
		}
		trials = append(trials, newValueTrials(items, refs, groups, o.Fit, so.trials())...)
	}
	return suggestCore(ctx, items, pr.Plan.Boards, base, trials, run, ranker{rank: o.Fit.Rank, goodEnough: o.Fit.GoodEnough}, so)
}

// filterUses is what boards boards of b take from each row as the joint
// search counts it: every filter's own stock use, so amplifier packages
// the filters share on the board are counted per filter (the search's
// bound), which a top-up must cover.
func filterUses(b *Board, boards int) map[int64]int {
	uses := map[int64]int{}
	for _, c := range b.Filters {
		for _, u := range c.StockUse {
			uses[u.StockID] += u.PerBoard * boards
		}
	}
	return uses
}

// refitPlan repeats a plan's joint search on items, fitting again the
// groups listed (all when nil) and keeping the other groups' searches.
func refitPlan(ctx context.Context, items []stock.Item, pr *PlanResult, o PlanOptions, groups []int) (*PlanResult, error) {
	again := map[int]bool{}
	for _, g := range groups {
		again[g] = true
	}
	fits := map[string]*optimize.Result{}
	out := &PlanResult{Plan: pr.Plan, Split: pr.Split}
	for gi, g := range pr.Groups {
		ng := &Group{Members: g.Members, Spec: g.Spec, Result: g.Result}
		if groups == nil || again[gi] {
			r, err := fitGroup(ctx, items, pr.Plan, ng, o, fits)
			if err != nil {
				return nil, err
			}
			ng.Result = r
		}
		out.Groups = append(out.Groups, ng)
	}
	js := newJointSearch(items, pr.Plan, out.Groups, o)
	boards, err := js.run(ctx)
	if err != nil {
		return nil, err
	}
	out.Boards = boards
	out.Nodes = js.nodes
	return out, nil
}
