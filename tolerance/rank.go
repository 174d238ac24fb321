package tolerance

import (
	"context"
	"fmt"
	"math"
	"sort"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// Estimate is a yield measured by Monte Carlo: the fraction of simulated
// boards that pass, its Wilson 95 % interval, and how it was drawn.
type Estimate struct {
	Fraction float64 `json:"fraction"`
	CILow    float64 `json:"ci_low"`
	CIHigh   float64 `json:"ci_high"`
	Trials   int     `json:"trials"`
	Passed   int     `json:"passed"`
	Seed     uint64  `json:"seed"`
}

func estimate(passed, trials int, seed uint64) Estimate {
	lo, hi := Wilson(passed, trials, z95)
	return Estimate{Fraction: float64(passed) / float64(trials), CILow: lo, CIHigh: hi, Trials: trials, Passed: passed, Seed: seed}
}

// Yield estimates candidate c's yield against spec by Monte Carlo with
// opt.Trials trials, and nothing else: no spreads, blame or advice. It
// passes exactly the trials Run passes with the same options. The warnings
// name parts simulated with a default tolerance. Errors as Run.
func Yield(ctx context.Context, c *optimize.Candidate, spec synth.Spec, opt Options) (Estimate, []string, error) {
	if err := opt.normalize(); err != nil {
		return Estimate{}, nil, err
	}
	opt.ctx = ctx
	if err := ctx.Err(); err != nil {
		return Estimate{}, nil, interrupted(err)
	}
	_, b, j, err := prepare(c, spec)
	if err != nil {
		return Estimate{}, nil, err
	}
	return yieldOf(b, j, &opt)
}

func yieldOf(b *board, j *judge, opt *Options) (Estimate, []string, error) {
	tol := make([]float64, len(b.parts))
	for i, p := range b.parts {
		tol[i] = p.tol
	}
	ts := simulate(b, j, tol, opt, false, false)
	if opt.cancelled() {
		return Estimate{}, nil, interrupted(opt.ctx.Err())
	}
	var warn []string
	if w := unknownTolerances(b); w != "" {
		warn = append(warn, w)
	}
	return estimate(ts.passed(), opt.Trials, opt.Seed), warn, nil
}

// DefaultScreenTrials is the number of trials of the screening estimate
// when RankOptions.ScreenTrials is 0: enough to tell 80 % from 95 % (the
// Wilson interval of 243/256 is 91.6 % to 97.0 %), at an eighth of the
// cost of the full Monte Carlo.
const DefaultScreenTrials = 256

// RankOptions control RankByYield.
type RankOptions struct {
	// Options are the Monte Carlo's (trials of the confirmation, seed,
	// distribution, acceptance margins, the target yield, workers).
	Options
	// ScreenTrials is the number of trials of the screening estimate
	// (0: DefaultScreenTrials; at most Options.Trials).
	ScreenTrials int
	// Top is how many candidates to list (0: all).
	Top int
	// Confirm is how many of the best screened candidates get the full
	// Monte Carlo (0: Top plus half as many again, so that a screening
	// estimate that was unlucky near the target is caught).
	Confirm int
	// Fit is the search FitByYield runs (nil: optimize.Fit); the fit with
	// amplifiers (optimize.FitAmps) plugs in here.
	Fit func(ctx context.Context, items []stock.Item, spec synth.Spec, fo optimize.Options) (*optimize.Result, error)
}

// Ranked is a listed candidate with its confirmed yield.
type Ranked struct {
	Candidate *optimize.Candidate
	// Yield is the full Monte Carlo estimate; Screen the screening one.
	Yield  Estimate
	Screen Estimate
	// Reaches says whether Yield.Fraction is at least the target.
	Reaches bool
	// Warnings name parts simulated with a default tolerance.
	Warnings []string
}

// Ranking is the outcome of RankByYield.
type Ranking struct {
	Listed []Ranked
	// Screened candidates were estimated with ScreenTrials trials each;
	// Confirmed of them (the best by the screening) with Trials.
	Screened, ScreenTrials, Confirmed, Trials int
	Seed                                      uint64
	Target                                    float64
	// PoolError is the response error (dB) within which the search kept
	// candidates by parts for the screening (0: not known, the candidates
	// were given).
	PoolError float64
}

// Method says in a sentence how the candidates were screened and ranked.
func (r *Ranking) Method() string {
	pool := ""
	if r.PoolError > 0 {
		pool = fmt.Sprintf(" (the search's best by parts among those within %.3g dB of the ideal response)", r.PoolError)
	}
	return fmt.Sprintf("by yield: those reaching the target %s first, by parts, unique parts, then yield; then the rest by yield. %d candidates%s screened with %d simulated boards each, the %d best confirmed with %d, the same random draws for every candidate",
		pct(r.Target), r.Screened, pool, r.ScreenTrials, r.Confirmed, r.Trials)
}

// RankByYield orders candidates by their simulated yield against spec:
// first the candidates whose yield reaches the target (opt.TargetYield),
// by part count, unique parts, then yield; then the rest by yield, part
// count and unique parts; ties keep the input order.
//
// Every candidate is screened with opt.ScreenTrials trials; the best
// opt.Confirm by the screening (those plausibly reaching the target, whose
// screening interval reaches it, ranked as above) get the full Monte Carlo
// with opt.Trials, and only confirmed candidates are listed. Every
// estimate uses the same random draws (trial i draws from the stream keyed
// by the seed and i), so candidates are compared under common random
// numbers and the result depends only on the seed and the trial counts,
// never on opt.Workers. Errors as Run; a malformed candidate is an error.
func RankByYield(ctx context.Context, cands []*optimize.Candidate, spec synth.Spec, opt RankOptions) (*Ranking, error) {
	if err := opt.Options.normalize(); err != nil {
		return nil, err
	}
	o := opt.Options
	o.ctx = ctx
	if opt.ScreenTrials == 0 {
		opt.ScreenTrials = DefaultScreenTrials
	}
	if opt.ScreenTrials < 1 {
		return nil, fault.Invalidf("the screening needs at least one trial, got %d", opt.ScreenTrials)
	}
	opt.ScreenTrials = min(opt.ScreenTrials, o.Trials)
	top := opt.Top
	if top <= 0 || top > len(cands) {
		top = len(cands)
	}
	confirm := opt.Confirm
	if confirm <= 0 {
		confirm = top + (top+1)/2
	}
	confirm = max(min(confirm, len(cands)), top)
	type entry struct {
		idx   int
		b     *board
		j     *judge
		r     Ranked
		plaus bool
	}
	es := make([]*entry, len(cands))
	screen := o
	screen.Trials = opt.ScreenTrials
	for i, c := range cands {
		if err := ctx.Err(); err != nil {
			return nil, interrupted(err)
		}
		_, b, j, err := prepare(c, spec)
		if err != nil {
			return nil, fmt.Errorf("candidate %d: %w", i+1, err)
		}
		est, warn, err := yieldOf(b, j, &screen)
		if err != nil {
			return nil, err
		}
		es[i] = &entry{idx: i, b: b, j: j, r: Ranked{Candidate: c, Screen: est, Warnings: warn}, plaus: est.CIHigh >= o.TargetYield}
	}
	order := func(reach func(e *entry) bool, y func(e *entry) Estimate) {
		sort.SliceStable(es, func(a, b int) bool {
			ea, eb := es[a], es[b]
			ra, rb := reach(ea), reach(eb)
			if ra != rb {
				return ra
			}
			ca, cb := ea.r.Candidate, eb.r.Candidate
			ya, yb := y(ea).Passed, y(eb).Passed
			if ra {
				if ca.PartCount != cb.PartCount {
					return ca.PartCount < cb.PartCount
				}
				if ca.UniqueParts != cb.UniqueParts {
					return ca.UniqueParts < cb.UniqueParts
				}
				if ya != yb {
					return ya > yb
				}
			} else {
				if ya != yb {
					return ya > yb
				}
				if ca.PartCount != cb.PartCount {
					return ca.PartCount < cb.PartCount
				}
				if ca.UniqueParts != cb.UniqueParts {
					return ca.UniqueParts < cb.UniqueParts
				}
			}
			return ea.idx < eb.idx
		})
	}
	order(func(e *entry) bool { return e.plaus }, func(e *entry) Estimate { return e.r.Screen })
	es = es[:confirm]
	for _, e := range es {
		est, _, err := yieldOf(e.b, e.j, &o)
		if err != nil {
			return nil, err
		}
		e.r.Yield = est
		e.r.Reaches = est.Fraction >= o.TargetYield
	}
	order(func(e *entry) bool { return e.r.Reaches }, func(e *entry) Estimate { return e.r.Yield })
	rk := &Ranking{Screened: len(cands), ScreenTrials: opt.ScreenTrials, Confirmed: confirm, Trials: o.Trials,
		Seed: o.Seed, Target: o.TargetYield}
	for _, e := range es[:top] {
		rk.Listed = append(rk.Listed, e.r)
	}
	return rk, nil
}

// PoolSize is how many candidates FitByYield asks the search for when top
// are to be listed: three times as many, at least 30, so that the ranking
// by yield chooses among more than it lists.
func PoolSize(top int) int { return max(3*top, 30) }

// poolErrorShare is the share of the target's smaller design margin that a
// candidate's response error may take and still count as good enough for
// the pool: fewest parts first among those (common practice, no source: a
// third leaves two thirds of the margin for the tolerances).
const poolErrorShare = 1.0 / 3

// poolGoodEnough is the response error (dB) within which the pool search
// ranks candidates by parts: the larger of good and a third of the
// smaller design margin the minimum order's target leaves (synth.Placing),
// so that candidates with fewer parts whose error the margins absorb are
// screened too.
func poolGoodEnough(spec synth.Spec, good float64) float64 {
	d, err := synth.NewDesign(spec, 0, synth.OddDefault)
	if err != nil {
		return good
	}
	m := d.Placing.PassMargin
	if !math.IsNaN(d.Placing.StopMargin) {
		m = math.Min(m, d.Placing.StopMargin)
	}
	return math.Max(good, poolErrorShare*m)
}

// FitByYield searches the stock for spec (optimize.Fit with fo, asking for
// PoolSize(fo.Top) candidates by the balanced ranking whose good-enough
// error is widened to a third of the target's smaller design margin) and
// lists the best fo.Top of them by RankByYield with ro (ro.Top is fo.Top). The result's candidates are
// the listed ones in yield order, with the Pareto marks of the listed set;
// a fit that finds nothing is returned as it is, with a nil ranking.
func FitByYield(ctx context.Context, items []stock.Item, spec synth.Spec, fo optimize.Options, ro RankOptions) (*optimize.Result, *Ranking, error) {
	top := fo.Top
	if top >= 1 { // optimize.Fit refuses a smaller list
		fo.Top = PoolSize(top)
	}
	fo.Rank = optimize.RankBalanced
	fo.GoodEnough = poolGoodEnough(spec, fo.GoodEnough)
	fit := ro.Fit
	if fit == nil {
		fit = optimize.Fit
	}
	res, err := fit(ctx, items, spec, fo)
	if err != nil {
		return nil, nil, err
	}
	// Candidates that miss the specification (--show-failing) are listed
	// after the ranked ones, as the search ordered them.
	var meet, miss []*optimize.Candidate
	for _, c := range res.Candidates {
		if c.MeetsSpec {
			meet = append(meet, c)
		} else {
			miss = append(miss, c)
		}
	}
	if len(meet) == 0 {
		if len(res.Candidates) > top {
			res.Candidates = res.Candidates[:top]
		}
		return res, nil, nil
	}
	ro.Top = top
	rk, err := RankByYield(ctx, meet, res.Spec, ro)
	if err != nil {
		return nil, nil, err
	}
	// The pool holds mostly the lowest order (it has the fewest parts).
	// When none of it reaches the target, the higher orders the fit
	// considered are searched on their own and ranked with it.
	if !rk.Listed[0].Reaches && spec.Order == 0 {
		lowest := res.Designs[0].Order
		seen := map[int]bool{}
		var more []int
		for _, d := range res.Designs {
			if d.Order > lowest && !seen[d.Order] {
				seen[d.Order] = true
				more = append(more, d.Order)
			}
		}
		for _, n := range more {
			s := spec
			s.Order = n
			o := fo
			o.MaxOrder = 0
			o.GoodEnough = poolGoodEnough(s, fo.GoodEnough)
			r2, err := optimize.Fit(ctx, items, s, o)
			if err != nil {
				return nil, nil, err
			}
			for _, c := range r2.Candidates {
				if c.MeetsSpec {
					meet = append(meet, c)
				}
			}
			res.Notes = append(res.Notes, fmt.Sprintf("no candidate of order %d reached the target yield, so order %d was searched on its own as well", lowest, n))
		}
		if len(more) > 0 {
			if rk, err = RankByYield(ctx, meet, res.Spec, ro); err != nil {
				return nil, nil, err
			}
		}
	}
	rk.PoolError = fo.GoodEnough
	res.Candidates = res.Candidates[:0]
	for _, r := range rk.Listed {
		res.Candidates = append(res.Candidates, r.Candidate)
	}
	for _, c := range miss {
		if len(res.Candidates) == top {
			break
		}
		res.Candidates = append(res.Candidates, c)
	}
	optimize.MarkPareto(res.Candidates)
	return res, rk, nil
}
