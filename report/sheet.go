package report

import (
	"bytes"
	_ "embed"
	"fmt"
	"html/template"
	"io"
	"math"
	"strings"
	"time"

	"drawerfit/optimize"
	"drawerfit/respplot"
	"drawerfit/schematic"
	"drawerfit/synth"
)

// Sheet is everything a build sheet shows. Candidate is required; the rest
// is optional, and what is left empty is derived from the candidate where
// that is possible (Spec, Limits, Netlist, Picks).
type Sheet struct {
	// Title heads the page, e.g. "Anti-alias filter, logger board rev B".
	// Empty means a title made from the specification.
	Title string
	// Spec is the specification in one line; empty means one written from
	// Candidate.Design.Spec.
	Spec string
	// Boards is the number of boards the batch builds (0 means 1).
	Boards int
	// Date is the date of the sheet (zero means no date shown).
	Date time.Time
	// StockDB names the stock database or file the parts came from.
	StockDB string
	// DesignID is the saved design's id, when there is one.
	DesignID string
	// Generator names the program that wrote the sheet, e.g.
	// "drawerfit 1.2.0"; empty means "drawerfit".
	Generator string

	Candidate *optimize.Candidate
	// Limits are drawn on the magnitude plot; a zero value means the
	// candidate's design specification.
	Limits respplot.Limits
	// Netlist is the SPICE netlist shown; empty means one written by
	// synth.Netlist with the sheet's part names (see PartRefs).
	Netlist string
	// Yield is the Monte Carlo summary, when yield was run.
	Yield *YieldSummary

	// Notes are the user's own remarks (free text, shown as written).
	Notes []string
	// Warnings are the fit's and the yield analysis's warnings.
	Warnings []string
	// Cautions are added to the standard cautions, which are always shown.
	Cautions []string
	// Picks is the pick list; nil means one derived from everything the
	// sheet puts on the board (see SheetPicks).
	Picks []PickLine

	// BiasResistors are the bias-current compensation resistors fitted for
	// the sections (none: not asked for).
	BiasResistors []BiasResistor
	// Amplifiers are the op-amp channels, one per section; nil means one
	// op-amp per section not chosen from stock (U1, U2, ...).
	Amplifiers []Amplifier
	// Checks are the verdicts of further checks (an op-amp model, ...);
	// the nominal check and the yield's verdict are added by the sheet.
	Checks []Check

	// idPrefix prefixes every element id, so that several sheets can
	// share one page (a board sheet).
	idPrefix string
}

// Check is one verdict in the sheet's header: what was checked and what
// came out.
type Check struct {
	// What names the check, e.g. "With the op-amp model (1 MHz, 100 dB)".
	What string
	// Verdict says what came out, e.g. "meets the specification".
	Verdict string
	// Status is CheckPassed, CheckFailed or CheckNotRun.
	Status CheckStatus
}

// CheckStatus is the outcome of a check.
type CheckStatus int

const (
	// CheckNotRun means the check was not asked for.
	CheckNotRun CheckStatus = iota
	// CheckPassed means the design passed it.
	CheckPassed
	// CheckFailed means the design failed it (the warnings say why).
	CheckFailed
)

func (c CheckStatus) String() string {
	switch c {
	case CheckPassed:
		return "passed"
	case CheckFailed:
		return "failed"
	}
	return "not run"
}

// YieldSummary is what the sheet shows of a Monte Carlo yield analysis.
type YieldSummary struct {
	// Yield is the fraction of trials that passed; CILow and CIHigh bound
	// its 95 % confidence interval.
	Yield, CILow, CIHigh float64
	Trials               int
	Seed                 uint64
	// Dist names the distribution parts were drawn from ("uniform", ...).
	Dist string
	// Facts are further figures as label and formatted value, e.g.
	// {"-3 dB frequency, 5th to 95th percentile", "982 Hz to 1.02 kHz"}.
	Facts []Fact
	// Blame is each component's share of the failures, largest first.
	Blame []BlameLine
	// Advice are sentences for people.
	Advice []string
	// Target is the yield the design is judged against (0: none); below
	// it the yield check fails.
	Target float64
	// Bands are the Monte Carlo envelopes of the magnitude response.
	Bands []respplot.Band
}

// Fact is a labelled, already formatted figure.
type Fact struct{ Label, Value string }

// BlameLine is one component's share of the failing trials.
type BlameLine struct {
	Ref     string  // board designator
	Section int     // 1-based
	Share   float64 // fraction of the failures
}

// PickLine is one line of the pick list: what to take from one bin.
type PickLine struct {
	Location string
	StockID  int64
	// Value is the part as people read it, e.g. "3.3 kΩ 1 % 0603".
	Value string
	// Quantity is the number of parts for the whole batch.
	Quantity int
	// Refs are the part names it fills (see PartRefs).
	Refs []string
}

// StandardCautions are printed on every sheet.
var StandardCautions = []string{
	"Verify the circuit on the bench before production: the design is a small-signal model with ideal op-amps.",
	"Capacitor voltage ratings must suit the circuit: the stock data says nothing about the voltages your board applies.",
	"Circuits for safety-relevant, medical or mains-connected use need review by a qualified person under the applicable local rules.",
}

//go:embed sheet.html.tmpl
var sheetTemplate string

var tmpl = template.Must(template.New("sheet").Parse(sheetTemplate))

// HTML returns the build sheet as one self-contained HTML document.
// Errors: a sheet without a candidate, a candidate without a design or with
// sections that do not match their topology, and plotting failures.
func HTML(s *Sheet) ([]byte, error) {
	v, err := build(s)
	if err != nil {
		return nil, err
	}
	var buf bytes.Buffer
	if err := tmpl.Execute(&buf, v); err != nil {
		return nil, fmt.Errorf("report: render: %w", err)
	}
	return buf.Bytes(), nil
}

// Write writes the build sheet to w (see HTML).
func Write(w io.Writer, s *Sheet) error {
	b, err := HTML(s)
	if err != nil {
		return err
	}
	if _, err := w.Write(b); err != nil {
		return fmt.Errorf("write report: %w", err)
	}
	return nil
}

// view is the template's data: every string formatted, every drawing
// rendered.
type view struct {
	P                                               string // element id prefix
	Title, Spec, Date, StockDB, DesignID, Generator string
	Boards                                          int
	Summary                                         []Fact
	Checks                                          []checkRow
	Verdict                                         string
	Amplifiers                                      []ampRow
	Decoupling, Unused                              string
	Cautions, Warnings, Notes, DesignNotes          []string
	Plots                                           []plotView
	Yield                                           *yieldView
	Sections                                        []sectionView
	BOM                                             []bomRow
	Picks                                           []pickRow
	PickTotal                                       int
	Netlist                                         string
}

type plotView struct {
	Name, Title, Caption string
	SVG                  template.HTML
}

type yieldView struct {
	Headline string
	Facts    []Fact
	Blame    []Fact
	Advice   []string
}

type sectionView struct {
	N         int
	Heading   string
	Facts     []Fact
	SVG       template.HTML
	Reason    string
	OpAmp     string
	Positions int
}

type bomRow struct {
	Ref, Section, Role, Value, MadeOf, Tolerance, Parts string
}

type checkRow struct {
	What, Verdict, Status string
}

type ampRow struct {
	Ref, Section, Part, Bin, Pins, Supply string
}

type pickRow struct {
	Location, Value, Quantity, Refs, StockID string
}

func build(s *Sheet) (*view, error) {
	c := s.Candidate
	if c == nil {
		return nil, fmt.Errorf("report: the sheet has no candidate")
	}
	if c.Design == nil {
		return nil, fmt.Errorf("report: the candidate has no design")
	}
	for i := range c.Sections {
		sf := &c.Sections[i]
		if sf.Target.Topology == nil {
			return nil, fmt.Errorf("report: section %d has no topology", i+1)
		}
		if len(sf.Components) != sf.Target.Topology.NumElements() {
			return nil, fmt.Errorf("report: section %d has %d components for %d positions of %s",
				i+1, len(sf.Components), sf.Target.Topology.NumElements(), sf.Target.Topology.Name())
		}
		for _, comp := range sf.Components {
			if len(comp.Parts) == 0 {
				return nil, fmt.Errorf("report: %s of section %d has no parts", comp.Ref, i+1)
			}
		}
	}
	boards := s.Boards
	if boards <= 0 {
		boards = 1
	}
	v := &view{
		P:     s.idPrefix,
		Title: s.Title, Spec: s.Spec, StockDB: s.StockDB, DesignID: s.DesignID,
		Generator: s.Generator, Boards: boards, Notes: s.Notes, Warnings: s.Warnings,
		DesignNotes: c.Design.Notes,
	}
	if v.Spec == "" {
		v.Spec = SpecLine(c.Design)
	}
	if v.Title == "" {
		v.Title = titleOf(c.Design)
	}
	if v.Generator == "" {
		v.Generator = "drawerfit"
	}
	if !s.Date.IsZero() {
		v.Date = s.Date.Format("2006-01-02")
	}
	v.Cautions = append(append([]string(nil), StandardCautions...), s.Cautions...)
	if !c.MeetsSpec {
		v.Warnings = append([]string{"This candidate does not meet the specification with nominal part values: " +
			"check the attenuation at fp and fs below before building it."}, v.Warnings...)
	}
	amps := s.amplifiers()
	v.Summary = summary(c, s.BiasResistors, amps)
	v.Checks, v.Verdict = checks(s)
	v.Amplifiers = ampRows(amps)
	v.Decoupling = DecouplingNote
	v.Unused = unusedChannels(amps)

	// Plots.
	stages := c.Stages()
	figs, err := s.figures()
	if err != nil {
		return nil, err
	}
	captions := map[string]string{
		"magnitude":   "Gain of the ideal target (solid) and of the nominal parts (dashed); shaded: outside the specification.",
		"phase":       "Phase of the ideal target (solid) and of the nominal parts (dashed).",
		"group-delay": "Group delay of the ideal target (solid) and of the nominal parts (dashed).",
	}
	if s.Yield != nil && len(s.Yield.Bands) > 0 {
		captions["magnitude"] = "Gain of the ideal target (solid), of the nominal parts (dashed) and the Monte Carlo envelope (dotted edges); shaded grey: outside the specification."
	}
	for _, f := range figs {
		b, err := respplot.SVG(f)
		if err != nil {
			return nil, fmt.Errorf("report: %w", err)
		}
		// The SVG comes from respplot, which escapes every text it draws.
		svg := strings.Replace(string(b), `id="plot-`, `id="`+s.idPrefix+`plot-`, 1)
		v.Plots = append(v.Plots, plotView{Name: f.Name, Title: f.Title, Caption: captions[f.Name], SVG: template.HTML(svg)})
	}

	// Sections and their schematics.
	refs := PartRefs(c)
	for i := range c.Sections {
		sv, err := section(s, i, amps)
		if err != nil {
			return nil, err
		}
		v.Sections = append(v.Sections, sv)
	}
	v.BOM = bom(c, refs, s.BiasResistors, amps)

	picks := s.Picks
	if picks == nil {
		picks = SheetPicks(s)
	}
	for _, p := range picks {
		row := pickRow{Location: p.Location, Value: p.Value, Quantity: fmt.Sprint(p.Quantity),
			Refs: strings.Join(p.Refs, ", ")}
		if p.StockID != 0 {
			row.StockID = fmt.Sprint(p.StockID)
		}
		v.Picks = append(v.Picks, row)
		v.PickTotal += p.Quantity
	}

	v.Netlist = s.Netlist
	if v.Netlist == "" && len(stages) > 0 {
		v.Netlist = synth.Netlist(stages, synth.NetlistOptions{Title: v.Title, Refs: refs})
	}
	v.Netlist = withBiasComments(v.Netlist, s.BiasResistors)
	if s.Yield != nil {
		v.Yield = yieldOf(s.Yield)
	}
	return v, nil
}

// Response returns what the plots of candidate c show: the ideal target
// (the design's own), the nominal response of the parts (ideal op-amps) and
// the specification's limits (lim, or the design's specification when lim
// is zero). The terminal sketch of a candidate is
// respplot.Sketch(report.Response(c, respplot.Limits{}), 60, 12).
func Response(c *optimize.Candidate, lim respplot.Limits) *respplot.Response {
	spec := c.Design.Spec
	if lim == (respplot.Limits{}) {
		lim = respplot.Limits{Fp: spec.Pass, Ap: spec.PassAtten, Fs: spec.Stop, As: spec.StopAtten}
	}
	stages := c.Stages()
	return &respplot.Response{
		Kind:    spec.Kind,
		Target:  c.Design.Target,
		Nominal: func(w float64) complex128 { return synth.CascadeResponse(stages, w) },
		Limits:  lim,
	}
}

// figures returns the sheet's plots (magnitude, phase, group delay).
func (s *Sheet) figures() ([]respplot.Figure, error) {
	if s.Candidate == nil || s.Candidate.Design == nil {
		return nil, fmt.Errorf("report: the sheet has no candidate with a design")
	}
	r := Response(s.Candidate, s.Limits)
	if s.Yield != nil {
		r.Bands = s.Yield.Bands
	}
	figs, err := respplot.Figures(r)
	if err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	return figs, nil
}

// WritePNGs writes the sheet's plots as PNG files into dir (which must
// exist): PREFIX-magnitude.png, PREFIX-phase.png and PREFIX-group-delay.png,
// or without "PREFIX-" when prefix is empty. It returns the paths written.
func WritePNGs(s *Sheet, dir, prefix string) ([]string, error) {
	figs, err := s.figures()
	if err != nil {
		return nil, err
	}
	return respplot.WritePNGs(dir, prefix, figs)
}

// SpecLine writes a design's specification in one line, e.g.
// "Butterworth low-pass, order 4: at most 3.01 dB down at 1 kHz, at least
// 40 dB down from 3 kHz".
func SpecLine(d *synth.Design) string {
	s := d.Spec
	var b strings.Builder
	fmt.Fprintf(&b, "%s %s, order %d", approxName(s.Approx), kindName(s.Kind), d.Order)
	switch {
	case s.Approx == synth.Chebyshev && s.Kind == synth.HighPass:
		fmt.Fprintf(&b, ": %s dB ripple above %s", num(s.PassAtten, 3), hz(s.Pass))
	case s.Approx == synth.Chebyshev:
		fmt.Fprintf(&b, ": %s dB ripple up to %s", num(s.PassAtten, 3), hz(s.Pass))
	default:
		fmt.Fprintf(&b, ": at most %s dB down at %s", num(s.PassAtten, 3), hz(s.Pass))
	}
	if s.Stop > 0 {
		dir := "from"
		if s.Kind == synth.HighPass {
			dir = "below"
		}
		fmt.Fprintf(&b, ", at least %s dB down %s %s", num(s.StopAtten, 3), dir, hz(s.Stop))
	}
	return b.String()
}

func titleOf(d *synth.Design) string {
	return fmt.Sprintf("%s %s filter, %s", approxName(d.Spec.Approx), kindName(d.Spec.Kind), hz(d.Spec.Pass))
}

func approxName(a synth.Approx) string {
	switch a {
	case synth.Chebyshev:
		return "Chebyshev"
	case synth.Bessel:
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

func hz(f float64) string { return synth.FormatFrequency(f, 4) }

// num writes x with up to sig significant digits and no exponent.
func num(x float64, sig int) string {
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return fmt.Sprint(x)
	}
	d := sig - 1 - int(math.Floor(math.Log10(math.Abs(x))))
	if d < 0 {
		d = 0
	}
	s := fmt.Sprintf("%.*f", d, x)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return s
}

func pct(x float64) string { return num(100*x, 3) + "%" }

func summary(c *optimize.Candidate, bias []BiasResistor, amps []Amplifier) []Fact {
	f := []Fact{
		{"Order and sections", fmt.Sprintf("%d: %s", c.Design.Order, sectionList(c))},
		{"Attenuation at fp", num(c.PassAtten, 3) + " dB"},
	}
	if c.Design.Spec.Stop > 0 && !math.IsNaN(c.StopAtten) {
		f = append(f, Fact{"Attenuation at fs", num(c.StopAtten, 3) + " dB"})
	}
	f = append(f,
		Fact{"Largest deviation from the ideal target", num(c.ResponseError, 2) + " dB"},
		Fact{"Parts per board", partsPerBoard(c, bias, amps)},
		Fact{"Distinct stock rows", fmt.Sprint(distinctRows(c, bias, amps))},
	)
	if c.BoardsBuildable > 0 {
		f = append(f, Fact{"Boards the stock covers", fmt.Sprint(c.BoardsBuildable)})
	}
	return f
}

func sectionList(c *optimize.Candidate) string {
	names := make([]string, len(c.Sections))
	for i, s := range c.Sections {
		names[i] = fmt.Sprintf("%d-pole", s.Target.Topology.Poles())
	}
	return strings.Join(names, " + ")
}

func unit(k synth.PartKind) string {
	if k == synth.Capacitor {
		return "F"
	}
	return "Ω"
}

// Value writes a component's nominal value, e.g. "15.3 kΩ" (four
// significant digits, enough for any two-part combination of E192 values to
// read differently from its neighbours).
func Value(c optimize.Component) string { return respplot.FormatEng(c.Value, unit(c.Kind), 4) }

// PartValue writes one part's value with three significant digits, as the
// E-series print them.
func PartValue(k synth.PartKind, p optimize.Part) string {
	return respplot.FormatEng(p.Value, unit(k), 3)
}

// MadeOf says what a component is made of: "12 kΩ + 3.3 kΩ series",
// "1 nF + 470 pF parallel", or "one part" for a single part.
func MadeOf(c optimize.Component) string {
	if len(c.Parts) <= 1 || c.Arrangement == synth.Single {
		return "one part"
	}
	vals := make([]string, len(c.Parts))
	for i, p := range c.Parts {
		vals[i] = PartValue(c.Kind, p)
	}
	return strings.Join(vals, " + ") + " " + c.Arrangement.String()
}

// PartRefs names every physical part of c for the sheet and the netlist:
// a component's designator for a single part (R3), with a letter added per
// part for a combination (R3a, R3b). The function has the signature of
// synth.NetlistOptions.Refs; stage, element and part indexes count from 0.
// It panics for indexes outside the candidate.
func PartRefs(c *optimize.Candidate) func(stage, elem, part int) string {
	return func(stage, elem, part int) string {
		comp := c.Sections[stage].Components[elem]
		if len(comp.Parts) == 1 {
			return comp.Ref
		}
		return comp.Ref + string(rune('a'+part))
	}
}

func section(s *Sheet, i int, amps []Amplifier) (sectionView, error) {
	c := s.Candidate
	sf := &c.Sections[i]
	t := sf.Target.Topology
	op := fmt.Sprintf("U%d", i+1)
	var pins *schematic.Pins
	opFact := Fact{op, "op-amp of your choice; pins: see the part's data sheet"}
	if a, ok := amplifierFor(amps, i+1); ok {
		row := ampRows([]Amplifier{a})[0]
		op = a.Name()
		opFact = Fact{op, row.Part + "; pins: " + row.Pins}
		if a.Pins != nil {
			pins = &schematic.Pins{Plus: a.Pins.Plus, Minus: a.Pins.Minus, Out: a.Pins.Out}
		}
	}
	var bias *schematic.Label
	for _, b := range s.BiasResistors {
		if b.Section == i+1 {
			lb := schematic.Label{Ref: b.Component.Ref, Value: "not in stock"}
			if len(b.Component.Parts) > 0 {
				lb.Value = Value(b.Component)
				if len(b.Component.Parts) > 1 {
					lb.Makeup = MadeOf(b.Component)
				}
				for _, p := range b.Component.Parts {
					lb.Bins = append(lb.Bins, p.Location)
				}
			}
			bias = &lb
		}
	}
	labels := make([]schematic.Label, len(sf.Components))
	for j, comp := range sf.Components {
		lb := schematic.Label{Ref: comp.Ref, Value: Value(comp)}
		if len(comp.Parts) > 1 {
			lb.Makeup = MadeOf(comp)
		}
		for _, p := range comp.Parts {
			lb.Bins = append(lb.Bins, p.Location)
		}
		labels[j] = lb
	}
	in, out := "in", "out"
	if i > 0 {
		in = "from section " + fmt.Sprint(i)
	}
	if i < len(c.Sections)-1 {
		out = fmt.Sprintf("to section %d", i+2)
	}
	svg, err := schematic.SVG(t, schematic.Options{
		ID: fmt.Sprintf("%ssch-%d", s.idPrefix, i+1), Title: fmt.Sprintf("Section %d: %s", i+1, t.Name()),
		Labels: labels, OpAmp: op, In: in, Out: out, Bias: bias, Pins: pins,
	})
	if err != nil {
		return sectionView{}, fmt.Errorf("report: section %d: %w", i+1, err)
	}
	sv := sectionView{
		N: i + 1, Heading: fmt.Sprintf("Section %d of %d: %s", i+1, len(c.Sections), t.Name()),
		SVG: template.HTML(svg), Reason: sf.Target.Reason, OpAmp: op, Positions: len(sf.Components),
	}
	switch t.Poles() {
	case 1:
		sv.Facts = []Fact{{"Pole frequency, target", hz(sf.Target.F0)}, {"Pole frequency, built", hz(sf.F0)}}
	default:
		sv.Facts = []Fact{
			{"f0 target", hz(sf.Target.F0)}, {"f0 built", hz(sf.F0)},
			{"Q target", num(sf.Target.Q, 4)}, {"Q built", num(sf.Q, 4)},
		}
		if t.Poles() == 3 {
			sv.Facts = append(sv.Facts, Fact{"Real pole target", hz(sf.Target.RealF0)}, Fact{"Real pole built", hz(sf.RealF0)})
		}
	}
	sv.Facts = append(sv.Facts, opFact)
	return sv, nil
}

func bom(c *optimize.Candidate, refs func(int, int, int) string, bias []BiasResistor, amps []Amplifier) []bomRow {
	var rows []bomRow
	partsOf := func(comp optimize.Component, ref func(k int) string) string {
		var parts []string
		for k, p := range comp.Parts {
			parts = append(parts, fmt.Sprintf("%s: %s from %s", ref(k), PartDesc(comp.Kind, p), locOrDash(p.Location)))
		}
		return strings.Join(parts, "; ")
	}
	for i := range c.Sections {
		sf := &c.Sections[i]
		t := sf.Target.Topology
		for j, comp := range sf.Components {
			rows = append(rows, bomRow{
				Ref: comp.Ref, Section: fmt.Sprint(i + 1), Role: ElementRole(t, t.Elements()[j]),
				Value: Value(comp), MadeOf: MadeOf(comp), Tolerance: pct(comp.Tolerance()),
				Parts: partsOf(comp, func(k int) string { return refs(i, j, k) }),
			})
		}
		for _, b := range bias {
			if b.Section != i+1 {
				continue
			}
			comp := b.Component
			row := bomRow{Ref: comp.Ref, Section: fmt.Sprint(i + 1),
				Role:  "bias-current compensation resistor, output to - input (optional)",
				Value: "not in stock", MadeOf: "-", Tolerance: "-",
				Parts: "nothing suitable in stock: wanted " + respplot.FormatEng(b.Ohms, "Ω", 4)}
			if len(comp.Parts) > 0 {
				row.Value, row.MadeOf, row.Tolerance = Value(comp), MadeOf(comp), pct(comp.Tolerance())
				row.Parts = partsOf(comp, func(k int) string {
					if len(comp.Parts) == 1 {
						return comp.Ref
					}
					return comp.Ref + string(rune('a'+k))
				})
			}
			rows = append(rows, row)
		}
		if a, ok := amplifierFor(amps, i+1); ok {
			part := a.Part
			if part == "" {
				part = "op-amp of your choice (not chosen from stock)"
			} else {
				part += " from " + locOrDash(a.Location)
			}
			rows = append(rows, bomRow{Ref: a.Name(), Section: fmt.Sprint(i + 1), Role: "op-amp, unity-gain follower",
				Value: "-", MadeOf: "-", Tolerance: "-", Parts: part})
		}
	}
	return rows
}

func locOrDash(l string) string {
	if l == "" {
		return "(no location)"
	}
	return l
}

// DerivePicks returns the pick list of c for a batch of boards: one line per
// stock row, sorted by location and then by stock id, with the quantity for
// the whole batch and the part names it fills (see PartRefs).
func DerivePicks(c *optimize.Candidate, boards int) []PickLine {
	if boards <= 0 {
		boards = 1
	}
	refs := PartRefs(c)
	type key struct {
		id  int64
		loc string
		val string
	}
	idx := map[key]int{}
	var out []PickLine
	for i := range c.Sections {
		for j, comp := range c.Sections[i].Components {
			for k, p := range comp.Parts {
				kk := key{p.StockID, p.Location, PartDesc(comp.Kind, p)}
				n, ok := idx[kk]
				if !ok {
					n = len(out)
					idx[kk] = n
					out = append(out, PickLine{Location: p.Location, StockID: p.StockID, Value: kk.val})
				}
				out[n].Quantity += boards
				out[n].Refs = append(out[n].Refs, refs(i, j, k))
			}
		}
	}
	sortPicks(out)
	return out
}

func sortPicks(p []PickLine) {
	// Insertion sort keeps equal keys in first-use order; lists are short.
	less := func(a, b PickLine) bool {
		if a.Location != b.Location {
			return a.Location < b.Location
		}
		return a.StockID < b.StockID
	}
	for i := 1; i < len(p); i++ {
		for j := i; j > 0 && less(p[j], p[j-1]); j-- {
			p[j], p[j-1] = p[j-1], p[j]
		}
	}
}

func yieldOf(y *YieldSummary) *yieldView {
	v := &yieldView{Advice: y.Advice}
	v.Headline = fmt.Sprintf("%s of %d simulated boards pass (95 %% confidence interval %s to %s).",
		pct(y.Yield), y.Trials, pct(y.CILow), pct(y.CIHigh))
	dist := y.Dist
	if dist == "" {
		dist = "uniform"
	}
	v.Facts = append([]Fact{
		{"Trials", fmt.Sprint(y.Trials)},
		{"Seed", fmt.Sprint(y.Seed)},
		{"Part values drawn", dist + " within each stock row's tolerance"},
	}, y.Facts...)
	for _, b := range y.Blame {
		label := b.Ref
		if b.Section > 0 {
			label = fmt.Sprintf("%s (section %d)", b.Ref, b.Section)
		}
		v.Blame = append(v.Blame, Fact{label, pct(b.Share)})
	}
	return v
}
