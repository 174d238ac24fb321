package cli

import (
	"context"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/report"
	"drawerfit/stock"
	"drawerfit/synth"
	"drawerfit/tolerance"
)

// fitOptions are the flags of `drawerfit fit`.
type fitOptions struct {
	spec planOptions // the specification flags, shared with plan

	combine     int
	boards      int
	maxOrder    int
	rank        string
	top         int
	goodEnough  float64
	rMin, rMax  string
	cMin, cMax  string
	allowDiel   []string
	minVoltage  string
	requireRate bool
	showFailing bool
	stockCSV    string
	netlist     string
	json        bool
	oddSet      bool
	opamp       string // --opamp ROW_ID | none; empty: the stock's amplifier rows

	// Production (fit_production.go): keep the listed candidates, fit a
	// board plan file, suggest purchases.
	save      bool
	plan      string
	suggest   bool
	boardsSet bool // --boards given: it overrides a plan file's boards

	// Checks and the build sheet (fit_checks.go): --yield, --gbw,
	// --bias-resistor, --report, --png.
	checks fitCheckOptions
}

// NewCmdFit builds `drawerfit fit`; runF replaces the run (nil: the real
// one) so that tests can check the parsed options without fitting.
func NewCmdFit(env *Env, runF func(*fitOptions) error) *cobra.Command {
	o := &fitOptions{}
	cmd := &cobra.Command{
		Use:   "fit lowpass|highpass --pass FREQ [--stop FREQ --atten DB | --order N]",
		Short: "Search the stock for the best buildable designs of a filter",
		Long: `fit designs the filter from its specification (as plan does) and then
searches the parts on hand: every usable resistor and capacitor alone and,
with --combine 2 (the default), every pair in series or parallel; every
capacitor choice for every section (no fixed anchor, no equal-value
restriction); the minimum order and the next (--max-order), and both
arrangements of an odd order (a 1-pole RC section, or a 3-pole section).

Each candidate is scored by its response error: the largest difference, in
dB, between its magnitude response (nominal values, ideal op-amps) and the
ideal response of the same approximation and order, on a logarithmic grid of
100 points per decade from fp/10 to fs (high-pass: fs to 10·fp). It meets the
specification when its own attenuation is at most Ap at fp (for Chebyshev,
its ripple up to fp at most the allowed ripple) and at least As at fs. Parts
counts physical parts per board; unique counts distinct stock rows.

Target placement (--placement inside, the default): when the order leaves
slack, the target is centred in the specification, so that the built filter
may drift the same factor in frequency either way before it fails at fp or
fs (a Chebyshev also gets a smaller ripple); the design notes say where it
was placed and the margins it leaves. --placement edge, and a specification
without slack (an order and no stopband), keep the classical placement.

Ranking (--rank yield, the default): every listed candidate is simulated
--trials times (default 2,000) with each part drawn within its stock row's
tolerance (a row without one at 5 % for a capacitor, 1 % for a resistor,
with a warning), the same draws for every candidate (--seed), and judged
against the specification. Candidates whose yield reaches --target-yield
(default 95 %) come first, fewest parts first, then fewest unique parts,
then yield; the rest follow by yield. The search keeps 30 candidates for
this (by parts among those whose error takes at most a third of the
target's margin), screens each with 256 simulated boards and confirms the
best with the full count; the output says how many. --rank balanced puts
candidates whose error is within --good-enough first, fewest parts first,
then fewest unique parts, then cost per board, then error, and the rest by
error; --rank error|parts|unique|cost sorts by one objective. A '*' in the
pareto column marks candidates that no other listed candidate beats in
error, parts and unique parts at once.

Cost: with unit prices in the stock (stock set ID --price 0.012), every
candidate shows its parts cost per board: each physical part, both parts of
a pair, at its row's price. It is blank (null in --json) when a row used has
no price; --rank cost lists those last. Prices are in the stock's one
currency; drawerfit converts none. --rank cost orders the combinations the
search builds from its per-section shortlists, which are chosen by response
error, so a cheaper design made of sections far off their targets is not
looked for.

Voltage: --min-voltage V never uses a capacitor rated below V. Capacitors
without a rating in the stock are used and the fit warns about them;
--require-rating leaves them out too.

The stock is the database (--db), or a CSV file read into memory (--stock)
without importing it. Capacitors of a precision dielectric (C0G/NP0,
polypropylene, polystyrene, PPS, PTFE, mica) are used; so are the
general-purpose films (polyester PET, PEN, polycarbonate, unstated film),
but a candidate with one is marked "PET!" (etc.; --json
dielectric_cautions) and a note says why;
class 2 ceramics, electrolytics and tantalum only with --allow-dielectric. With --boards N every stock row used
must cover N boards (a row used three times needs 3·N parts).

Results are small-signal designs with ideal op-amps: verify on the bench
before production, choose capacitor voltage ratings to suit the circuit, and
have safety-relevant, medical or mains-connected uses reviewed by a qualified
person under the applicable local rules.`,
		Example: `  # A weather station's wind-noise low-pass on the sample drawer: flat to 1 kHz,
  # 40 dB down by 3 kHz, straight from the CSV file
  drawerfit fit lowpass --pass 1k --stop 3k --atten 40 --stock sample-stock.csv

  # A turntable preamp's rumble high-pass, 4th-order Bessel at 20 Hz, for 25 boards,
  # single parts only, fewest distinct parts first
  drawerfit fit highpass --pass 20 --order 4 --response bessel --boards 25 --combine 1 --rank unique

  # The same fit for a script
  drawerfit fit lowpass --pass 1k --stop 3k --atten 40 --stock sample-stock.csv --json

  # A 24 V sensor front end: only capacitors rated for 35 V, cheapest first
  drawerfit fit lowpass --pass 1k --stop 3k --atten 40 --stock sample-stock.csv --min-voltage 35V --rank cost`,
		Args: func(cmd *cobra.Command, args []string) error {
			if o.plan != "" && len(args) == 0 {
				return nil // the plan file holds the filters
			}
			if len(args) != 1 {
				return usageError{fmt.Errorf("fit needs one response type, lowpass or highpass (got %d arguments)", len(args))}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			if len(args) > 0 {
				o.spec.kind = args[0]
			}
			f := cmd.Flags()
			o.boardsSet = f.Changed("boards")
			o.spec.passAttenSet = f.Changed("pass-atten")
			o.spec.attenSet = f.Changed("atten")
			o.spec.rippleSet = f.Changed("ripple")
			o.spec.orderSet = f.Changed("order")
			o.spec.besselNormSet = f.Changed("bessel-norm")
			o.oddSet = f.Changed("odd")
			if err := prepareFitChecks(f, o); err != nil {
				return err
			}
			if runF != nil {
				return runF(o)
			}
			return runFit(env, o)
		},
	}
	f := cmd.Flags()
	bindSpecFlags(f, &o.spec)
	f.IntVar(&o.combine, "combine", 2, "parts per position: 1 (single parts) or 2 (also pairs in series or parallel)")
	f.IntVar(&o.boards, "boards", 1, "every stock row used must cover this many boards")
	f.IntVar(&o.maxOrder, "max-order", 0, "highest order to try (default: the minimum order + 1)")
	enumFlag(f, &o.rank, "rank", "yield", "ranking", "ordering", nil,
		choice{"yield", "boards reaching --target-yield first, by parts"}, choice{"balanced", ""}, choice{"error", ""},
		choice{"parts", ""}, choice{"unique", ""}, choice{"cost", ""})
	f.StringVar(&o.minVoltage, "min-voltage", "", "never use capacitors rated below this voltage (50, 50V, 6.3V); unrated ones are used with a warning")
	f.BoolVar(&o.requireRate, "require-rating", false, "with --min-voltage: leave out capacitors without a voltage rating too")
	f.IntVar(&o.top, "top", 10, "how many candidates to list")
	f.Float64Var(&o.goodEnough, "good-enough", 0.05, "response error, dB, that the balanced ranking treats as good enough")
	lim := synth.PracticalLimits
	f.StringVar(&o.rMin, "r-min", stock.FormatValue(lim.RMin, stock.Resistor), "smallest resistor or combination to use")
	f.StringVar(&o.rMax, "r-max", stock.FormatValue(lim.RMax, stock.Resistor), "largest resistor or combination to use")
	f.StringVar(&o.cMin, "c-min", stock.FormatValue(lim.CMin, stock.Capacitor), "smallest capacitor or combination to use")
	f.StringVar(&o.cMax, "c-max", stock.FormatValue(lim.CMax, stock.Capacitor), "largest capacitor or combination to use")
	f.StringSliceVar(&o.allowDiel, "allow-dielectric", nil, "also use capacitors of these dielectrics, e.g. X7R,X5R (default: C0G/NP0 and film only)")
	f.BoolVar(&o.showFailing, "show-failing", false, "also list candidates that miss the specification")
	f.StringVar(&o.stockCSV, "stock", "", "fit against this stock CSV file instead of the database")
	f.StringVar(&o.netlist, "netlist", "", "write the best candidate's SPICE netlist to this file")
	f.BoolVar(&o.json, "json", false, "print one JSON object")
	f.StringVar(&o.opamp, "opamp", "", "amplifier: a stock row id to use (default: every amplifier row with a gbw is tried), or none for ideal amplifiers")
	f.BoolVar(&o.save, "save", false, "keep the listed candidates in the database as saved designs (ids in the table)")
	f.StringVar(&o.plan, "plan", "", "fit every filter of this board plan file jointly (see README)")
	f.BoolVar(&o.suggest, "suggest", false, "also list the few stock additions that would most improve the result")
	addFitCheckFlags(cmd, &o.checks)
	return cmd
}

// fitRun is everything a fit produced, for the printers and for --save.
type fitRun struct {
	spec    synth.Spec
	opts    optimize.Options
	result  *optimize.Result
	amps    *optimize.AmpsResult // the amplifiers tried and the sections none is fast enough for
	source  string               // where the stock came from
	elapsed time.Duration
	ids     []string              // saved design ids, parallel to result.Candidates (with --save)
	items   []stock.Item          // the stock searched (for the checks' refit and bias resistors)
	checks  *fitChecks            // results of the checks (fit_checks.go)
	rank    tolerance.RankOptions // the yield ranking's options
	ranking *tolerance.Ranking    // the ranking by yield (nil: another --rank)
	suggest *fitSuggestions       // purchase suggestions (with --suggest; fit_production.go)
	ctx     context.Context       // cancelled on interrupt; the checks and refits stop with it
}

func (o *fitOptions) optimizeOptions() (optimize.Options, error) {
	opt := optimize.DefaultOptions()
	opt.Combine, opt.Boards, opt.MaxOrder, opt.Top = o.combine, o.boards, o.maxOrder, o.top
	opt.GoodEnough, opt.ShowFailing, opt.AllowDielectric = o.goodEnough, o.showFailing, o.allowDiel
	switch strings.ToLower(o.rank) {
	case "balanced", "yield": // yield: the balanced search's candidates ranked by yield (tolerance.FitByYield)
		opt.Rank = optimize.RankBalanced
	case "error":
		opt.Rank = optimize.RankError
	case "parts":
		opt.Rank = optimize.RankParts
	case "unique":
		opt.Rank = optimize.RankUnique
	case "cost":
		opt.Rank = optimize.RankCost
	default:
		return opt, fault.Invalidf("--rank must be yield, balanced, error, parts, unique or cost, not %q", o.rank)
	}
	if strings.TrimSpace(o.minVoltage) != "" {
		v, err := stock.ParseVoltage(o.minVoltage)
		if err != nil {
			return opt, fault.Invalidf("--min-voltage: %w", err)
		}
		opt.MinVoltage = v
	}
	if o.requireRate {
		if opt.MinVoltage == 0 {
			return opt, fault.Invalidf("--require-rating goes with --min-voltage V")
		}
		opt.RequireRating = true
	}
	var err error
	parse := func(flag, s string, k stock.Kind, dst *float64) {
		if err != nil {
			return
		}
		v, e := stock.ParseValue(s, k)
		if e != nil {
			err = fault.Invalidf("--%s: %v", flag, e)
			return
		}
		*dst = v
	}
	parse("r-min", o.rMin, stock.Resistor, &opt.RMin)
	parse("r-max", o.rMax, stock.Resistor, &opt.RMax)
	parse("c-min", o.cMin, stock.Capacitor, &opt.CMin)
	parse("c-max", o.cMax, stock.Capacitor, &opt.CMax)
	if err != nil {
		return opt, err
	}
	if o.oddSet {
		odd, err := synth.ParseOdd(o.spec.odd)
		if err != nil {
			return opt, err
		}
		opt.Odd = &odd
	}
	return opt, nil
}

// doFit parses the options, loads the stock and runs the search.
func doFit(env *Env, o *fitOptions) (*fitRun, error) {
	spec, err := planSpec(&o.spec)
	if err != nil {
		return nil, err
	}
	opt, err := o.optimizeOptions()
	if err != nil {
		return nil, err
	}
	items, err := env.stockItems(env.Ctx, o.stockCSV, stock.Filter{})
	if err != nil {
		return nil, err
	}
	source := o.stockCSV
	if source == "" {
		source, _ = env.DefaultDBPath()
	}
	if len(items) == 0 {
		return nil, fault.Infeasiblef("the stock (%s) is empty: import a CSV with `drawerfit stock import FILE`, or fit against one with --stock FILE", source)
	}
	choice, err := o.ampChoice()
	if err != nil {
		return nil, err
	}
	topt, err := o.checks.tol.tolOptions()
	if err != nil {
		return nil, err
	}
	topt.Boards, topt.Refit = 0, nil
	ro := tolerance.RankOptions{Options: topt}
	var ar *optimize.AmpsResult
	fitAmps := func(ctx context.Context, items []stock.Item, spec synth.Spec, fo optimize.Options) (*optimize.Result, error) {
		var err error
		if ar, err = optimize.FitAmps(ctx, items, spec, fo, choice); err != nil {
			return nil, err
		}
		return ar.Result, nil
	}
	ro.Fit = fitAmps
	start := env.Now()
	prog := newProgress(env, "fitting")
	opt.Progress = prog.update
	var res *optimize.Result
	var rk *tolerance.Ranking
	if o.checks.rankYield {
		res, rk, err = tolerance.FitByYield(env.Ctx, items, spec, opt, ro)
	} else {
		res, err = fitAmps(env.Ctx, items, spec, opt)
	}
	prog.done()
	if err != nil {
		return nil, err
	}
	return &fitRun{spec: res.Spec, opts: opt, result: res, amps: ar, source: source, elapsed: env.Now().Sub(start), items: items, ctx: env.Ctx,
		rank: ro, ranking: rk}, nil
}

// ampChoice reads --opamp and --gbw: a pinned stock row, ideal amplifiers,
// a generic amplifier of --gbw (not drawn from stock), or by default every
// amplifier row of the stock.
func (o *fitOptions) ampChoice() (optimize.AmpChoice, error) {
	op, err := o.checks.opAmp()
	if err != nil {
		return optimize.AmpChoice{}, err
	}
	pin := strings.TrimSpace(o.opamp)
	if op != nil && pin != "" {
		return optimize.AmpChoice{}, fault.Invalidf("--gbw (a generic amplifier) and --opamp %s (a stock row) exclude each other", pin)
	}
	switch {
	case op != nil:
		return optimize.AmpChoice{Mode: optimize.AmpGeneric, Generic: *op}, nil
	case pin == "":
		return optimize.AmpChoice{Mode: optimize.AmpFromStock}, nil
	case strings.EqualFold(pin, "none"), strings.EqualFold(pin, "ideal"):
		return optimize.AmpChoice{Mode: optimize.AmpIdeal}, nil
	}
	id, err := parseID(pin)
	if err != nil {
		return optimize.AmpChoice{}, fault.Invalidf("--opamp takes an amplifier's stock row id or none: %v", err)
	}
	return optimize.AmpChoice{Mode: optimize.AmpPinned, StockID: id}, nil
}

func runFit(env *Env, o *fitOptions) error {
	if o.plan != "" {
		return runPlanFit(env, o)
	}
	for _, p := range []string{o.netlist, o.checks.report} {
		if err := checkOutputFile(p, o.checks.force); err != nil {
			return err
		}
	}
	run, err := doFit(env, o)
	if err != nil {
		return err
	}
	if err := runFitChecks(env, o, run); err != nil {
		return err
	}
	res := run.result
	if o.save && len(res.Candidates) > 0 {
		if run.ids, err = saveFitCandidates(env, o, run); err != nil {
			return err
		}
	}
	if o.netlist != "" && len(res.Candidates) > 0 {
		if err := env.writeOutputFile(o.netlist, o.checks.force, func(w io.Writer) error { _, err := io.WriteString(w, candidateNetlist(res.Candidates[0])); return err }); err != nil {
			return fmt.Errorf("write netlist: %w", err)
		}
	}
	if o.suggest {
		if err := suggestForFit(env, o, run); err != nil {
			return err
		}
	}
	if o.json {
		if err := writeJSON(env.Out, fitJSON(run)); err != nil {
			return err
		}
	} else {
		printFit(env, env.Out, run)
		printFitSuggestions(env, env.Out, run)
	}
	if !hasPassing(res) {
		return exitError{code: 1}
	}
	return nil
}

func hasPassing(r *optimize.Result) bool {
	for _, c := range r.Candidates {
		if c.MeetsSpec {
			return true
		}
	}
	return false
}

// candidateNetlist is the SPICE netlist of a candidate, one element per
// physical part, with the same designators as the tables.
func candidateNetlist(c *optimize.Candidate) string {
	lo, hi := c.Design.Band()
	o := synth.NetlistOptions{
		Title: "drawerfit " + report.SpecLine(c.Design), FStart: lo, FStop: hi, PointsPerDecade: 100,
		Refs: report.PartRefs(c)}
	if c.Amp != nil {
		m := c.Amp.Model
		o.OpAmp = &m
		o.AmpLabel = c.Amp.Label
		for _, s := range c.AmpSlots {
			o.AmpRefs = append(o.AmpRefs, s.Designator(c.Amp.Channels))
		}
	}
	return synth.Netlist(c.Stages(), o)
}

// printFit writes the candidate table and the detail of the best one.
func printFit(env *Env, w io.Writer, run *fitRun) {
	res := run.result
	fmt.Fprintf(w, "%s\n", report.SpecLine(res.Designs[0]))
	fmt.Fprintf(w, "Stock: %s — %d resistor and %d capacitor values searched (%s), %s\n",
		run.source, res.Resistors, res.Capacitors, combineText(run.opts.Combine), plural(run.opts.Boards, "board"))
	fmt.Fprintf(w, "Searched: %s in %s\n\n", searchedText(res), run.elapsed.Round(time.Millisecond))
	if len(res.Candidates) == 0 {
		fmt.Fprintln(w, "Nothing in stock meets the specification.")
		for _, l := range res.Limits {
			fmt.Fprintln(w, "  - "+l)
		}
		for _, n := range slowNotes(run) {
			fmt.Fprintln(w, "  - "+n)
		}
		fmt.Fprintln(w, "\n"+tryText(run))
		return
	}
	withAmp := len(res.Candidates) > 0 && res.Candidates[0].Amp != nil
	head := []string{"#", "order", "sections", "error dB", "at fp dB", "at fs dB", "parts", "unique", "cost/board", "boards", "pareto", "topology"}
	if withAmp {
		head = append(head, "amplifier", "ideal-amp dB")
	}
	g := newGrid(head...)
	g.right(0, 1, 3, 4, 5, 6, 7, 8, 9)
	// On a narrow terminal: the error, the parts and the place stay; the
	// stock detail goes first, the figures at fp and fs later.
	g.abbrev(1, "ord").abbrev(3, "err dB").abbrev(4, "fp dB").abbrev(5, "fs dB").abbrev(7, "uniq").abbrev(8, "cost").abbrev(10, "P").abbrev(11, "circuits")
	g.optional(dropFirst, 7, 10).optional(dropLater, 1, 4, 5, 8, 11).optional(dropLast, 9)
	if withAmp {
		g.right(13)
		g.abbrev(12, "amp").abbrev(13, "ideal dB").optional(dropLater, 13)
	}
	for i, c := range res.Candidates {
		mark := ""
		if c.Pareto {
			mark = "*"
		}
		if !c.MeetsSpec {
			mark += " fails spec"
		}
		for _, d := range c.Cautions {
			mark += " " + d + "!"
		}
		row := []string{strconv.Itoa(i + 1), strconv.Itoa(c.Order()), c.Arrangement(), fmtErr(c.ResponseError),
			formatDB(c.PassAtten, 3), stopCell(c.StopAtten), strconv.Itoa(c.PartCount), strconv.Itoa(c.UniqueParts),
			c.CostPerBoard.String(), strconv.Itoa(c.BoardsBuildable), strings.TrimSpace(mark), topologyCell(c)}
		if withAmp {
			row = append(row, ampCell(c), fmtErr(c.IdealAmpError))
		}
		g.add(row...)
	}
	addIDColumn(g, run.ids)
	run.checks.printTable(env, w, g, run)
	fmt.Fprintf(w, "\nRanked %s; error = largest deviation from the ideal %s response; '*' = on the Pareto front of error, parts and unique parts.\n",
		rankTextFor(run), approxName(res.Spec))
	fmt.Fprintln(w, costText(res.Candidates, run.opts.Boards))
	if withAmp {
		fmt.Fprintln(w, ampLegend(run))
	}
	printCandidateDetail(env, w, res.Candidates[0], 1)
	printFitChecks(env, w, run, res.Candidates[0])
	for _, n := range slowNotes(run) {
		fmt.Fprintln(w, "Note: "+n)
	}
	for _, n := range res.Notes {
		fmt.Fprintln(w, "Note: "+n)
	}
	fmt.Fprintln(w, "\nVerify on the bench before production; capacitor voltage ratings must suit the circuit; safety-relevant, medical or mains-connected uses need qualified review under local rules.")
}

// printCandidateDetail writes one candidate's sections and parts.
func printCandidateDetail(env *Env, w io.Writer, c *optimize.Candidate, rank int) {
	cost := ""
	if c.CostPerBoard.Known() {
		cost = ", parts cost " + c.CostPerBoard.String() + " per board"
	}
	fmt.Fprintf(w, "\nCandidate #%d: order %d, %s (%s), response error %s dB, %s from %s%s, %s\n",
		rank, c.Order(), c.Arrangement(), topologyCell(c), fmtErr(c.ResponseError), plural(c.PartCount, "part"), plural(c.UniqueParts, "stock row"), cost, ampSummary(c))
	if g := c.GainDB(); math.Abs(g) > 0.005 || c.Inverting() {
		inv := "does not invert"
		if c.Inverting() {
			inv = "inverts"
		}
		fmt.Fprintf(w, "Passband gain %s dB from the built values (asked %s dB); the filter %s.\n",
			formatDB(g, 2), formatDB(c.Design.Spec.GainDB, 2), inv)
	}
	for i, s := range c.Sections {
		t := s.Target
		head := fmt.Sprintf("Section %d, %s: target f0 %s", i+1, t.Topology.Name(), formatHz(t.F0))
		if t.Topology.Poles() >= 2 {
			head += fmt.Sprintf(" Q %.4f", t.Q)
		}
		head += fmt.Sprintf("; built f0 %s", formatHz(s.F0))
		if t.Topology.Poles() >= 2 {
			head += fmt.Sprintf(" Q %.4f", s.Q)
		}
		if t.Topology.Poles() == 3 {
			head += fmt.Sprintf("; real pole %s (target %s)", formatHz(s.RealF0), formatHz(t.RealF0))
		}
		if !t.Topology.GainFixed() || t.Topology.Inverting() {
			head += fmt.Sprintf("; gain %s dB (target %s dB)", formatDB(s.GainDB(), 2), formatDB(20*math.Log10(t.Gain), 2))
			if t.Topology.Inverting() {
				head += ", inverting"
			}
		}
		if c.Amp != nil && i < len(c.AmpSlots) {
			head += "; amplifier " + c.AmpSlots[i].Designator(c.Amp.Channels)
		}
		fmt.Fprintln(w, head)
		g := newGrid("ref", "role", "value", "made of", "bins", "tolerance").wrap(12, 1, 3).optional(dropLater, 5)
		for j, comp := range s.Components {
			var bins []string
			for _, p := range comp.Parts {
				bins = append(bins, orDash(p.Location))
			}
			g.add(comp.Ref, report.ElementRole(t.Topology, t.Topology.Element(j)), fmtValue4(comp.Value, comp.Kind), report.MadeOf(comp),
				strings.Join(bins, ", "), fmtTol(comp.Tolerance()))
		}
		g.render(env, w)
	}
	for _, n := range c.Design.Notes {
		fmt.Fprintln(w, "Design note: "+n)
	}
}

// fmtValue4 writes a built value with at most four significant digits: a
// combination's exact value (7.57856 kΩ) says no more than 7.579 kΩ.
func fmtValue4(v float64, k synth.PartKind) string {
	if k == synth.Capacitor {
		return stock.FormatValuePrec(v, stock.Capacitor, 4)
	}
	return stock.FormatValuePrec(v, stock.Resistor, 4)
}

// fmtTol writes a relative tolerance as a percentage with two significant
// digits at most ("1%", "4.1%", "0.25%"), or "?" when unknown.
func fmtTol(t float64) string {
	if t <= 0 {
		return "?"
	}
	return strconv.FormatFloat(100*t, 'g', 2, 64) + "%"
}

// tryText suggests the options that could widen a fit that found nothing.
func tryText(run *fitRun) string {
	o := run.opts
	tries := []string{"--allow-dielectric", "a wider --r-min/--r-max or --c-min/--c-max"}
	if o.Combine < 2 {
		tries = append(tries, "--combine 2")
	}
	if o.Boards > 1 {
		tries = append(tries, "fewer --boards")
	}
	if run.amps != nil && len(run.amps.Amps) > 0 {
		tries = append(tries, "--opamp none (ideal amplifiers, none drawn from stock)")
	}
	tries = append(tries, "--suggest for purchases")
	if !o.ShowFailing {
		tries = append(tries, "--show-failing to see the misses")
	}
	return "Try " + strings.Join(tries[:len(tries)-1], ", ") + " or " + tries[len(tries)-1] + "."
}

func orDash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

func fmtErr(e float64) string {
	switch {
	case e < 0.0005:
		return strconv.FormatFloat(e, 'e', 1, 64)
	case e < 1:
		return strconv.FormatFloat(e, 'f', 4, 64)
	case e < 10:
		return strconv.FormatFloat(e, 'f', 3, 64)
	}
	return strconv.FormatFloat(e, 'f', 1, 64)
}

func stopCell(v float64) string {
	if math.IsNaN(v) {
		return "-"
	}
	return formatDB(v, 2)
}

func combineText(n int) string {
	if n == 1 {
		return "single parts"
	}
	return "single parts and pairs"
}

// rankTextFor is rankText, naming the re-sort by yield when --rank yield
// asked for it.
func rankTextFor(run *fitRun) string {
	if rk := run.ranking; rk != nil {
		return rk.Method()
	}
	return rankText(run.opts)
}

func rankText(o optimize.Options) string {
	if o.Rank == optimize.RankBalanced {
		return fmt.Sprintf("balanced (error within %g dB first, by parts, unique parts, cost, error; then the rest by error)", o.GoodEnough)
	}
	return "by " + o.Rank.String()
}

// costText explains the cost column: per board, at the stock's unit
// prices, and what the batch costs for the first candidate.
func costText(cs []*optimize.Candidate, boards int) string {
	known := 0
	for _, c := range cs {
		if c.CostPerBoard.Known() {
			known++
		}
	}
	if known == 0 {
		return "cost/board: no candidate has a price for every part (set them with stock set ID --price P)."
	}
	s := "cost/board = parts at the stock's unit prices (pairs count both parts; no currency conversion); blank when a part has no price."
	if b, ok := cs[0].CostPerBoard.Times(boards); ok && b.Known() && boards > 1 {
		s += fmt.Sprintf(" #1 for %d boards: %s.", boards, b)
	}
	return s
}

func searchedText(r *optimize.Result) string {
	var parts []string
	for _, d := range r.Designs {
		c := optimize.Candidate{Design: d}
		p := fmt.Sprintf("order %d (%s)", d.Order, c.Arrangement())
		if s := d.TopologySummary(); strings.Contains(s, "MFB") || d.Spec.GainDB > 0 {
			p = fmt.Sprintf("order %d (%s)", d.Order, s)
		}
		parts = append(parts, p)
	}
	return strings.Join(parts, ", ")
}

// topologyCell names a candidate's circuits, with " inv" when the filter
// inverts.
func topologyCell(c *optimize.Candidate) string {
	s := c.Topologies()
	if c.Inverting() {
		s += ", inverting"
	}
	return s
}

// progress prints a one-line progress indicator on stderr when it is a
// terminal and the work has taken more than a second.
type progress struct {
	env   *Env
	label string
	start time.Time
	shown bool
	tty   bool
}

func newProgress(env *Env, label string) *progress {
	return &progress{env: env, label: label, start: time.Now(), tty: isTerminal(env.Err)}
}

func (p *progress) update(done, total int) {
	if !p.tty || time.Since(p.start) < time.Second {
		return
	}
	p.shown = true
	width := 24
	fill := width * done / max(total, 1)
	fmt.Fprintf(p.env.Err, "\r%s [%s%s] %d/%d sections", p.label, strings.Repeat("#", fill), strings.Repeat(".", width-fill), done, total)
}

func (p *progress) done() {
	if p.shown {
		fmt.Fprint(p.env.Err, "\r\033[K")
	}
}

// JSON shapes (stable keys).

type jsonPartUse struct {
	StockID  int64   `json:"stock_id"`
	Value    float64 `json:"value"`
	Location string  `json:"location"`
}

type jsonComponent struct {
	Ref         string        `json:"ref"`
	Symbol      string        `json:"symbol"`
	Value       float64       `json:"value"`
	Arrangement string        `json:"arrangement"`
	Tolerance   float64       `json:"tolerance"`
	Parts       []jsonPartUse `json:"parts"`
}

type jsonSection struct {
	Topology   string          `json:"topology"`
	GainDB     float64         `json:"gain_db"`
	Inverting  bool            `json:"inverting"`
	TargetF0   float64         `json:"target_f0_hz"`
	TargetQ    float64         `json:"target_q"`
	F0         float64         `json:"f0_hz"`
	Q          float64         `json:"q"`
	Components []jsonComponent `json:"components"`
}

type jsonAtten struct {
	Pass float64  `json:"pass_atten_db"`
	Stop *float64 `json:"stop_atten_db"`
}

type jsonStockUse struct {
	StockID  int64 `json:"stock_id"`
	PerBoard int   `json:"per_board"`
}

type jsonCandidate struct {
	ID            string    `json:"design_id"`
	Rank          int       `json:"rank"`
	Order         int       `json:"order"`
	Arrangement   string    `json:"arrangement"`
	ResponseError float64   `json:"response_error_db"`
	MeetsSpec     bool      `json:"meets_spec"`
	Attenuation   jsonAtten `json:"attenuation"`
	PartCount     int       `json:"part_count"`
	UniqueParts   int       `json:"unique_parts"`
	CostPerBoard  *string   `json:"cost_per_board"`
	// DielectricCautions are the general-purpose film dielectrics (PET,
	// ...) among the candidate's capacitors; [] when all are precision.
	DielectricCautions []string       `json:"dielectric_cautions"`
	BoardsBuildable    int            `json:"boards_buildable"`
	Pareto             bool           `json:"pareto"`
	GainDB             float64        `json:"gain_db"`
	Inverting          bool           `json:"inverting"`
	Topology           string         `json:"topology"`
	Topologies         []string       `json:"topologies"`
	Sections           []jsonSection  `json:"sections"`
	StockUse           []jsonStockUse `json:"stock_use"`
	Netlist            string         `json:"netlist"`
	// Placement is where the candidate's target sits in the specification.
	Placement placementJSON `json:"placement"`
	// Amplifiers: the rows used, and the error the same parts give with
	// ideal amplifiers (null when scored with ideal ones).
	OpAmps          []jsonAmp `json:"opamps"`
	IdealOpAmpError *float64  `json:"ideal_opamp_error_db"`
	// OpAmpCount is the number of op-amp channels (one per section).
	OpAmpCount int `json:"opamp_count"`
	// DesignNotes explain the design the candidate builds (edge placement,
	// stopband margin, ...), as the text prints them.
	DesignNotes []string `json:"design_notes"`
	// With the checks (fit_checks.go).
	Yield         *jsonYield `json:"yield"`
	OpAmp         *jsonOpAmp `json:"opamp"`
	BiasResistors []jsonBias `json:"bias_resistors"`
	Warnings      []string   `json:"warnings"`
}

type jsonSpec struct {
	Kind      string   `json:"kind"`
	Response  string   `json:"response"`
	PassHz    float64  `json:"pass_hz"`
	PassAtten float64  `json:"pass_atten_db"`
	StopHz    *float64 `json:"stop_hz"`
	StopAtten *float64 `json:"stop_atten_db"`
	Ripple    *float64 `json:"ripple_db"`
	Order     *int     `json:"order"`
	GainDB    float64  `json:"gain_db"`
	Polarity  string   `json:"polarity"`
	Topology  string   `json:"topology"`
}

type jsonFit struct {
	Spec jsonSpec `json:"spec"`
	// Searched are the orders and arrangements the search tried, as the
	// text's "Searched:" line lists them.
	Searched   []jsonSearched  `json:"searched"`
	Candidates []jsonCandidate `json:"candidates"`
	Closest    *jsonCandidate  `json:"closest_miss"`
	Limits     []string        `json:"limits"`
	Notes      []string        `json:"notes"`
	// Suggestions are the purchase suggestions (with --suggest).
	Suggestions []jsonSuggestion `json:"suggestions"`
	// SlowSections are the sections no amplifier tried is fast enough for.
	SlowSections []jsonSlowSection `json:"slow_sections"`
}

// jsonSearched is one design the search tried: its order and arrangement.
type jsonSearched struct {
	Order       int    `json:"order"`
	Arrangement string `json:"arrangement"`
}

func specJSON(s synth.Spec, order int) jsonSpec {
	js := jsonSpec{Kind: s.Kind.String(), Response: s.Approx.String(), PassHz: s.Pass, PassAtten: s.PassAtten,
		GainDB: s.GainDB, Polarity: s.Polarity.String(), Topology: s.Topology.String()}
	if s.Stop > 0 {
		fs, as := s.Stop, s.StopAtten
		js.StopHz, js.StopAtten = &fs, &as
	}
	if s.Approx == synth.Chebyshev {
		r := s.Ripple
		js.Ripple = &r
	}
	if order > 0 {
		js.Order = &order
	}
	return js
}

func candidateJSON(c *optimize.Candidate, rank int) jsonCandidate {
	jc := jsonCandidate{Rank: rank, Order: c.Order(), Arrangement: c.Arrangement(), ResponseError: c.ResponseError,
		MeetsSpec: c.MeetsSpec, Attenuation: jsonAtten{Pass: c.PassAtten}, PartCount: c.PartCount,
		UniqueParts: c.UniqueParts, CostPerBoard: moneyJSON(c.CostPerBoard), BoardsBuildable: c.BoardsBuildable,
		DielectricCautions: append([]string{}, c.Cautions...),
		GainDB:             c.GainDB(), Inverting: c.Inverting(), Topology: c.Topologies(), Topologies: []string{},
		Pareto: c.Pareto, Netlist: candidateNetlist(c), OpAmps: ampJSON(c), OpAmpCount: len(c.Sections),
		DesignNotes: append([]string{}, c.Design.Notes...), Placement: placementOf(c.Design),
		Warnings: []string{}, BiasResistors: []jsonBias{}}
	if c.Amp != nil {
		e := c.IdealAmpError
		jc.IdealOpAmpError = &e
	}
	if !math.IsNaN(c.StopAtten) {
		v := c.StopAtten
		jc.Attenuation.Stop = &v
	}
	for _, s := range c.Sections {
		js := jsonSection{Topology: s.Target.Topology.ID(), TargetF0: s.Target.F0, TargetQ: s.Target.Q, F0: s.F0, Q: s.Q,
			GainDB: s.GainDB(), Inverting: s.Target.Topology.Inverting()}
		jc.Topologies = append(jc.Topologies, s.Target.Topology.ID())
		for _, comp := range s.Components {
			jcmp := jsonComponent{Ref: comp.Ref, Symbol: comp.Symbol, Value: comp.Value, Arrangement: comp.Arrangement.String(),
				Tolerance: comp.Tolerance()}
			for _, p := range comp.Parts {
				jcmp.Parts = append(jcmp.Parts, jsonPartUse{StockID: p.StockID, Value: p.Value, Location: p.Location})
			}
			js.Components = append(js.Components, jcmp)
		}
		jc.Sections = append(jc.Sections, js)
	}
	uses := append([]optimize.StockUse(nil), c.StockUse...)
	sort.Slice(uses, func(a, b int) bool { return uses[a].StockID < uses[b].StockID })
	jc.StockUse = []jsonStockUse{}
	for _, u := range uses {
		jc.StockUse = append(jc.StockUse, jsonStockUse{StockID: u.StockID, PerBoard: u.PerBoard})
	}
	return jc
}

func fitJSON(run *fitRun) jsonFit {
	res := run.result
	out := jsonFit{Spec: specJSON(res.Spec, run.spec.Order), Candidates: []jsonCandidate{},
		Limits: append([]string{}, res.Limits...), Notes: append([]string{}, res.Notes...), Searched: []jsonSearched{}, SlowSections: slowJSON(run)}
	for _, d := range res.Designs {
		c := optimize.Candidate{Design: d}
		out.Searched = append(out.Searched, jsonSearched{Order: d.Order, Arrangement: c.Arrangement()})
	}
	for i, c := range res.Candidates {
		jc := candidateJSON(c, i+1)
		if i < len(run.ids) {
			jc.ID = run.ids[i]
		}
		run.checks.fillJSON(&jc, c)
		out.Candidates = append(out.Candidates, jc)
	}
	if res.Closest != nil {
		jc := candidateJSON(res.Closest, 0)
		out.Closest = &jc
	}
	out.Suggestions = run.suggest.json()
	return out
}

// context returns the run's context (the background when none was set).
func (r *fitRun) context() context.Context {
	if r.ctx == nil {
		return context.Background()
	}
	return r.ctx
}

// rankOptions are the options of the yield ranking and of a refit.
func (run *fitRun) rankOptions() tolerance.RankOptions { return run.rank }
