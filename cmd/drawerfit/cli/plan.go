package cli

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"drawerfit/fault"
	"drawerfit/stock"
	"drawerfit/synth"
)

// planOptions are the flags of `drawerfit plan`.
type planOptions struct {
	kind       string
	pass       string
	passAtten  float64
	stop       string
	atten      float64
	response   string
	ripple     float64
	order      int
	odd        string
	besselNorm string
	placement  string // "inside" or "edge"; empty: edge
	gain       float64
	polarity   string
	topology   string
	anchor     string
	json       bool
	netlist    string
	force      bool

	// which optional numbers were given explicitly
	passAttenSet, attenSet, rippleSet, orderSet, besselNormSet bool
}

// NewCmdPlan builds `drawerfit plan`; runF replaces the run (nil: the real
// one) so that tests can check the parsed options without designing.
func NewCmdPlan(env *Env, runF func(*planOptions) error) *cobra.Command {
	o := &planOptions{}
	cmd := &cobra.Command{
		Use:   "plan lowpass|highpass --pass FREQ [--stop FREQ --atten DB | --order N]",
		Short: "Design the ideal filter: order, sections, normalised and scaled values",
		Long: `plan designs an active filter from a specification, without looking at
the stock: the order, each section's natural frequency f0 and Q
in cascade order (rising Q), its normalised element values (passband edge at
1 rad/s, unit resistors for a low-pass, unit capacitors for a high-pass), and
values scaled by the classical hand procedure: frequency scaling by 2π·fp
and, per section, impedance scaling that puts the resistors in the geometric
middle of 1 kΩ to 1 MΩ, or gives each section's largest capacitor the
--anchor value.

Give the passband edge and either a stopband edge with its attenuation (the
minimum order is computed) or an order. When the order leaves slack (a
stopband limit with margin), the target is placed inside the specification
(--placement inside, the default): centred in frequency, so that the built
filter may drift the same factor either way before it fails at fp or fs, and
for Chebyshev with a smaller ripple too. --placement edge, and every
specification without slack, keeps the classical placement: Butterworth and
Bessel put the -3 dB point (or --pass-atten) exactly at the passband edge;
for Chebyshev the edge is the end of the full ripple band. Frequencies accept 1500, 1.5k, 1.5kHz.
Odd orders build the real pole as its own RC section (--odd 1pole) or with
the lowest-Q pair in one 3-pole section (--odd 3pole).

--gain asks for passband gain in dB (up to 40), shared equally in dB over
the 2-pole sections. Those are Sallen-Key sections (with a gain divider
Rb/Ra above 0 dB) or, with --topology mfb, multiple-feedback sections,
which invert: the output says whether the whole filter does, and
--polarity keep refuses an inverting filter. The design equations of each
circuit used are printed under the components.

The netlist (--netlist, and in --json) uses only R, C, V and E elements
and simulates in any SPICE-compatible program: input node in, output out.`,
		Example: `  # A rain gauge's ultrasonic echo pick-up: keep 40 kHz and up, at least
  # 50 dB down at 10 kHz, with a Chebyshev response of 0.5 dB ripple
  drawerfit plan highpass --pass 40k --stop 10k --atten 50 --response chebyshev --ripple 0.5

  # A model railway's sound card: smooth the DAC output with a 5th-order
  # Bessel low-pass at 8 kHz, one 3-pole section first, 4.7 nF capacitors
  drawerfit plan lowpass --pass 8kHz --response bessel --order 5 --odd 3pole --anchor 4n7

  # A tide gauge's pressure sensor: 20 dB of gain and a low-pass at 2 kHz
  # from multiple-feedback sections with 10 nF capacitors
  drawerfit plan lowpass --pass 2k --stop 8k --atten 40 --gain 20 --topology mfb --anchor 10n

  # The same as JSON, with the SPICE netlist written to a file
  drawerfit plan lowpass --pass 8k --response bessel --order 5 --json --netlist smoother.cir`,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) != 1 {
				return usageError{fmt.Errorf("plan needs one response type, lowpass or highpass (got %d arguments)", len(args))}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			o.kind = args[0]
			f := cmd.Flags()
			o.passAttenSet = f.Changed("pass-atten")
			o.attenSet = f.Changed("atten")
			o.rippleSet = f.Changed("ripple")
			o.orderSet = f.Changed("order")
			o.besselNormSet = f.Changed("bessel-norm")
			if runF != nil {
				return runF(o)
			}
			return runPlan(env, o)
		},
	}
	f := cmd.Flags()
	bindSpecFlags(f, o)
	f.StringVar(&o.anchor, "anchor", "", "value of each section's largest capacitor, e.g. 10n (default: resistors mid-range)")
	f.BoolVar(&o.json, "json", false, "print one JSON object")
	f.StringVar(&o.netlist, "netlist", "", "write the SPICE netlist to this file (- for standard output)")
	f.BoolVar(&o.force, "force", false, forceHelp)
	return cmd
}

// bindSpecFlags binds the specification flags that plan and fit share.
func bindSpecFlags(f *pflag.FlagSet, o *planOptions) {
	f.StringVar(&o.pass, "pass", "", "passband edge frequency fp (required), e.g. 1k or 1.5kHz")
	f.Float64Var(&o.passAtten, "pass-atten", 0, "most attenuation allowed at fp, dB (default 3.01 for Butterworth and Bessel; the ripple for Chebyshev)")
	f.StringVar(&o.stop, "stop", "", "stopband edge frequency fs")
	f.Float64Var(&o.atten, "atten", 0, "least attenuation required at fs, dB")
	enumFlag(f, &o.response, "response", "butterworth", "response", "approximation", nil,
		choice{"butterworth", ""}, choice{"chebyshev", ""}, choice{"bessel", ""})
	f.Float64Var(&o.ripple, "ripple", 0, "Chebyshev passband ripple, dB (default 1)")
	f.IntVar(&o.order, "order", 0, "filter order 1..12 (default: the minimum that meets --stop/--atten)")
	enumFlag(f, &o.odd, "odd", "1pole", "odd-order arrangement", "odd-order real pole",
		map[string]string{"1-pole": "1pole", "3-pole": "3pole"},
		choice{"1pole", "own RC section"}, choice{"3pole", "with the lowest-Q pair"})
	enumFlag(f, &o.besselNorm, "bessel-norm", "mag", "Bessel normalisation", "Bessel normalisation", nil,
		choice{"mag", "-3 dB at fp"}, choice{"delay", "unit delay scaled to fp"})
	enumFlag(f, &o.placement, "placement", "inside", "placement", "where the target sits", nil,
		choice{"inside", "centred in the specification when the order leaves slack"}, choice{"edge", "classical: Ap exactly at fp"})
	f.Float64Var(&o.gain, "gain", 0, "passband gain, dB (0..40; at DC for a low-pass, at high frequencies for a high-pass), shared equally over the 2-pole sections")
	enumFlag(f, &o.polarity, "polarity", "any", "polarity", "polarity", nil,
		choice{"any", "inverting sections allowed; the output says whether the filter inverts"}, choice{"keep", "the filter must not invert"})
	enumFlag(f, &o.topology, "topology", "auto", "topology", "2-pole sections", map[string]string{"sk": "sallen-key", "multiple-feedback": "mfb"},
		choice{"auto", "the fit chooses per section; plan uses sallen-key"}, choice{"sallen-key", ""}, choice{"mfb", "multiple feedback, inverting"})
}

// planSpec turns the options into a specification; every mistake is a
// fault.Invalid error.
func planSpec(o *planOptions) (synth.Spec, error) {
	var s synth.Spec
	var err error
	if s.Kind, err = synth.ParseKind(o.kind); err != nil {
		return s, err
	}
	if s.Approx, err = synth.ParseApprox(o.response); err != nil {
		return s, err
	}
	if o.pass == "" {
		return s, fault.Invalidf("give the passband edge with --pass, e.g. --pass 1k")
	}
	if s.Pass, err = synth.ParseFrequency(o.pass); err != nil {
		return s, fault.Invalidf("--pass: %v", err)
	}
	if o.passAttenSet {
		if !(o.passAtten > 0) || math.IsInf(o.passAtten, 0) {
			return s, fault.Invalidf("--pass-atten must be a positive number of dB, got %g", o.passAtten)
		}
		s.PassAtten = o.passAtten
	}
	if o.stop != "" {
		if s.Stop, err = synth.ParseFrequency(o.stop); err != nil {
			return s, fault.Invalidf("--stop: %v", err)
		}
		if !o.attenSet {
			return s, fault.Invalidf("--stop needs --atten, the least attenuation at the stopband edge")
		}
	}
	if o.attenSet {
		if o.stop == "" {
			return s, fault.Invalidf("--atten needs --stop, the stopband edge it applies to")
		}
		if !(o.atten > 0) || math.IsInf(o.atten, 0) {
			return s, fault.Invalidf("--atten must be a positive number of dB, got %g", o.atten)
		}
		s.StopAtten = o.atten
	}
	if o.rippleSet {
		if s.Approx != synth.Chebyshev {
			return s, fault.Invalidf("--ripple only applies to --response chebyshev, not %s", s.Approx)
		}
		if !(o.ripple > 0) || math.IsInf(o.ripple, 0) {
			return s, fault.Invalidf("--ripple must be a positive number of dB, got %g", o.ripple)
		}
		s.Ripple = o.ripple
	}
	if o.orderSet {
		if o.order < 1 || o.order > synth.MaxOrder {
			return s, fault.Invalidf("--order %d is outside 1..%d", o.order, synth.MaxOrder)
		}
		s.Order = o.order
	}
	if s.Odd, err = synth.ParseOdd(o.odd); err != nil {
		return s, err
	}
	if o.besselNormSet && s.Approx != synth.Bessel {
		return s, fault.Invalidf("--bessel-norm only applies to --response bessel, not %s", s.Approx)
	}
	if s.BesselNorm, err = synth.ParseBesselNorm(o.besselNorm); err != nil {
		return s, err
	}
	if o.placement != "" {
		if s.Placement, err = synth.ParsePlacement(o.placement); err != nil {
			return s, fault.Invalidf("--placement: %v", err)
		}
	}
	if !(o.gain >= 0 && o.gain <= synth.MaxGainDB) {
		return s, fault.Invalidf("--gain must be 0..%d dB, got %g", synth.MaxGainDB, o.gain)
	}
	s.GainDB = o.gain
	if o.polarity != "" {
		if s.Polarity, err = synth.ParsePolarity(o.polarity); err != nil {
			return s, fault.Invalidf("--polarity: %v", err)
		}
	}
	if o.topology != "" {
		if s.Topology, err = synth.ParseTopologyChoice(o.topology); err != nil {
			return s, fault.Invalidf("--topology: %v", err)
		}
	}
	if s.Stop == 0 && s.Order == 0 {
		return s, fault.Invalidf("give a stopband (--stop and --atten) or an order (--order)")
	}
	return s, s.Normalize()
}

// planJSON is the --json output of plan. Keys are stable.
type planJSON struct {
	Order         int               `json:"order"`
	Response      string            `json:"response"`
	Kind          string            `json:"kind"`
	PassHz        float64           `json:"pass_hz"`
	PassAttenDB   float64           `json:"pass_atten_db"`
	StopHz        *float64          `json:"stop_hz"`
	StopAttenDB   *float64          `json:"stop_atten_db"`
	RippleDB      *float64          `json:"ripple_db"`
	Odd           string            `json:"odd"`
	BesselNorm    *string           `json:"bessel_norm"`
	Sections      []planSectionJSON `json:"sections"`
	AttenuationDB planAttenuationDB `json:"attenuation"`
	Notes         []string          `json:"notes"`
	Netlist       string            `json:"netlist"`
	Placement     placementJSON     `json:"placement"`
	GainDB        float64           `json:"gain_db"`
	Inverting     bool              `json:"inverting"`
	Topologies    []string          `json:"topologies"`
}

// placementJSON says where the target was placed (plan and fit).
type placementJSON struct {
	Used          string   `json:"used"` // "inside" or "edge"
	EdgeHz        float64  `json:"edge_hz"`
	RippleDB      *float64 `json:"ripple_db"`
	PassMarginDB  float64  `json:"pass_margin_db"`
	StopMarginDB  *float64 `json:"stop_margin_db"`
	ShiftFraction *float64 `json:"shift"`
	Why           string   `json:"why"`
}

func placementOf(d *synth.Design) placementJSON {
	p := d.Placing
	j := placementJSON{Used: p.Used.String(), EdgeHz: p.Edge, PassMarginDB: p.PassMargin, Why: p.Why}
	if d.Spec.Approx == synth.Chebyshev {
		r := p.Ripple
		j.RippleDB = &r
	}
	if !math.IsNaN(p.StopMargin) {
		m := p.StopMargin
		j.StopMarginDB = &m
	}
	if !math.IsNaN(p.Shift) {
		sh := p.Shift
		j.ShiftFraction = &sh
	}
	return j
}

type planSectionJSON struct {
	Topology   string              `json:"topology"`
	Name       string              `json:"name"`
	F0Hz       float64             `json:"f0_hz"`
	Q          float64             `json:"q"`
	RealF0Hz   *float64            `json:"real_f0_hz"`
	Reason     string              `json:"reason"`
	GainDB     float64             `json:"gain_db"`
	Inverting  bool                `json:"inverting"`
	Equations  []string            `json:"equations"`
	Components []planComponentJSON `json:"components"`
}

type planComponentJSON struct {
	Ref        string  `json:"ref"`
	Value      float64 `json:"value"` // ohms or farads
	Text       string  `json:"text"`
	Kind       string  `json:"kind"`
	Symbol     string  `json:"symbol"`
	Role       string  `json:"role"`
	Normalised float64 `json:"normalised"`
}

type planAttenuationDB struct {
	Pass float64  `json:"pass_atten_db"`
	Stop *float64 `json:"stop_atten_db"`
}

func runPlan(env *Env, o *planOptions) error {
	spec, err := planSpec(o)
	if err != nil {
		return err
	}
	var anchor float64
	if o.anchor != "" {
		if anchor, err = stock.ParseValue(o.anchor, stock.Capacitor); err != nil {
			return fault.Invalidf("--anchor: %v", err)
		}
	}
	d, err := synth.NewDesign(spec, 0, spec.Odd)
	if err != nil {
		return err
	}
	stages, err := d.Scale(synth.Scaling{Anchor: anchor})
	if err != nil {
		return err
	}
	refs := synth.DefaultRefs(stages)
	lo, hi := d.Band()
	netlist := synth.Netlist(stages, synth.NetlistOptions{
		Title:  planTitle(d),
		FStart: lo, FStop: hi, PointsPerDecade: 50,
		Refs: refs,
	})
	if o.netlist != "" {
		if err := env.writeOutputFile(o.netlist, o.force, func(w io.Writer) error { _, err := io.WriteString(w, netlist); return err }); err != nil {
			return fmt.Errorf("write netlist: %w", err)
		}
	}
	// Attenuation of the analysed (scaled) response, not the ideal target:
	// they agree, and this is what the values deliver.
	// Relative to the passband gain.
	passAtt := synth.Attenuation(synth.CascadeResponse(stages, 2*math.Pi*spec.Pass)) + d.GainDB()
	var stopAtt *float64
	if spec.Stop > 0 {
		a := synth.Attenuation(synth.CascadeResponse(stages, 2*math.Pi*spec.Stop)) + d.GainDB()
		stopAtt = &a
	}
	warnings := rangeWarnings(stages, refs)

	if o.json {
		out := planJSON{
			Order: d.Order, Response: spec.Approx.String(), Kind: spec.Kind.String(),
			PassHz: spec.Pass, PassAttenDB: spec.PassAtten, Odd: d.Odd.String(),
			AttenuationDB: planAttenuationDB{Pass: passAtt, Stop: stopAtt},
			Notes:         append(append([]string{}, d.Notes...), warnings...),
			Netlist:       netlist,
			Placement:     placementOf(d),
			GainDB:        d.GainDB(),
			Inverting:     d.Inverting(),
			Topologies:    []string{},
		}
		if spec.Stop > 0 {
			out.StopHz, out.StopAttenDB = &spec.Stop, &spec.StopAtten
		}
		if spec.Approx == synth.Chebyshev {
			out.RippleDB = &spec.Ripple
		}
		if spec.Approx == synth.Bessel {
			n := spec.BesselNorm.String()
			out.BesselNorm = &n
		}
		for i, sec := range d.Sections {
			norm, err := d.Normalised(i)
			if err != nil {
				return err
			}
			js := planSectionJSON{Topology: sec.Topology.ID(), Name: sec.Topology.Name(), F0Hz: sec.F0, Q: sec.Q, Reason: sec.Reason,
				GainDB: 20 * math.Log10(sec.Gain), Inverting: sec.Topology.Inverting(), Equations: sec.Topology.Equations()}
			out.Topologies = append(out.Topologies, sec.Topology.ID())
			if sec.RealF0 > 0 {
				rf := sec.RealF0
				js.RealF0Hz = &rf
			}
			for j, e := range sec.Topology.Elements() {
				for k, part := range stages[i].Positions[j].Parts {
					js.Components = append(js.Components, planComponentJSON{
						Ref: refs(i, j, k), Value: part, Text: formatPart(part, e.Kind),
						Kind: e.Kind.String(), Symbol: e.Symbol, Role: e.Role, Normalised: norm[j],
					})
				}
			}
			out.Sections = append(out.Sections, js)
		}
		return writeJSON(env.Out, out)
	}

	w := env.Out
	fmt.Fprintln(w, planTitle(d))
	for _, n := range d.Notes {
		fmt.Fprintln(w, "  "+n)
	}
	fmt.Fprintln(w)
	withGain := spec.GainDB > 0 || d.Inverting() || spec.Topology != synth.TopologyAuto
	cols := []string{"stage", "topology", "f0", "Q", "reason"}
	if withGain {
		cols = []string{"stage", "topology", "f0", "Q", "gain", "reason"}
	}
	secs := newGrid(cols...).right(0, 2, 3).wrap(24, len(cols)-1).wrap(12, 1)
	secs.title = "Sections in cascade order"
	for i, sec := range d.Sections {
		q := "-"
		if sec.Q > 0 {
			q = strconv.FormatFloat(sec.Q, 'f', 4, 64)
		}
		f0 := formatHz(sec.F0)
		if sec.RealF0 > 0 {
			f0 += " (real pole " + formatHz(sec.RealF0) + ")"
		}
		if withGain {
			g := formatDB(20*math.Log10(sec.Gain), 2) + " dB"
			if sec.Topology.Inverting() {
				g += ", inverting"
			}
			secs.add(strconv.Itoa(i+1), sec.Topology.Name(), f0, q, g, sec.Reason)
			continue
		}
		secs.add(strconv.Itoa(i+1), sec.Topology.Name(), f0, q, sec.Reason)
	}
	secs.render(env, w)
	fmt.Fprintln(w)
	comps := newGrid("stage", "ref", "element", "role", "normalised", "value").right(0, 4, 5).wrap(12, 3)
	comps.title = "Components (normalised: edge 1 rad/s; scaled by 2π·fp and per-stage impedance)"
	for i, sec := range d.Sections {
		norm, err := d.Normalised(i)
		if err != nil {
			return err
		}
		for j, e := range sec.Topology.Elements() {
			for k, part := range stages[i].Positions[j].Parts {
				comps.add(strconv.Itoa(i+1), refs(i, j, k), e.Symbol, e.Role,
					strconv.FormatFloat(norm[j], 'g', 6, 64), formatPart(part, e.Kind))
			}
		}
	}
	comps.render(env, w)
	if withGain {
		// The design equations of each topology used (Op Amps for
		// Everyone, SLOD006B, ch. 16, from memory; docs/check-values.md,
		// "Section circuits").
		fmt.Fprintln(w)
		fmt.Fprintln(w, "Design equations")
		seen := map[string]bool{}
		for _, sec := range d.Sections {
			t := sec.Topology
			if seen[t.ID()] {
				continue
			}
			seen[t.ID()] = true
			fmt.Fprintf(w, "  %s:\n", t.Name())
			for _, eq := range t.Equations() {
				fmt.Fprintf(w, "    %s\n", eq)
			}
		}
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "Attenuation: %s dB at fp %s (allowed %.3f dB)", formatDB(passAtt, 3), formatHz(spec.Pass), spec.PassAtten)
	if stopAtt != nil {
		fmt.Fprintf(w, ", %s dB at fs %s (required %.4g dB)", formatDB(*stopAtt, 2), formatHz(spec.Stop), spec.StopAtten)
	}
	fmt.Fprintln(w)
	for _, wn := range warnings {
		fmt.Fprintln(w, "Note: "+wn)
	}
	if o.netlist != "" && o.netlist != "-" {
		fmt.Fprintf(w, "SPICE netlist written to %s\n", o.netlist)
	}
	return nil
}

// planTitle is a one-line description of the design.
func planTitle(d *synth.Design) string {
	s := d.Spec
	var b strings.Builder
	fmt.Fprintf(&b, "%s-order %s %s, fp %s", ordinal(d.Order), approxName(s), kindName(s.Kind), formatHz(s.Pass))
	if s.Stop > 0 {
		fmt.Fprintf(&b, ", fs %s with %.4g dB", formatHz(s.Stop), s.StopAtten)
	}
	if g := d.GainDB(); g > 0 {
		fmt.Fprintf(&b, ", gain %.4g dB", g)
	}
	if d.Inverting() {
		b.WriteString(", inverting")
	}
	return b.String()
}

func approxName(s synth.Spec) string {
	switch s.Approx {
	case synth.Chebyshev:
		return fmt.Sprintf("Chebyshev (%.4g dB ripple)", s.Ripple)
	case synth.Bessel:
		if s.BesselNorm == synth.BesselDelay {
			return "Bessel (delay-normalised)"
		}
		return "Bessel"
	}
	return "Butterworth"
}

func kindName(k synth.Kind) string {
	if k == synth.HighPass {
		return "high-pass"
	}
	return "low-pass"
}

func ordinal(n int) string {
	suffix := "th"
	switch {
	case n%100 >= 11 && n%100 <= 13:
	case n%10 == 1:
		suffix = "st"
	case n%10 == 2:
		suffix = "nd"
	case n%10 == 3:
		suffix = "rd"
	}
	return strconv.Itoa(n) + suffix
}

// formatHz writes a frequency to 5 significant digits (see
// synth.FormatFrequency): 1 kHz, 1.0929 kHz, 440 Hz, 0.5 Hz.
func formatHz(f float64) string { return synth.FormatFrequency(f, 5) }

// formatDB writes a number of dB with prec decimals, without a minus sign
// on a value that rounds to zero.
func formatDB(x float64, prec int) string {
	if math.Abs(x) < 0.5*math.Pow10(-prec) {
		x = 0
	}
	return strconv.FormatFloat(x, 'f', prec, 64)
}

// formatPart writes a component value with its unit.
func formatPart(v float64, k synth.PartKind) string {
	if k == synth.Capacitor {
		return stock.FormatValue(v, stock.Capacitor)
	}
	return stock.FormatValue(v, stock.Resistor)
}

// rangeWarnings words the parts outside the practical limits
// (synth.PracticalLimits, the same the fit and the practical checks use).
func rangeWarnings(stages []synth.Stage, refs func(int, int, int) string) []string {
	lim := synth.PracticalLimits
	var out []string
	for _, is := range lim.Outside(stages) {
		ref, val := refs(is.Stage, is.Position, is.Part), formatPart(is.Value, is.Kind)
		switch {
		case is.Kind == synth.Resistor:
			out = append(out, fmt.Sprintf("%s = %s is outside the practical range %s to %s; try another --anchor",
				ref, val, formatPart(lim.RMin, is.Kind), formatPart(lim.RMax, is.Kind)))
		case is.Low:
			out = append(out, fmt.Sprintf("%s = %s is below %s, where stray and op-amp input capacitance matter; try a larger --anchor",
				ref, val, formatPart(lim.CMin, is.Kind)))
		default:
			out = append(out, fmt.Sprintf("%s = %s is above %s, the largest practical capacitor; try a smaller --anchor",
				ref, val, formatPart(lim.CMax, is.Kind)))
		}
	}
	return out
}
