package tolerance

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/synth"
)

// Caution is the reminder every tolerance or op-amp report carries.
const Caution = "These are small-signal estimates: verify the circuit on the bench before production, " +
	"choose capacitor voltage ratings to suit the circuit, and have circuits for safety-relevant, " +
	"medical or mains-connected use reviewed by a qualified person under the applicable local rules."

// Figures are one board's figures: the nominal design's or a trial's.
type Figures struct {
	// PassAtten is the passband figure judged against Ap, dB: the largest
	// attenuation between DC (infinite frequency for a high-pass) and fp
	// relative to the passband gain, which for a monotonic response is the
	// attenuation at fp; for Chebyshev the ripple there (largest minus
	// smallest gain), since fp is the ripple-band edge and Ap the ripple.
	PassAtten float64 `json:"pass_atten_db"`
	// StopAtten is the least attenuation in the stopband (at fs), dB relative
	// to the passband gain; absent without a stopband.
	StopAtten *float64 `json:"stop_atten_db"`
	// Edge is the -3 dB frequency (the ripple-band edge for Chebyshev), Hz.
	Edge float64 `json:"edge_hz"`
	// Pass says whether the figures are inside the acceptance window.
	Pass bool `json:"passes"`
}

// Margins are acceptance windows that would give the target yield, dB.
type Margins struct {
	// Balanced widens both limits by the same amount.
	Balanced float64 `json:"balanced_db"`
	// PassOnly widens only the passband limit (stop margin as given);
	// absent when no passband margin suffices.
	PassOnly *float64 `json:"pass_only_db"`
	// StopOnly widens only the stopband limit (pass margin as given).
	StopOnly *float64 `json:"stop_only_db"`
}

// SectionSpread is the spread over the trials of one section's natural
// frequency (of the pair; of the pole for a 1-pole section) and Q.
type SectionSpread struct {
	Section int          `json:"section"` // 1-based
	F0      *Percentiles `json:"f0_spread_hz"`
	Q       *Percentiles `json:"q_spread"`
}

// Refit is the analysis of the design fitted again with its edge moved
// inside the specification.
type Refit struct {
	// Spec is the specification the design was fitted to (the acceptance is
	// still judged against the original).
	Spec synth.Spec `json:"-"`
	// Pass is where the new target reaches Ap (for Chebyshev where its
	// ripple band ends), Hz; Ripple the new Chebyshev ripple.
	Pass   float64 `json:"pass_hz"`
	Ripple float64 `json:"ripple_db"`
	// PassMargin and StopMargin are the new target's margins at fp and fs
	// (dB; synth.Placing).
	PassMargin float64             `json:"pass_margin_db"`
	StopMargin float64             `json:"stop_margin_db"`
	Yield      float64             `json:"fraction"`
	CILow      float64             `json:"ci_low"`
	CIHigh     float64             `json:"ci_high"`
	Candidate  *optimize.Candidate `json:"-"`
}

// EdgeKind says which edge frequency a yield analysis measures. Its value
// is the phrase printed and written to JSON.
type EdgeKind string

const (
	// EdgeHalfPower is the -3 dB frequency (Butterworth and Bessel).
	EdgeHalfPower EdgeKind = "-3 dB frequency"
	// EdgeRipple is the end of the ripple band (Chebyshev).
	EdgeRipple EdgeKind = "ripple-band edge"
)

// Result is a yield analysis. Every float is finite (the result encodes as
// JSON); optional figures are nil pointers or empty.
type Result struct {
	// Yield is the fraction of trials that pass; CILow and CIHigh its
	// Wilson 95 % confidence interval.
	Yield  float64 `json:"fraction"`
	CILow  float64 `json:"ci_low"`
	CIHigh float64 `json:"ci_high"`
	Trials int     `json:"trials"`
	Passed int     `json:"passed"`
	Seed   uint64  `json:"seed"`
	// Boards forecasts a batch (only when Options.Boards is set).
	Boards *Boards `json:"forecast"`
	Dist   Dist    `json:"dist"`
	// PassMargin and StopMargin are the acceptance window used (dB beyond
	// the spec's limits).
	PassMargin  float64 `json:"pass_margin_db"`
	StopMargin  float64 `json:"stop_margin_db"`
	TargetYield float64 `json:"target_yield"`
	// FailPassband and FailStopband count the trials outside each limit
	// (a trial may fail both).
	FailPassband int `json:"fail_passband"`
	FailStopband int `json:"fail_stopband"`
	// Nominal are the figures of the board with every part at its nominal
	// value.
	Nominal Figures `json:"nominal"`
	// EdgeKind names what Edge measures.
	EdgeKind  EdgeKind     `json:"edge_kind"`
	Edge      *Percentiles `json:"edge_spread_hz"`
	PassAtten *Percentiles `json:"pass_atten_spread_db"`
	StopAtten *Percentiles `json:"stop_atten_spread_db"`
	// Sections is the spread of each section's f0 and Q.
	Sections []SectionSpread `json:"sections"`
	// Blame lists each component's share of the failures, largest first;
	// Unattributed is the share no single component explains.
	Blame        []Blame `json:"blame"`
	Unattributed float64 `json:"unattributed"`
	// Needed is the acceptance window that would give the target yield
	// (nil when the target is met).
	Needed        *Margins             `json:"needed_margin"`
	WorstCase     *WorstCase           `json:"worst_case"`
	Sensitivities []SectionSensitivity `json:"sensitivities"`
	Remedies      []Remedy             `json:"remedies"`
	Refit         *Refit               `json:"refit"`
	// Advice and Warnings are sentences for people.
	Advice   []string `json:"advice"`
	Warnings []string `json:"warnings"`
}

// prepare checks the candidate, completes the specification from its design
// when spec is zero (or lacks the order), and builds the board model and the
// judge of every trial.
func prepare(c *optimize.Candidate, spec synth.Spec) (synth.Spec, *board, *judge, error) {
	if c == nil {
		return spec, nil, nil, fault.Invalidf("no design to analyse")
	}
	if spec.Pass == 0 && c.Design != nil {
		spec = c.Design.Spec
	}
	if spec.Order == 0 && spec.Stop == 0 && c.Design != nil {
		spec.Order = c.Design.Order
	}
	if err := spec.Normalize(); err != nil {
		return spec, nil, nil, err
	}
	b, err := newBoard(c)
	if err != nil {
		return spec, nil, nil, err
	}
	order := 0
	for _, s := range b.sections {
		order += s.topo.Poles()
	}
	return spec, b, newJudge(spec, b, order), nil
}

// Run estimates the yield of candidate c against spec by Monte Carlo.
//
// Every physical part is drawn independently within its stock row's
// tolerance (opt.Dist), series and parallel combinations are built from the
// drawn parts, the cascade is analysed exactly from the topologies' closed
// forms, and each trial is judged against the specification widened by the
// margins. A zero spec (Pass == 0) means the candidate's own design
// specification. Errors: fault.Invalid for bad options, a bad specification
// or a malformed candidate. With opt.Refit set, errors of the refit are
// reported as warnings, not returned. The simulation stops soon after ctx
// is done and Run then returns an error wrapping ctx.Err().
func Run(ctx context.Context, c *optimize.Candidate, spec synth.Spec, opt Options) (*Result, error) {
	if err := opt.normalize(); err != nil {
		return nil, err
	}
	opt.ctx = ctx
	if err := ctx.Err(); err != nil {
		return nil, interrupted(err)
	}
	spec, b, j, err := prepare(c, spec)
	if err != nil {
		return nil, err
	}
	if err := fitsMemory(opt.Trials, len(b.sections)); err != nil {
		return nil, err
	}
	tol := make([]float64, len(b.parts))
	for i, p := range b.parts {
		tol[i] = p.tol
	}

	r := &Result{Trials: opt.Trials, Seed: opt.Seed, Dist: opt.Dist, PassMargin: opt.PassMargin,
		StopMargin: opt.StopMargin, TargetYield: opt.TargetYield, EdgeKind: EdgeHalfPower,
		Advice: []string{}, Warnings: []string{}}
	if j.cheb {
		r.EdgeKind = EdgeRipple
	}
	ws := b.newWorkspace()
	ws.load(b.nominalParts())
	nm := j.measure(ws, true)
	r.Nominal = figures(j, nm, &opt)

	ts := simulate(b, j, tol, &opt, true, true)
	if opt.cancelled() {
		return nil, interrupted(ctx.Err())
	}
	r.Passed = ts.passed()
	r.Yield = float64(r.Passed) / float64(opt.Trials)
	r.CILow, r.CIHigh = Wilson(r.Passed, opt.Trials, z95)
	if opt.Boards > 0 {
		bf, err := ForecastBoards(r.Passed, opt.Trials, opt.Boards)
		if err != nil {
			return nil, err
		}
		r.Boards = &bf
	}
	for i := range ts.pass {
		if ts.passEx[i] > opt.PassMargin+judgeSlack {
			r.FailPassband++
		}
		if ts.stopEx[i] > opt.StopMargin+judgeSlack {
			r.FailStopband++
		}
	}
	r.Edge = percentiles(ts.edge)
	r.PassAtten = percentiles(ts.passAtt)
	if j.hasStop {
		r.StopAtten = percentiles(ts.stopAtt)
	}
	for si, s := range b.sections {
		sp := SectionSpread{Section: si + 1, F0: percentiles(ts.f0[si])}
		if s.topo.Poles() >= 2 {
			sp.Q = percentiles(ts.q[si])
		}
		r.Sections = append(r.Sections, sp)
	}
	r.Blame, r.Unattributed = blameTable(b, ts)
	if r.Blame == nil {
		r.Blame = []Blame{}
	}
	r.Sensitivities = sensitivities(b)
	if r.Yield < opt.TargetYield {
		r.Needed = neededMargins(ts, &opt)
	}
	lw, onLimit := limitWarnings(j, nm, ts, &opt)
	r.Warnings = append(r.Warnings, lw...)
	if w := unknownTolerances(b); w != "" {
		r.Warnings = append(r.Warnings, w)
	}

	refitNote := ""
	if !opt.Brief {
		r.WorstCase = corners(b, j, tol, &opt)
		// Better parts cannot help a nominal that sits on (or beyond) a
		// limit: about half the boards fail there whatever the tolerances.
		if r.Yield < opt.TargetYield && r.Nominal.Pass && !onLimit {
			r.Remedies = remedies(b, j, &opt, r.Blame, tol)
		}
		if opt.Refit != nil && r.Yield < opt.TargetYield && r.Nominal.Pass && c.Design != nil {
			r.Refit, err = refit(c, spec, opt)
			var ns noSlack
			switch {
			case errors.As(err, &ns):
				refitNote = fmt.Sprintf("Moving the edge inside the specification does not help here: %s.", ns)
			case err != nil:
				r.Warnings = append(r.Warnings, fmt.Sprintf("the design could not be fitted again with its edge moved inside the specification: %v", err))
			}
		}
	}
	if opt.cancelled() {
		return nil, interrupted(ctx.Err())
	}
	r.Advice = advice(r, j, onLimit, refitNote)
	return r, nil
}

// interrupted is the error of an analysis stopped by its context.
func interrupted(err error) error {
	return fmt.Errorf("the yield simulation was interrupted: %w", err)
}

// figures converts measured metrics into reported figures.
func figures(j *judge, m metrics, opt *Options) Figures {
	f := Figures{PassAtten: m.passAtt, Edge: m.edge}
	if math.IsNaN(f.Edge) {
		f.Edge = 0
	}
	if j.hasStop {
		a := m.stopAtt
		f.StopAtten = &a
	}
	f.Pass = accept(j.passExcess(m), j.stopExcess(m), opt)
	return f
}

// neededMargins finds, from the trials' excesses over the spec limits, the
// acceptance windows that would pass the target fraction of the boards.
func neededMargins(ts *trialSet, opt *Options) *Margins {
	n := len(ts.pass)
	need := int(math.Ceil(opt.TargetYield*float64(n) - 1e-9))
	need = max(1, min(need, n))
	u := make([]float64, n)
	for i := range u {
		u[i] = math.Max(ts.passEx[i], ts.stopEx[i])
	}
	sort.Float64s(u)
	m := &Margins{Balanced: math.Max(0, u[need-1])}
	// One limit widened, the other as given.
	only := func(ex, other []float64, otherMargin float64) *float64 {
		var v []float64
		for i := range ex {
			if other[i] <= otherMargin {
				v = append(v, ex[i])
			}
		}
		if len(v) < need {
			return nil
		}
		sort.Float64s(v)
		x := math.Max(0, v[need-1])
		return &x
	}
	m.PassOnly = only(ts.passEx, ts.stopEx, opt.StopMargin)
	m.StopOnly = only(ts.stopEx, ts.passEx, opt.PassMargin)
	return m
}

// limitWarnings says plainly when the nominal response sits on a limit or
// outside it; onLimit reports the first case.
func limitWarnings(j *judge, nm metrics, ts *trialSet, opt *Options) (w []string, onLimit bool) {
	n := float64(len(ts.pass))
	check := func(name, at string, nomEx float64, ex []float64, margin float64) {
		p := percentiles(ex)
		if p == nil {
			return
		}
		fails := 0
		for _, e := range ex {
			if e > margin+judgeSlack {
				fails++
			}
		}
		inside := margin - nomEx
		spread := p.P95 - p.P5
		switch {
		case inside < -judgeSlack:
			w = append(w, fmt.Sprintf("the nominal design fails the %s limit by %.3f dB at %s: no tolerance can fix that; %s of the trials fail there",
				name, -inside, at, pct(float64(fails)/n)))
		case inside < 0.1*spread:
			// Within a tenth of the 5-95 % spread: on the limit for all
			// practical purposes.
			onLimit = true
			w = append(w, fmt.Sprintf("the nominal response sits on the %s limit (%.3f dB inside it at %s, while tolerances spread it over %.2f dB, 5th to 95th percentile): %s of the boards fail there, and no single better part changes that",
				name, math.Max(0, inside), at, spread, pct(float64(fails)/n)))
		}
	}
	check("passband", fmt.Sprintf("fp %s", hz(j.fp)), j.passExcess(nm), ts.passEx, opt.PassMargin)
	if j.hasStop {
		check("stopband", fmt.Sprintf("fs %s", hz(j.fs)), j.stopExcess(nm), ts.stopEx, opt.StopMargin)
	}
	return w, onLimit
}

// advice turns the computed figures into sentences.
func advice(r *Result, j *judge, onLimit bool, refitNote string) []string {
	a := []string{}
	if r.Yield >= r.TargetYield {
		a = append(a, fmt.Sprintf("%s of the boards pass (95%% interval %s to %s), at or above the target %s.",
			pct(r.Yield), pct(r.CILow), pct(r.CIHigh), pct(r.TargetYield)))
		return a
	}
	a = append(a, fmt.Sprintf("%s of the boards pass (95%% interval %s to %s), below the target %s.",
		pct(r.Yield), pct(r.CILow), pct(r.CIHigh), pct(r.TargetYield)))
	if len(r.Blame) > 0 {
		top := r.Blame[0]
		a = append(a, fmt.Sprintf("%s of section %d causes the most failures (%s of them).", top.Ref, top.Section, pct(top.Share)))
	}
	for _, rm := range r.Remedies {
		if rm.Reaches {
			a = append(a, fmt.Sprintf("A %s part for %s of section %d (now %s) raises the yield to %s (computed with the same seed).",
				tolString(rm.To), rm.Ref, rm.Section, tolString(rm.From), pct(rm.Yield)))
		} else {
			a = append(a, fmt.Sprintf("Even a %s part for %s of section %d (now %s) gives only %s: other parts matter too.",
				tolString(rm.To), rm.Ref, rm.Section, tolString(rm.From), pct(rm.Yield)))
		}
	}
	if m := r.Needed; m != nil {
		s := fmt.Sprintf("To pass %s of the boards as they are, the acceptance window would need %.2f dB more at both limits",
			pct(r.TargetYield), m.Balanced)
		if m.PassOnly != nil {
			s += fmt.Sprintf(", or %.2f dB more at the passband limit alone", *m.PassOnly)
		}
		if m.StopOnly != nil && j.hasStop {
			s += fmt.Sprintf(", or %.2f dB less at the stopband limit alone", *m.StopOnly)
		}
		a = append(a, s+" (--pass-margin, --stop-margin).")
	}
	switch {
	case refitNote != "":
		a = append(a, refitNote)
	case onLimit && r.Refit == nil:
		a = append(a, "The nominal response sits on a specification limit: fit the design with its edge moved inside the specification (a slightly wider passband, or less ripple), or accept a wider window.")
	}
	if rf := r.Refit; rf != nil {
		what := fmt.Sprintf("its edge moved to %s", hz(rf.Pass))
		if rf.Ripple > 0 {
			what = fmt.Sprintf("its ripple reduced to %.3g dB, band ending at %s", rf.Ripple, hz(rf.Pass))
		}
		a = append(a, fmt.Sprintf("The same order fitted with its target placed inside the specification (%s; design margins %.2f dB at fp and %.2f dB at fs) passes %s of the boards (95%% interval %s to %s).",
			what, rf.PassMargin, rf.StopMargin, pct(rf.Yield), pct(rf.CILow), pct(rf.CIHigh)))
	}
	return a
}

// hz formats a frequency for messages, to 4 significant digits (see
// synth.FormatFrequency).
func hz(f float64) string { return synth.FormatFrequency(f, 4) }

// unknownTolerances names the positions whose parts have no tolerance in
// stock (stored as 0): they are simulated with DefaultTolerance.
func unknownTolerances(b *board) string {
	var refs []string
	seen := map[int]bool{}
	for _, p := range b.parts {
		if p.assumed && !seen[p.comp] {
			seen[p.comp] = true
			refs = append(refs, b.comps[p.comp].ref)
		}
	}
	if len(refs) == 0 {
		return ""
	}
	return fmt.Sprintf("%s: the stock gives no tolerance, so these parts are simulated with %s for capacitors and %s for resistors (common practice, no source); set the real tolerance in the stock (stock import with a tolerance column)",
		strings.Join(refs, ", "), tolString(DefaultCapacitorTolerance), tolString(DefaultResistorTolerance))
}
