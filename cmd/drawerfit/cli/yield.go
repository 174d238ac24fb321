package cli

import (
	"context"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
	"drawerfit/tolerance"
)

// designSource loads saved designs for `drawerfit yield`. The saved-designs
// code implements it; NewCmdYield builds the command with
// newYieldCmdWith(openSavedDesigns), where openSavedDesigns(env) opens the
// store.
type designSource interface {
	// LoadDesign returns the candidate saved under id and the specification
	// it was fitted to (fault.NotFound when there is none).
	LoadDesign(ctx context.Context, id string) (*optimize.Candidate, synth.Spec, error)
	Close() error
}

// refitSource is a designSource that can also fit a design again (for the
// "edge moved inside the specification" advice) from the current stock
// with the options it was fitted with.
type refitSource interface {
	RefitFor(ctx context.Context, id string, c *optimize.Candidate) (tolerance.RefitFunc, error)
}

// yieldOptions are the flags of `drawerfit yield` (and the tolerance
// options `fit --yield` shares).
type yieldOptions struct {
	id           string // the saved design (ID or ID/N); not a flag
	trials       int
	seed         uint64
	dist         string
	passMargin   float64
	stopMargin   float64
	targetYield  string
	boards       int
	gbw          string
	dcGain       float64
	dcGainSet    bool
	biasResistor bool
	sensitivity  bool
	json         bool

	// refit, when set by the caller, fits a design again for a modified
	// specification (the edge moved inside); nil skips that suggestion.
	refit tolerance.RefitFunc
}

// flagBinder is the part of a flag set the yield flags need.
type flagBinder interface {
	IntVar(*int, string, int, string)
	Uint64Var(*uint64, string, uint64, string)
	StringVar(*string, string, string, string)
	Float64Var(*float64, string, float64, string)
	BoolVar(*bool, string, bool, string)
	Var(pflag.Value, string, string)
}

// addYieldFlags binds the flags of `drawerfit yield` to f: the tolerance
// flags (addToleranceFlags) and --boards, --sensitivity and --json.
func addYieldFlags(f flagBinder, o *yieldOptions) {
	addToleranceFlags(f, o)
	f.IntVar(&o.boards, "boards", 0, "forecast how many of this many built boards pass")
	f.BoolVar(&o.sensitivity, "sensitivity", false, "print each component's f0 and Q sensitivity")
	f.BoolVar(&o.json, "json", false, "print one JSON object")
}

// addToleranceFlags binds the tolerance and op-amp flags that yield and
// fit share (fit has its own --boards and --json).
func addToleranceFlags(f flagBinder, o *yieldOptions) {
	f.IntVar(&o.trials, "trials", tolerance.DefaultTrials, "number of simulated boards")
	f.Uint64Var(&o.seed, "seed", 1, "random seed: the same seed gives the same result")
	enumFlag(f, &o.dist, "dist", "uniform", "distribution", "part values within their tolerance", nil,
		choice{"uniform", ""}, choice{"normal", "tolerance = 3 sigma"})
	f.Float64Var(&o.passMargin, "pass-margin", 0, "accept this many dB beyond the passband limit")
	f.Float64Var(&o.stopMargin, "stop-margin", 0, "accept this many dB short of the stopband attenuation")
	f.StringVar(&o.targetYield, "target-yield", "95%", "yield the advice aims for, e.g. 95% or 0.95")
	f.StringVar(&o.gbw, "gbw", "", "check an op-amp of this gain-bandwidth, e.g. 1M or 10MHz")
	f.Float64Var(&o.dcGain, "dc-gain", 100, "the op-amp's open-loop DC gain, dB (with --gbw)")
	f.BoolVar(&o.biasResistor, "bias-resistor", false, "list the bias-current compensation resistor of each follower (bipolar-input op-amps)")
}

// newYieldCmdWith returns the constructor of `drawerfit yield` reading
// designs through open.
func newYieldCmdWith(open func(env *Env) (designSource, error)) func(*Env, func(*yieldOptions) error) *cobra.Command {
	return func(env *Env, runF func(*yieldOptions) error) *cobra.Command {
		o := &yieldOptions{}
		cmd := &cobra.Command{
			Use:   "yield ID",
			Short: "Estimate how many boards of a saved design pass, and why the others fail",
			Long: `yield simulates building a saved design many times: every resistor and
capacitor is drawn within its own stock row's tolerance (uniformly by
default; --dist normal takes the tolerance as 3 sigma), series and parallel
pairs are built from their drawn parts, and each simulated board's exact
response is judged against the design's specification. A Butterworth or
Bessel board passes if its passband attenuation up to fp is at most Ap and its
attenuation at fs at least As; a Chebyshev board is judged on its ripple.
--pass-margin and --stop-margin widen that window.

It reports the fraction that pass with a 95% confidence interval, the
spread of the edge frequency and of the attenuation at fs, a worst-case
corner analysis, each component's share of the failures, and advice that
it computes by simulating again (a tighter part where it matters, or the
acceptance window the target yield needs). --gbw checks an op-amp with a
single-pole model against the rule of Op Amps for Everyone, section 16.8.4.

For a board saved from a plan, ID alone gives the yield of the whole board
(every filter must pass; each filter's parts are drawn independently, so it
is the product of the filter yields) and ID/N analyses filter N in full.

The same seed and trial count always give the same result.`,
			Example: `  # A school weather station: how many of the 25 anemometer boards built from
  # saved design ID (as fit --save printed it) will pass, with the stock's own tolerances?
  drawerfit yield ID --boards 25

  # The same with a 1 MHz op-amp, and a 0.5 dB looser passband
  drawerfit yield ID --gbw 1M --pass-margin 0.5

  # For a script: 10,000 trials, seed 7, as JSON
  drawerfit yield ID --trials 10000 --seed 7 --json`,
			Args: func(cmd *cobra.Command, args []string) error {
				if len(args) != 1 {
					return usageError{fmt.Errorf("yield needs one saved design ID (got %d arguments)", len(args))}
				}
				return nil
			},
			RunE: func(cmd *cobra.Command, args []string) error {
				o.dcGainSet = cmd.Flags().Changed("dc-gain")
				o.id = args[0]
				if runF != nil {
					return runF(o)
				}
				src, err := open(env)
				if err != nil {
					return err
				}
				defer src.Close()
				if bs, ok := src.(boardSource); ok {
					filters, err := bs.BoardFilters(env.Ctx, args[0])
					if err != nil {
						return err
					}
					if filters != nil {
						return runBoardYield(env, o, args[0], filters)
					}
				}
				c, spec, err := src.LoadDesign(env.Ctx, args[0])
				if err != nil {
					return err
				}
				if r, ok := src.(refitSource); ok && o.refit == nil {
					if o.refit, err = r.RefitFor(env.Ctx, args[0], c); err != nil {
						return err
					}
				}
				return runYield(env, o, "design "+args[0], c, spec)
			},
		}
		addYieldFlags(cmd.Flags(), o)
		return cmd
	}
}

// yieldReport is everything yield prints; as JSON the Monte Carlo result's
// keys sit at the top level (yield, ci_low, ci_high, trials, seed, blame,
// ...).
type yieldReport struct {
	Design string `json:"design"`
	// Placement is where the design's target sits in its specification.
	Placement placementJSON `json:"placement"`
	*tolerance.Result
	OpAmp         *tolerance.OpAmpReport   `json:"opamp"`
	Practical     []string                 `json:"practical"`
	BiasResistors []tolerance.BiasResistor `json:"bias_resistors"`
	Caution       string                   `json:"caution"`
}

// tolOptions turns the flags into tolerance options (fault.Invalid for
// mistakes).
func (o *yieldOptions) tolOptions() (tolerance.Options, error) {
	dist, err := tolerance.ParseDist(o.dist)
	if err != nil {
		return tolerance.Options{}, err
	}
	ty, err := parseYieldFraction(o.targetYield)
	if err != nil {
		return tolerance.Options{}, fault.Invalidf("--target-yield: %v", err)
	}
	if o.passMargin < 0 || o.stopMargin < 0 {
		return tolerance.Options{}, fault.Invalidf("--pass-margin and --stop-margin widen the window: give positive dB")
	}
	if o.trials < 1 || o.trials > tolerance.MaxTrials {
		return tolerance.Options{}, fault.Invalidf("--trials must be between 1 and %d, not %d", tolerance.MaxTrials, o.trials)
	}
	return tolerance.Options{Trials: o.trials, Seed: o.seed, Dist: dist, PassMargin: o.passMargin,
		StopMargin: o.stopMargin, TargetYield: ty, Boards: o.boards, Refit: o.refit}, nil
}

// opAmp returns the op-amp model of --gbw/--dc-gain, or nil without --gbw.
func (o *yieldOptions) opAmp() (*synth.OpAmp, error) {
	if o.gbw == "" {
		if o.dcGainSet {
			return nil, fault.Invalidf("--dc-gain needs --gbw, the op-amp's gain-bandwidth")
		}
		return nil, nil
	}
	g, err := synth.ParseFrequency(o.gbw)
	if err != nil {
		return nil, fault.Invalidf("--gbw: %v", err)
	}
	if !(o.dcGain > 0) || math.IsInf(o.dcGain, 0) {
		return nil, fault.Invalidf("--dc-gain must be a positive number of dB, got %g", o.dcGain)
	}
	return &synth.OpAmp{GBW: g, DCGain: math.Pow(10, o.dcGain/20)}, nil
}

// parseYieldFraction reads "95%", "95" or "0.95" as 0.95.
func parseYieldFraction(s string) (float64, error) {
	t := strings.TrimSpace(s)
	pctSign := strings.HasSuffix(t, "%")
	t = strings.TrimSpace(strings.TrimSuffix(t, "%"))
	v, err := strconv.ParseFloat(t, 64)
	if err != nil {
		return 0, fmt.Errorf("cannot read %q: write e.g. 95%% or 0.95", s)
	}
	if pctSign || v > 1 {
		v /= 100
	}
	if !(v > 0 && v < 1) {
		return 0, fmt.Errorf("%q is not a yield between 0 and 100%%", s)
	}
	return v, nil
}

// runYield analyses candidate c against spec and prints the report. name
// says which design it is ("design 12", "candidate 3").
func runYield(env *Env, o *yieldOptions, name string, c *optimize.Candidate, spec synth.Spec) error {
	rep, err := yieldAnalysis(env.Ctx, o, name, c, spec)
	if err != nil {
		return err
	}
	if o.json {
		return writeJSON(env.Out, rep)
	}
	writeYieldReport(env, env.Out, rep, o.sensitivity)
	return nil
}

// yieldAnalysis runs every check the options ask for.
func yieldAnalysis(ctx context.Context, o *yieldOptions, name string, c *optimize.Candidate, spec synth.Spec) (*yieldReport, error) {
	topt, err := o.tolOptions()
	if err != nil {
		return nil, err
	}
	op, err := o.opAmp()
	if err != nil {
		return nil, err
	}
	res, err := tolerance.Run(ctx, c, spec, topt)
	if err != nil {
		return nil, err
	}
	rep := &yieldReport{Design: name, Result: res, Caution: tolerance.Caution, Placement: placementOf(c.Design)}
	if op != nil {
		if rep.OpAmp, err = tolerance.CheckOpAmp(c, spec, *op); err != nil {
			return nil, err
		}
	}
	if rep.Practical, err = tolerance.Practical(c); err != nil {
		return nil, err
	}
	if o.biasResistor {
		if rep.BiasResistors, err = tolerance.BiasResistors(c); err != nil {
			return nil, err
		}
	}
	return rep, nil
}

// writeYieldReport prints the report for people.
func writeYieldReport(env *Env, w io.Writer, rep *yieldReport, sens bool) {
	r := rep.Result
	fmt.Fprintf(w, "%s: %s of %d simulated boards pass (95%% interval %s to %s)\n",
		rep.Design, yieldPct(r.Yield), r.Trials, yieldPct(r.CILow), yieldPct(r.CIHigh))
	how := "uniform within"
	if r.Dist == tolerance.Normal {
		how = "normal, 3 sigma at"
	}
	window := "the specification itself"
	if r.PassMargin != 0 || r.StopMargin != 0 {
		window = fmt.Sprintf("the specification widened by %.3g dB (passband) and %.3g dB (stopband)", r.PassMargin, r.StopMargin)
	}
	fmt.Fprintf(w, "parts %s their stock tolerances, seed %d, judged against %s\n", how, r.Seed, window)
	if p := rep.Placement.Why; p != "" {
		fmt.Fprintln(w, p)
	}
	if b := r.Boards; b != nil {
		fmt.Fprintf(w, "of %s built, expect about %.0f to pass (95%% range %d to %d)\n", plural(b.Built, "board"), b.Expected, b.Low, b.High)
	}
	fmt.Fprintf(w, "failures: %d at the passband limit, %d at the stopband limit\n\n", r.FailPassband, r.FailStopband)

	g := newGrid("figure", "nominal", "min", "5%", "median", "95%", "max").right(1, 2, 3, 4, 5, 6)
	// Narrow terminal: the extremes go before the 5th to 95th percentile.
	g.wrap(12, 0).optional(dropLater, 2, 6)
	fmt.Fprintln(w, "Spread over the simulated boards")
	addRow := func(label string, nominal float64, p *tolerance.Percentiles, format func(float64) string) {
		if p == nil {
			return
		}
		g.add(label, format(nominal), format(p.Min), format(p.P5), format(p.P50), format(p.P95), format(p.Max))
	}
	hzf := func(x float64) string { return yieldHz(x) }
	dbf := func(x float64) string { return strconv.FormatFloat(x, 'f', 3, 64) + " dB" }
	addRow(string(r.EdgeKind), r.Nominal.Edge, r.Edge, hzf)
	passLabel := "passband attenuation"
	if r.EdgeKind == tolerance.EdgeRipple {
		passLabel = "passband ripple"
	}
	addRow(passLabel, r.Nominal.PassAtten, r.PassAtten, dbf)
	if r.StopAtten != nil && r.Nominal.StopAtten != nil {
		addRow("attenuation at fs", *r.Nominal.StopAtten, r.StopAtten, dbf)
	}
	g.render(env, w)
	fmt.Fprintln(w)

	if wc := r.WorstCase; wc != nil {
		verdict := func(ok bool) string {
			if ok {
				return "passes"
			}
			return "fails"
		}
		s := fmt.Sprintf("worst-case corners (every part at a tolerance limit; %s): %s %.3f dB (%s)", wc.Method, passLabel, wc.PassAtten, verdict(wc.PassOK))
		if wc.StopAtten != nil {
			s += fmt.Sprintf(", %.2f dB at fs (%s)", *wc.StopAtten, verdict(wc.StopOK))
		}
		if wc.EdgeLow > 0 {
			s += fmt.Sprintf(", %s from %s to %s", r.EdgeKind, yieldHz(wc.EdgeLow), yieldHz(wc.EdgeHigh))
		}
		fmt.Fprintln(w, s)
		fmt.Fprintln(w)
	}

	if len(r.Blame) > 0 {
		bg := newGrid("component", "section", "tolerance", "share of failures").right(1, 2, 3)
		fmt.Fprintln(w, "What the failures come from")
		for _, b := range r.Blame {
			if b.Share < 0.005 {
				continue
			}
			ref := b.Ref
			if b.Symbol != "" && b.Symbol != b.Ref {
				ref += " (" + b.Symbol + ")"
			}
			bg.add(ref, strconv.Itoa(b.Section), stock.FormatTolerance(b.Tolerance), yieldPct(b.Share))
		}
		if r.Unattributed >= 0.005 {
			bg.add("no single part", "", "", yieldPct(r.Unattributed))
		}
		bg.render(env, w)
		fmt.Fprintln(w)
	}

	if sens {
		sg := newGrid("section", "component", "S f0", "S Q").right(0, 2, 3)
		fmt.Fprintln(w, "Sensitivities (% change of f0 or Q per % change of the part)")
		for _, s := range r.Sensitivities {
			for _, c := range s.Components {
				ref := c.Ref
				if c.Symbol != "" && c.Symbol != c.Ref {
					ref += " (" + c.Symbol + ")"
				}
				sg.add(strconv.Itoa(s.Section), ref, fixed3(c.F0), fixed3(c.Q))
			}
		}
		sg.render(env, w)
		fmt.Fprintln(w)
	}

	if op := rep.OpAmp; op != nil {
		og := newGrid("section", "f0", "Q", "needs GBW", "ok", "change").right(0, 1, 2, 3, 5).optional(dropLater, 5)
		fmt.Fprintf(w, "Op-amp with %s gain-bandwidth and %.0f dB DC gain; gain-bandwidth needed by the rule of %s\n",
			yieldHz(op.GBW), 20*math.Log10(op.DCGain), op.Rule)
		for _, s := range op.Sections {
			ok := "yes"
			if !s.OK {
				ok = "NO"
			}
			q := strconv.FormatFloat(s.Q, 'f', 3, 64)
			if s.Q == 0 {
				q = "-"
			}
			og.add(strconv.Itoa(s.Section), yieldHz(s.F0), q, yieldHz(s.RequiredGBW), ok, strconv.FormatFloat(s.ErrorDB, 'f', 3, 64)+" dB")
		}
		og.render(env, w)
		fmt.Fprintf(w, "the op-amp changes the response by up to %.3f dB (%.3f dB in the passband)\n", op.BandError, op.PassbandError)
		for _, s := range op.Warnings {
			fmt.Fprintln(w, "warning: "+s)
		}
		fmt.Fprintln(w)
	}

	if len(rep.BiasResistors) > 0 {
		fmt.Fprintln(w, "bias-current compensation (bipolar-input op-amps): put a resistor in each follower's feedback path")
		for _, b := range rep.BiasResistors {
			fmt.Fprintf(w, "  section %d: %s (%s)\n", b.Section, stock.FormatValuePrec(b.Ohms, stock.Resistor, 4), b.Path)
		}
		fmt.Fprintln(w)
	}

	for _, a := range r.Advice {
		fmt.Fprintln(w, a)
	}
	for _, s := range r.Warnings {
		fmt.Fprintln(w, "warning: "+s)
	}
	for _, s := range rep.Practical {
		fmt.Fprintln(w, "note: "+s)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, rep.Caution)
}

// yieldPct formats a fraction for reports.
func yieldPct(x float64) string { return tolerance.Percent(x) }

// yieldHz formats a frequency to 4 significant digits (see
// synth.FormatFrequency).
func yieldHz(f float64) string { return synth.FormatFrequency(f, 4) }

// fixed3 writes x with three decimals and no negative zero.
func fixed3(x float64) string {
	s := strconv.FormatFloat(x, 'f', 3, 64)
	if s == "-0.000" {
		s = "0.000"
	}
	return s
}
