package cli

import (
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/report"
	"drawerfit/respplot"
	"drawerfit/stock"
	"drawerfit/synth"
	"drawerfit/tolerance"
)

// The checks fit runs on its listed candidates: the Monte Carlo yield
// (--yield, --rank yield), the op-amp model (--gbw, --dc-gain), the
// bias-current compensation resistors fitted from stock (--bias-resistor),
// the practical warnings (always), and the build sheet of the best
// candidate (--report, --png).

// fitCheckOptions are fit's flags for the checks and the build sheet.
type fitCheckOptions struct {
	yield     bool
	rankYield bool // --rank yield (the default): list the candidates by simulated yield
	// always: the yield of every listed candidate is always computed (fit),
	// so the tolerance flags need no --yield.
	always bool
	tol    yieldOptions
	report string
	png    string
	force  bool // replace existing output files
}

// toleranceOnlyFlags are the flags that mean nothing without --yield.
var toleranceOnlyFlags = []string{"trials", "seed", "dist", "pass-margin", "stop-margin", "target-yield"}

// addCheckFlags binds --yield and the tolerance and op-amp flags (fit and
// report share them).
func addCheckFlags(f *pflag.FlagSet, o *fitCheckOptions, yieldUsage string) {
	f.BoolVar(&o.yield, "yield", false, yieldUsage)
	f.BoolVar(&o.force, "force", false, forceHelp)
	addToleranceFlags(f, &o.tol)
	if fl := f.Lookup("bias-resistor"); fl != nil {
		fl.Usage = "fit from stock the bias-current compensation resistor of each follower (bipolar-input op-amps)"
	}
	if fl := f.Lookup("trials"); fl != nil {
		fl.Usage = "simulated boards per design (with --yield)"
	}
}

// addFitCheckFlags binds the checks' flags to fit and adds their help.
func addFitCheckFlags(cmd *cobra.Command, o *fitCheckOptions) {
	f := cmd.Flags()
	addCheckFlags(f, o, "simulate building every listed candidate from parts drawn within their stock tolerances and show the yield")
	f.StringVar(&o.report, "report", "", "write the best candidate's build sheet to this HTML file")
	f.StringVar(&o.png, "png", "", "also write the best candidate's plots as PNG files into this directory")
	cmd.Long += `

Checks. Every listed candidate shows its yield with its 95% Wilson interval
(parts uniform within their tolerance; --dist normal takes the tolerance as
3 sigma; the acceptance window widened by --pass-margin/--stop-margin), and
the best one its margins and the parts that cause most failures. --yield
adds the full analysis of the best: the worst-case corners, the computed
advice (what a tighter part or a wider acceptance window would give, and,
when its target sits on the edge, the same order fitted with its target
placed inside the specification) and, with --boards N, how many of the N
boards should pass.

--gbw FREQ (and --dc-gain DB, default 100) analyses every candidate with a
single-pole op-amp model and shows the response change it adds; a section
whose gain-bandwidth is below the rule of Op Amps for Everyone, section
16.8.4 (about 100·f0·Q), gets a warning. --bias-resistor fits, from the same
stock and within the quantities the candidate leaves for --boards, the
optional resistor from each follower's output to its - input that equals the
section's DC source resistance; it cancels the offset of a bipolar-input
op-amp's bias currents and does not change the response. Practical warnings
(resistors below 1 kΩ or above 470 kΩ, capacitors below 100 pF, class-2
ceramics; common practice) are shown for the best candidate and are in the
JSON of every candidate.

--report FILE.html writes the best candidate's build sheet: one
self-contained HTML page with the response plots (and the Monte Carlo
envelope with --yield), a schematic of every section, the parts list, the
pick list by bin, the warnings and the SPICE netlist. --png DIR also writes
the plots as PNG files.`
	cmd.Example += `

  # A greenhouse logger's 10 kHz anti-alias filter: how many of 40 boards pass,
  # with a 1 MHz op-amp, a bias resistor per stage and a printed build sheet
  drawerfit fit lowpass --pass 10k --stop 30k --atten 30 --stock sample-stock.csv \
    --boards 40 --yield --gbw 1M --bias-resistor --report logger-filter.html`
}

// prepareFitChecks checks the flags before the search starts, so that a
// mistake costs no fitting time.
func prepareFitChecks(f *pflag.FlagSet, o *fitOptions) error {
	c := &o.checks
	c.rankYield = strings.EqualFold(strings.TrimSpace(o.rank), "yield")
	c.always = o.plan == ""
	if o.plan != "" && (c.yield || c.tol.gbw != "" || c.tol.biasResistor || c.report != "" || c.png != "") {
		return fault.Invalidf("--yield, --gbw, --bias-resistor, --report and --png apply to a single filter, not to --plan")
	}
	if c.report != "" && strings.TrimSpace(c.report) == "" {
		return fault.Invalidf("--report needs a file name")
	}
	return c.validate(f)
}

// validate checks the check flags; f tells which were given.
func (c *fitCheckOptions) validate(f *pflag.FlagSet) error {
	c.tol.dcGainSet = f.Changed("dc-gain")
	if !c.yield && !c.always {
		for _, n := range toleranceOnlyFlags {
			if f.Changed(n) {
				return fault.Invalidf("--%s sets up the yield analysis: add --yield", n)
			}
		}
	}
	if c.yield || c.always {
		if c.tol.trials < 1 || c.tol.trials > tolerance.MaxTrials {
			return fault.Invalidf("--trials must be between 1 and %d, got %d", tolerance.MaxTrials, c.tol.trials)
		}
		if _, err := c.tol.tolOptions(); err != nil {
			return err
		}
	}
	_, err := c.opAmp()
	return err
}

// opAmp is the op-amp model of --gbw/--dc-gain (nil without --gbw), with a
// positive, finite gain-bandwidth.
func (c *fitCheckOptions) opAmp() (*synth.OpAmp, error) {
	op, err := c.tol.opAmp()
	if err != nil || op == nil {
		return op, err
	}
	if !(op.GBW > 0) || math.IsInf(op.GBW, 0) {
		return nil, fault.Invalidf("--gbw must be a positive frequency, got %q", c.tol.gbw)
	}
	return op, nil
}

// fitChecks holds what the checks found, per candidate.
type fitChecks struct {
	opts    *fitCheckOptions
	tolOpts tolerance.Options // the Monte Carlo's options
	spec    synth.Spec
	op      *synth.OpAmp
	byCan   map[*optimize.Candidate]*candidateChecks
}

// candidateChecks are one candidate's check results.
type candidateChecks struct {
	practical []string
	opAmp     *tolerance.OpAmpReport
	// est is the candidate's yield (the ranking's confirmed estimate), and
	// estWarn names parts simulated with a default tolerance.
	est     *tolerance.Estimate
	estWarn []string
	// yield is the analysis of the best candidate: the Monte Carlo with the
	// blame, and with --yield the corners and the advice.
	yield       *tolerance.Result
	yieldRank   int // 1 = highest yield among the listed candidates
	bias        []fittedBias
	biasProblem string // why bias resistors could not be computed
}

// fittedBias is a bias-current compensation resistor fitted from stock.
type fittedBias struct {
	tolerance.BiasResistor
	// Part is the stock combination chosen; Parts is empty when the stock
	// holds nothing usable.
	Part optimize.Component
}

// warnings are all of a candidate's warnings: practical, op-amp, yield.
func (cc *candidateChecks) warnings() []string {
	var w []string
	w = append(w, cc.practical...)
	if cc.opAmp != nil {
		w = append(w, cc.opAmp.Warnings...)
	}
	if cc.yield != nil {
		w = append(w, cc.yield.Warnings...)
	} else {
		w = append(w, cc.estWarn...)
	}
	if cc.biasProblem != "" {
		w = append(w, cc.biasProblem)
	}
	return w
}

func (fc *fitChecks) of(c *optimize.Candidate) *candidateChecks {
	if fc == nil {
		return nil
	}
	return fc.byCan[c]
}

// runFitChecks runs the checks on the listed candidates of run: the yield
// of every one (from the ranking, or estimated here for another --rank),
// the yield analysis of the best, the op-amp, bias and practical checks;
// and writes the build sheet and plots. It is called right after the
// search.
func runFitChecks(env *Env, o *fitOptions, run *fitRun) error {
	co := &o.checks
	op, err := co.opAmp()
	if err != nil {
		return err
	}
	fc := &fitChecks{opts: co, op: op, byCan: map[*optimize.Candidate]*candidateChecks{},
		tolOpts: run.rank.Options, spec: run.result.Spec}
	run.checks = fc
	res := run.result
	for _, c := range res.Candidates {
		if fc.byCan[c], err = co.check(c, res.Spec, op, run); err != nil {
			return err
		}
	}
	if err := fc.estimate(run); err != nil {
		return err
	}
	if len(res.Candidates) > 0 && res.Candidates[0].MeetsSpec {
		// The best candidate's analysis: the blame (which parts cause the
		// failures) and the nominal margins; with --yield also the corners,
		// the computed advice, the forecast for --boards and the refit. The
		// same seed gives it the same yield as in the ranking.
		best := res.Candidates[0]
		full := run.rank.Options
		full.Brief = !co.yield
		if co.yield {
			if o.boards > 1 {
				full.Boards = o.boards
			}
			full.Refit = refitFor(run, best)
		}
		r, err := tolerance.Run(run.context(), best, res.Spec, full)
		if err != nil {
			return fmt.Errorf("yield of the best candidate: %w", err)
		}
		fc.byCan[best].yield = r
	}
	if co.report != "" || co.png != "" {
		return writeFitSheet(env, o, run)
	}
	return nil
}

// estimate fills every listed candidate's yield: the ranking's confirmed
// estimates, or for another --rank the same Monte Carlo run here (the
// same options and draws), and its place by yield.
func (fc *fitChecks) estimate(run *fitRun) error {
	cands := run.result.Candidates
	if rk := run.ranking; rk != nil {
		for _, l := range rk.Listed {
			if cc := fc.byCan[l.Candidate]; cc != nil {
				y := l.Yield
				cc.est, cc.estWarn = &y, l.Warnings
			}
		}
	}
	for _, c := range cands {
		cc := fc.byCan[c]
		if cc.est != nil || !c.MeetsSpec {
			continue
		}
		y, warn, err := tolerance.Yield(run.context(), c, run.result.Spec, run.rank.Options)
		if err != nil {
			return fmt.Errorf("yield analysis: %w", err)
		}
		cc.est, cc.estWarn = &y, warn
	}
	rankByYield(cands, fc)
	return nil
}

// check runs the checks the options ask for on candidate c against spec:
// the practical warnings always, the op-amp check with op, the bias
// resistors fitted from run's stock, and the yield with topt.
func (co *fitCheckOptions) check(c *optimize.Candidate, spec synth.Spec, op *synth.OpAmp, run *fitRun) (*candidateChecks, error) {
	cc := &candidateChecks{}
	var err error
	if cc.practical, err = tolerance.Practical(c); err != nil {
		return nil, fmt.Errorf("practical checks: %w", err)
	}
	if op != nil {
		if cc.opAmp, err = tolerance.CheckOpAmp(c, spec, *op); err != nil {
			return nil, fmt.Errorf("op-amp check: %w", err)
		}
	}
	if co.tol.biasResistor {
		cc.bias, cc.biasProblem = fitBiasResistors(c, run)
	}
	return cc, nil
}

// rankByYield gives every candidate with a yield its place by yield: most
// passing trials first, ties in list order.
func rankByYield(cands []*optimize.Candidate, fc *fitChecks) {
	passed := func(c *optimize.Candidate) int {
		if e := fc.byCan[c].est; e != nil {
			return e.Passed
		}
		return -1
	}
	idx := make([]int, len(cands))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool {
		return passed(cands[idx[a]]) > passed(cands[idx[b]])
	})
	for place, i := range idx {
		fc.byCan[cands[i]].yieldRank = place + 1
	}
}

// refitFor is the refit of candidate c over run's stock and options: the
// default fit path (tolerance.Refitter).
func refitFor(run *fitRun, c *optimize.Candidate) tolerance.RefitFunc {
	if run.items == nil {
		return nil
	}
	return tolerance.Refitter(run.context(), run.items, run.opts, run.rankOptions(), c)
}

// fitBiasResistors computes each section's bias-current compensation
// resistor and takes the nearest realisable value from the resistor rows
// the search could use (optimize.Nearest), leaving the candidate's own parts
// for the batch. The second result explains a failure.
func fitBiasResistors(c *optimize.Candidate, run *fitRun) ([]fittedBias, string) {
	brs, err := tolerance.BiasResistors(c)
	if err != nil {
		return nil, fmt.Sprintf("bias-current compensation resistors: %v", err)
	}
	boards := max(run.opts.Boards, 1)
	used := map[int64]int{}
	for _, u := range c.StockUse {
		used[u.StockID] += u.PerBoard * boards
	}
	near := optimize.NewNearest(run.items, run.opts, used)
	out := make([]fittedBias, 0, len(brs))
	for i, b := range brs {
		fb := fittedBias{BiasResistor: b}
		fb.Part, _ = near.Take(b.Ohms)
		// The next free resistor designators of the board: one name per part.
		fb.Part.Ref = report.NextDesignator(c, "R", i)
		fb.Part.Symbol = ""
		fb.Part.Kind = synth.Resistor
		out = append(out, fb)
	}
	return out, ""
}

// printFitTable adds the checks' columns to the candidate table, renders
// it and explains the columns.
func (fc *fitChecks) printTable(env *Env, w io.Writer, g *grid, run *fitRun) {
	cands := run.result.Candidates
	if fc == nil || len(cands) == 0 {
		g.render(env, w)
		return
	}
	// The yield stays on a narrow terminal; its cell holds the interval.
	g.abbrev(g.addColumn("yield % (95% CI)", true, 0), "yield %")
	if fc.op != nil {
		g.abbrev(g.addColumn("op-amp dB", true, dropLater), "op dB")
		g.abbrev(g.addColumn("GBW rule", false, dropLast), "GBW")
	}
	warned := false
	for i, c := range cands {
		if i >= len(g.rows) {
			break
		}
		cc := fc.byCan[c]
		if cc == nil {
			continue
		}
		cell := "-"
		if e := cc.est; e != nil {
			cell = yieldCell(*e)
			if len(cc.estWarn) > 0 {
				cell += " !"
				warned = true
			}
		}
		g.rows[i] = append(g.rows[i], cell)
		if fc.op != nil && cc.opAmp != nil {
			low := 0
			for _, s := range cc.opAmp.Sections {
				if !s.OK {
					low++
				}
			}
			rule := "met"
			if low > 0 {
				rule = fmt.Sprintf("%d of %d below", low, len(cc.opAmp.Sections))
			}
			g.rows[i] = append(g.rows[i], formatDB(cc.opAmp.BandError, 3), rule)
		}
	}
	g.render(env, w)
	o := run.rank.Options
	how := "uniform within"
	if o.Dist == tolerance.Normal {
		how = "normal, tolerance = 3 sigma, about"
	}
	fmt.Fprintf(w, "\nyield %% = share of %d simulated boards that meet the specification (parts %s their stock tolerances, seed %d, the same draws for every candidate), its 95%% Wilson interval in brackets.\n",
		o.Trials, how, o.Seed)
	if warned {
		fmt.Fprintln(w, "'!' = some parts have no tolerance in stock and were simulated with a default (see the warning; all are in --json).")
	}
	if fc.op != nil {
		fmt.Fprintf(w, "op-amp dB = largest response change a single-pole op-amp of %s gain-bandwidth and %.0f dB DC gain adds; GBW rule = sections whose gain-bandwidth is below the rule of %s.\n",
			yieldHz(fc.op.GBW), 20*math.Log10(fc.op.DCGain), tolerance.GBWRuleSource)
	}
}

// printFitChecks writes the checks of candidate c (the best) below its
// detail.
func printFitChecks(env *Env, w io.Writer, run *fitRun, c *optimize.Candidate) {
	cc := run.checks.of(c)
	if cc == nil {
		return
	}
	if len(cc.bias) > 0 {
		fmt.Fprintln(w, "Bias-current compensation (for bipolar-input op-amps): one resistor per follower from its output to its - input, equal to the section's DC source resistance; it does not change the response")
		g := newGrid("ref", "section", "needs", "from", "value", "made of", "bins", "tolerance", "off by").right(1, 2, 4, 8)
		g.abbrev(1, "sec").abbrev(7, "tol").wrap(10, 5).optional(dropFirst, 3, 8).optional(dropLater, 2, 7)
		for _, b := range cc.bias {
			if len(b.Part.Parts) == 0 {
				g.add(b.Part.Ref, strconv.Itoa(b.Section), formatPart(b.Ohms, synth.Resistor), b.Path, "-", "nothing left in stock", "-", "-", "-")
				continue
			}
			var bins []string
			for _, p := range b.Part.Parts {
				bins = append(bins, orDash(p.Location))
			}
			g.add(b.Part.Ref, strconv.Itoa(b.Section), stock.FormatValuePrec(b.Ohms, stock.Resistor, 4), b.Path,
				formatPart(b.Part.Value, synth.Resistor), report.MadeOf(b.Part), strings.Join(bins, ", "),
				fmtTol(b.Part.Tolerance()), offBy(b.Part.Value, b.Ohms))
		}
		g.render(env, w)
	}
	if op := cc.opAmp; op != nil {
		fmt.Fprintf(w, "Op-amp: %s gain-bandwidth, %.0f dB DC gain (single-pole model): the response changes by up to %.3f dB (%.3f dB in the passband)\n",
			yieldHz(op.GBW), 20*math.Log10(op.DCGain), op.BandError, op.PassbandError)
		g := newGrid("section", "f0", "Q", "needs GBW", "ok", "change").right(0, 1, 2, 3, 5).optional(dropLater, 5)
		rules := []string{}
		seen := map[string]bool{}
		for _, s := range op.Sections {
			ok := "yes"
			if !s.OK {
				ok = "NO"
			}
			q := "-"
			if s.Q != 0 {
				q = strconv.FormatFloat(s.Q, 'f', 3, 64)
			}
			g.add(strconv.Itoa(s.Section), yieldHz(s.F0), q, yieldHz(s.RequiredGBW), ok, formatDB(s.ErrorDB, 3)+" dB")
			if !seen[s.Rule] {
				seen[s.Rule] = true
				rules = append(rules, s.Rule)
			}
		}
		g.render(env, w)
		fmt.Fprintf(w, "Rule used (%s): %s\n", op.Rule, strings.Join(rules, "; "))
	}
	if r := cc.yield; r != nil {
		fmt.Fprintf(w, "Yield: %s of %d simulated boards pass (95%% interval %s to %s), seed %d; %d fail at the passband limit, %d at the stopband limit\n",
			yieldPct(r.Yield), r.Trials, yieldPct(r.CILow), yieldPct(r.CIHigh), r.Seed, r.FailPassband, r.FailStopband)
		pm, sm := nominalMargins(r, run.result.Spec)
		margins := fmt.Sprintf("Margins of the board with nominal parts: %.2f dB at fp", pm)
		if sm != nil {
			margins += fmt.Sprintf(", %.2f dB at fs", *sm)
		}
		if r.PassAtten != nil {
			margins += fmt.Sprintf("; over the simulated boards the passband figure spans %.2f to %.2f dB (5th to 95th percentile, limit %.3g dB)",
				r.PassAtten.P5, r.PassAtten.P95, run.result.Spec.PassAtten)
		}
		fmt.Fprintln(w, margins)
		if b := r.Boards; b != nil {
			fmt.Fprintf(w, "Of %s built, expect about %.0f to pass (95%% range %d to %d)\n", plural(b.Built, "board"), b.Expected, b.Low, b.High)
		}
		var blame []string
		for _, b := range r.Blame {
			if b.Share < 0.005 || len(blame) == 3 {
				break
			}
			blame = append(blame, fmt.Sprintf("%s of section %d %s", b.Ref, b.Section, yieldPct(b.Share)))
		}
		switch {
		case len(blame) > 0:
			fmt.Fprintln(w, "Failures come mostly from: "+strings.Join(blame, ", "))
		case r.Passed < r.Trials:
			fmt.Fprintln(w, "No single part explains the failures: they come from several parts together.")
		}
		if fc := run.checks; fc.opts.yield {
			for _, a := range r.Advice {
				fmt.Fprintln(w, a)
			}
		}
	}
	for _, s := range cc.warnings() {
		fmt.Fprintln(w, "warning: "+s)
	}
}

// offBy writes how far v is from want, in percent.
func offBy(v, want float64) string {
	d := 100 * (v/want - 1)
	s := strconv.FormatFloat(d, 'f', 2, 64)
	if s == "-0.00" {
		s = "0.00"
	}
	if d > 0 && s != "0.00" {
		s = "+" + s
	}
	return s + "%"
}

// JSON of the checks, per candidate (omitted when not run).

type jsonYield struct {
	Fraction      float64 `json:"fraction"`
	CILow         float64 `json:"ci_low"`
	CIHigh        float64 `json:"ci_high"`
	Trials        int     `json:"trials"`
	Seed          uint64  `json:"seed"`
	Passed        int     `json:"passed"`
	Dist          string  `json:"dist"`
	PassMargin    float64 `json:"pass_margin_db"`
	StopMargin    float64 `json:"stop_margin_db"`
	TargetYield   float64 `json:"target_yield"`
	ReachesTarget bool    `json:"reaches_target"`
	RankByYield   int     `json:"rank_by_yield"`
	// Analysis is the best candidate's (the failures and their causes;
	// with --yield the corners and the advice).
	Analysis *jsonYieldAnalysis `json:"analysis"`
}

// jsonYieldAnalysis is the yield analysis of the best candidate.
type jsonYieldAnalysis struct {
	NominalPassMargin float64              `json:"nominal_pass_margin_db"`
	NominalStopMargin *float64             `json:"nominal_stop_margin_db"`
	FailPassband      int                  `json:"fail_passband"`
	FailStopband      int                  `json:"fail_stopband"`
	Blame             []tolerance.Blame    `json:"blame"`
	Unattributed      float64              `json:"unattributed"`
	Boards            *tolerance.Boards    `json:"forecast"`
	Needed            *tolerance.Margins   `json:"needed_margin"`
	WorstCase         *tolerance.WorstCase `json:"worst_case"`
	Refit             *tolerance.Refit     `json:"refit"`
	Advice            []string             `json:"advice"`
}

// jsonOpAmp is the op-amp check of one candidate.
type jsonOpAmp = tolerance.OpAmpReport

type jsonBias struct {
	Section     int           `json:"section"`
	Ref         string        `json:"ref"`
	TargetOhms  float64       `json:"target_ohms"`
	Path        string        `json:"path"`
	Value       float64       `json:"value"`
	Arrangement string        `json:"arrangement"`
	Tolerance   float64       `json:"tolerance"`
	Parts       []jsonPartUse `json:"parts"`
}

// fillJSON adds candidate c's check results to jc.
func (fc *fitChecks) fillJSON(jc *jsonCandidate, c *optimize.Candidate) {
	cc := fc.of(c)
	if cc == nil {
		return
	}
	jc.Warnings = append([]string{}, cc.warnings()...)
	jc.OpAmp = cc.opAmp
	if e := cc.est; e != nil {
		o := fc.tolOpts
		jy := &jsonYield{Fraction: e.Fraction, CILow: e.CILow, CIHigh: e.CIHigh, Trials: e.Trials, Seed: e.Seed,
			Passed: e.Passed, Dist: string(o.Dist), PassMargin: o.PassMargin, StopMargin: o.StopMargin,
			TargetYield: o.TargetYield, ReachesTarget: e.Fraction >= o.TargetYield, RankByYield: cc.yieldRank}
		if r := cc.yield; r != nil {
			pm, sm := nominalMargins(r, fc.spec)
			an := &jsonYieldAnalysis{NominalPassMargin: pm, NominalStopMargin: sm,
				FailPassband: r.FailPassband, FailStopband: r.FailStopband,
				Blame: r.Blame, Unattributed: r.Unattributed, Boards: r.Boards, Needed: r.Needed,
				WorstCase: r.WorstCase, Refit: r.Refit}
			if fc.opts.yield {
				an.Advice = r.Advice
			}
			if an.Blame == nil {
				an.Blame = []tolerance.Blame{}
			}
			jy.Analysis = an
		}
		jc.Yield = jy
	}
	for _, b := range cc.bias {
		jb := jsonBias{Section: b.Section, Ref: b.Part.Ref, TargetOhms: b.Ohms, Path: b.Path, Value: b.Part.Value,
			Parts: []jsonPartUse{}}
		if len(b.Part.Parts) > 0 {
			jb.Arrangement, jb.Tolerance = b.Part.Arrangement.String(), b.Part.Tolerance()
		}
		for _, p := range b.Part.Parts {
			jb.Parts = append(jb.Parts, jsonPartUse{StockID: p.StockID, Value: p.Value, Location: p.Location})
		}
		jc.BiasResistors = append(jc.BiasResistors, jb)
	}
}

// checkSheet is the build sheet of candidate c with its check results cc
// (nil: none) for a batch of boards, the parts taken from source.
func checkSheet(env *Env, c *optimize.Candidate, cc *candidateChecks, boards int, source string) *report.Sheet {
	s := &report.Sheet{Spec: report.SpecLine(c.Design), Boards: max(boards, 1), Date: env.Now(),
		StockDB: source, Candidate: c, Generator: "drawerfit"}
	if version != "" {
		s.Generator += " " + version
	}
	if c.Amp != nil {
		s.Amplifiers = sheetAmps(c)
		s.Netlist = candidateNetlist(c) // with the amplifier's subcircuit
	}
	if cc == nil {
		return s
	}
	s.Warnings = cc.warnings()
	if op := cc.opAmp; op != nil {
		s.Notes = append(s.Notes, fmt.Sprintf("Op-amp check: a single-pole op-amp of %s gain-bandwidth and %.0f dB DC gain changes the response by up to %.3f dB (%.3f dB in the passband); gain-bandwidth rule of %s.",
			yieldHz(op.GBW), 20*math.Log10(op.DCGain), op.BandError, op.PassbandError, op.Rule))
		s.Checks = append(s.Checks, opAmpCheck(op))
	}
	if len(cc.bias) > 0 {
		s.Notes = append(s.Notes, "Bias-current compensation resistors (optional, for bipolar-input op-amps): one per follower from its output to its - input, equal to the section's DC source resistance; they do not change the response.")
		for _, b := range cc.bias {
			s.BiasResistors = append(s.BiasResistors, report.BiasResistor{Section: b.Section, Component: b.Part, Ohms: b.Ohms, Path: b.Path})
		}
	}
	if r := cc.yield; r != nil {
		s.Yield = report.YieldFrom(r)
		s.Yield.Bands = []respplot.Band{report.Envelope(c, report.EnvelopeOptions{Trials: r.Trials, Seed: r.Seed, Normal: r.Dist == tolerance.Normal})}
	}
	return s
}

// opAmpCheck is the sheet's verdict of the op-amp model: failed when the
// design misses the specification with it or a section is below the
// gain-bandwidth rule.
func opAmpCheck(op *tolerance.OpAmpReport) report.Check {
	ch := report.Check{What: fmt.Sprintf("With the op-amp model (single pole, %s gain-bandwidth, %.0f dB DC gain)",
		yieldHz(op.GBW), 20*math.Log10(op.DCGain)), Status: report.CheckPassed}
	var below []string
	for _, s := range op.Sections {
		if !s.OK {
			below = append(below, strconv.Itoa(s.Section))
		}
	}
	if op.WithOpAmp.Pass {
		ch.Verdict = "meets the specification"
	} else {
		ch.Verdict, ch.Status = "does not meet the specification", report.CheckFailed
	}
	ch.Verdict += fmt.Sprintf(" (passband %.3g dB)", op.WithOpAmp.PassAtten)
	if len(below) > 0 {
		ch.Status = report.CheckFailed
		ch.Verdict += "; below the gain-bandwidth rule in section " + strings.Join(below, ", ")
	} else {
		ch.Verdict += "; gain-bandwidth rule met in every section"
	}
	return ch
}

// writeFitSheet writes --report and --png for the best candidate.
func writeFitSheet(env *Env, o *fitOptions, run *fitRun) error {
	if len(run.result.Candidates) == 0 {
		fmt.Fprintln(env.Err, "drawerfit: no candidate to write a build sheet for")
		return nil
	}
	c := run.result.Candidates[0]
	s := checkSheet(env, c, run.checks.of(c), o.boards, run.source)
	return writeSheetFiles(env, s, o.checks.report, o.checks.png, "", o.checks.force)
}

// writeSheetFiles writes the sheet to path (see Env.writeOutputFile; an
// existing file only with force) and its plots as PNG files into pngDir
// (created if needed); either may be empty.
func writeSheetFiles(env *Env, s *report.Sheet, path, pngDir, prefix string, force bool) error {
	if path != "" {
		// Render first, so that a failure leaves no file behind.
		b, err := report.HTML(s)
		if err != nil {
			return fmt.Errorf("build sheet: %w", err)
		}
		if err := env.writeOutputFile(path, force, func(w io.Writer) error { _, err := w.Write(b); return err }); err != nil {
			return err
		}
		if path != "-" {
			fmt.Fprintln(env.Err, "build sheet written to "+path)
		}
	}
	if pngDir != "" {
		if err := os.MkdirAll(pngDir, 0o755); err != nil {
			return fmt.Errorf("plot directory: %w", err)
		}
		files, err := report.WritePNGs(s, pngDir, prefix)
		if err != nil {
			return fmt.Errorf("plots: %w", err)
		}
		fmt.Fprintln(env.Err, "plots written to "+strings.Join(files, ", "))
	}
	return nil
}

// nominalMargins are the best board's margins with nominal parts: Ap minus
// its passband figure, and its attenuation at fs minus As (nil without a
// stopband), dB.
func nominalMargins(r *tolerance.Result, spec synth.Spec) (float64, *float64) {
	pm := spec.PassAtten - r.Nominal.PassAtten
	if r.Nominal.StopAtten == nil {
		return pm, nil
	}
	sm := *r.Nominal.StopAtten - spec.StopAtten
	return pm, &sm
}

// yieldCell writes a yield and its 95 % interval compactly, in percent
// with one decimal ("99.6 (99.2-99.8)"; 100 % as "100").
func yieldCell(e tolerance.Estimate) string {
	f := func(x float64) string {
		s := strconv.FormatFloat(100*x, 'f', 1, 64)
		if s == "100.0" {
			return "100"
		}
		return s
	}
	return f(e.Fraction) + " (" + f(e.CILow) + "-" + f(e.CIHigh) + ")"
}
