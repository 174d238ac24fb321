package report

import (
	"fmt"
	"strconv"
	"strings"

	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// BiasResistor is a bias-current compensation resistor of one section: it
// goes from the follower's output to its - input, equals the section's DC
// source resistance and does not change the response.
type BiasResistor struct {
	// Section is 1-based.
	Section int
	// Component is the part or combination fitted from stock; its Ref is
	// the board designator. No Parts means nothing suitable was in stock.
	Component optimize.Component
	// Ohms is the resistance wanted; Path names the resistors it matches
	// ("R1+R2").
	Ohms float64
	Path string
}

// Amplifier is one op-amp channel on the board.
type Amplifier struct {
	// Ref is the package's designator (U1); Channel names the channel
	// within a multi-channel package ("A", "B"), empty for a single one.
	Ref, Channel string
	// Section is the 1-based section the channel drives.
	Section int
	// Part describes the stocked part (model, package); empty means the
	// op-amp was not chosen from stock.
	Part     string
	Location string
	StockID  int64
	// Pins are the channel's pin numbers from the stock's pinout of the
	// package; nil means the stock gives none (the sheet then says to see
	// the part's data sheet).
	Pins *Pins
	// Channels is the number of amplifiers in the package (0: unknown);
	// the sheet names the channels no section uses.
	Channels int
}

// Pins are the pin numbers of one op-amp channel and of its package's
// supply pins, as text ("3"); empty fields are unknown.
type Pins struct {
	Plus, Minus, Out, VPos, VNeg string
}

// Name is the channel's designator as the sheet prints it: U1, or U1A for
// channel A of package U1.
func (a Amplifier) Name() string { return a.Ref + a.Channel }

// unusedChannels says which channels of multi-channel packages no section
// uses, and what to do with them.
func unusedChannels(amps []Amplifier) string {
	used := map[string]map[string]bool{}
	size := map[string]int{}
	var order []string
	for _, a := range amps {
		if used[a.Ref] == nil {
			used[a.Ref] = map[string]bool{}
			order = append(order, a.Ref)
		}
		used[a.Ref][a.Channel] = true
		size[a.Ref] = max(size[a.Ref], a.Channels)
	}
	var spare []string
	for _, ref := range order {
		for k := 0; k < size[ref] && size[ref] > 1; k++ {
			ch := string(rune('A' + k))
			if !used[ref][ch] {
				spare = append(spare, ref+ch)
			}
		}
	}
	if len(spare) == 0 {
		return ""
	}
	return fmt.Sprintf("Unused channel %s: wire it as a follower (output to - input) with its + input at signal ground or mid-supply, so that it does not oscillate or draw extra current (common practice, no source).",
		strings.Join(spare, ", "))
}

// DecouplingNote is printed with the amplifiers.
const DecouplingNote = "Decouple every op-amp package's supply pins: a 100 nF ceramic capacitor from each supply pin to ground, as close to the pins as the board allows (common practice, no source)."

// PartDesc describes a stocked part without its bin, as the stock lists
// it: "3.3 nF 5% C0G 0805" (stock.Item.Label). The sheet, the board sheet
// and the terminal use this one description.
func PartDesc(k synth.PartKind, p optimize.Part) string {
	kind := stock.Resistor
	if k == synth.Capacitor {
		kind = stock.Capacitor
	}
	return stock.Item{Kind: kind, Value: p.Value, Tolerance: p.Tolerance, Dielectric: p.Dielectric, Package: p.Package}.Label()
}

// ElementRole says in words what an element of a section does, from where
// it sits in the topology: "input resistor", "feedback capacitor",
// "capacitor from + input to ground", "series resistor to + input".
func ElementRole(t *synth.Topology, e synth.Element) string {
	kind := e.Kind.String()
	other := func(n string) string {
		if e.From == n {
			return e.To
		}
		return e.From
	}
	touches := func(n string) bool { return e.From == n || e.To == n }
	switch {
	case touches("out"):
		return "feedback " + kind
	case touches("in"):
		return "input " + kind
	case touches("0") && other("0") == t.Plus():
		return kind + " from + input to ground"
	case touches("0"):
		return kind + " to ground"
	case touches(t.Plus()):
		return "series " + kind + " to + input"
	}
	return "series " + kind
}

// NextDesignator returns the designator after the highest one of c with
// the given letter ("R" → "R11" when R10 is the highest), skipping n more:
// a part added to the board (a bias resistor) takes the next free number.
func NextDesignator(c *optimize.Candidate, letter string, n int) string {
	high := 0
	for _, sf := range c.Sections {
		for _, comp := range sf.Components {
			if rest, ok := strings.CutPrefix(comp.Ref, letter); ok {
				if k, err := strconv.Atoi(rest); err == nil && k > high {
					high = k
				}
			}
		}
	}
	return letter + strconv.Itoa(high+1+n)
}

// amplifiers returns the sheet's amplifiers: as given, or one op-amp not
// chosen from stock per section (U1, U2, ...).
func (s *Sheet) amplifiers() []Amplifier {
	if s.Amplifiers != nil {
		return s.Amplifiers
	}
	out := make([]Amplifier, len(s.Candidate.Sections))
	for i := range out {
		out[i] = Amplifier{Ref: fmt.Sprintf("U%d", i+1), Section: i + 1}
	}
	return out
}

// amplifierFor returns the amplifier of section n (1-based), if any.
func amplifierFor(amps []Amplifier, n int) (Amplifier, bool) {
	for _, a := range amps {
		if a.Section == n {
			return a, true
		}
	}
	return Amplifier{}, false
}

// notFromStock is the pick list's bin for parts the stock does not hold.
const notFromStock = "(not from stock)"

// SheetPicks returns the pick list of everything soldered on the sheet's
// boards: the candidate's parts, the bias resistors and the amplifier
// packages (one per package, however many channels it has), one line per
// stock row, sorted by location and stock id, quantities for the batch.
// Amplifiers not chosen from stock get a line with no bin.
func SheetPicks(s *Sheet) []PickLine {
	boards := max(s.Boards, 1)
	picks := DerivePicks(s.Candidate, boards)
	add := func(loc string, id int64, desc, ref string) {
		for i := range picks {
			if picks[i].StockID == id && picks[i].Location == loc && picks[i].Value == desc {
				picks[i].Quantity += boards
				picks[i].Refs = append(picks[i].Refs, ref)
				return
			}
		}
		picks = append(picks, PickLine{Location: loc, StockID: id, Value: desc, Quantity: boards, Refs: []string{ref}})
	}
	for _, b := range s.BiasResistors {
		for k, p := range b.Component.Parts {
			ref := b.Component.Ref
			if len(b.Component.Parts) > 1 {
				ref += string(rune('a' + k))
			}
			add(p.Location, p.StockID, PartDesc(synth.Resistor, p), ref)
		}
	}
	seen := map[string]bool{}
	for _, a := range s.amplifiers() {
		if seen[a.Ref] {
			continue
		}
		seen[a.Ref] = true
		desc, loc := a.Part, a.Location
		if desc == "" {
			desc, loc = "op-amp of your choice", notFromStock
		}
		add(loc, a.StockID, desc, a.Ref)
	}
	sortPicks(picks)
	return picks
}

// partsPerBoard counts what is soldered on one board: passive parts (the
// filter's and the bias resistors) and op-amp packages.
func partsPerBoard(c *optimize.Candidate, bias []BiasResistor, amps []Amplifier) string {
	filter := 0
	for _, sf := range c.Sections {
		for _, comp := range sf.Components {
			filter += len(comp.Parts)
		}
	}
	nb := 0
	for _, b := range bias {
		nb += len(b.Component.Parts)
	}
	pk := map[string]bool{}
	for _, a := range amps {
		pk[a.Ref] = true
	}
	s := plural(filter+nb, "passive part", "passive parts")
	if nb > 0 {
		s += fmt.Sprintf(" (%d in the filter, %d in %s)", filter, nb, plural(len(bias), "bias resistor", "bias resistors"))
	}
	return s + ", " + plural(len(pk), "op-amp package", "op-amp packages")
}

// distinctRows counts the distinct stock rows the board takes parts from.
func distinctRows(c *optimize.Candidate, bias []BiasResistor, amps []Amplifier) int {
	rows := map[int64]bool{}
	for _, sf := range c.Sections {
		for _, comp := range sf.Components {
			for _, p := range comp.Parts {
				rows[p.StockID] = true
			}
		}
	}
	for _, b := range bias {
		for _, p := range b.Component.Parts {
			rows[p.StockID] = true
		}
	}
	for _, a := range amps {
		if a.Part != "" {
			rows[a.StockID] = true
		}
	}
	delete(rows, 0)
	return len(rows)
}

// plural writes "1 board" or "3 boards".
func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}

// checks returns the header's verdicts: the nominal check, the further
// checks given (or a line saying no op-amp model was checked) and the
// yield, then one sentence that sums them up.
func checks(s *Sheet) ([]checkRow, string) {
	c := s.Candidate
	spec := c.Design.Spec
	figs := num(c.PassAtten, 3) + " dB at fp"
	if spec.Stop > 0 && c.StopAtten == c.StopAtten {
		figs += ", " + num(c.StopAtten, 3) + " dB at fs"
	}
	what := "Nominal part values, ideal op-amps"
	if a := c.Amp; a != nil {
		// The fit scored the parts with this amplifier's model: the figures
		// are with it, so the op-amp is checked by this line.
		what = fmt.Sprintf("Nominal part values with the op-amp model (%s: single pole, %s gain-bandwidth)", a.Label, hz(a.Model.GBW))
	}
	nominal := Check{What: what, Status: CheckPassed,
		Verdict: "meets the specification (" + figs + ")"}
	if !c.MeetsSpec {
		nominal.Status, nominal.Verdict = CheckFailed, "does not meet the specification ("+figs+")"
	}
	all := []Check{nominal}
	all = append(all, s.Checks...)
	if len(s.Checks) == 0 && c.Amp == nil {
		all = append(all, Check{What: "With an op-amp model", Verdict: "not checked (the figures assume ideal op-amps)"})
	}
	if y := s.Yield; y != nil {
		ch := Check{What: fmt.Sprintf("Yield with the stock's tolerances (%s)", plural(y.Trials, "simulated board", "simulated boards")),
			Verdict: fmt.Sprintf("%s pass (95%% interval %s to %s)", pct(y.Yield), pct(y.CILow), pct(y.CIHigh)), Status: CheckPassed}
		if y.Target > 0 {
			if y.Yield >= y.Target {
				ch.Verdict += ", at least the target " + pct(y.Target)
			} else {
				ch.Verdict += ", below the target " + pct(y.Target)
				ch.Status = CheckFailed
			}
		}
		all = append(all, ch)
	} else {
		all = append(all, Check{What: "Yield with the stock's tolerances", Verdict: "not simulated"})
	}
	var rows []checkRow
	var failed, notRun []string
	for _, ch := range all {
		rows = append(rows, checkRow{What: ch.What, Verdict: ch.Verdict, Status: strings.ReplaceAll(ch.Status.String(), " ", "-")})
		switch ch.Status {
		case CheckFailed:
			failed = append(failed, ch.What)
		case CheckNotRun:
			notRun = append(notRun, ch.What)
		}
	}
	var verdict string
	switch {
	case len(failed) > 0:
		verdict = "Not ready to build as it stands. Failed: " + strings.Join(failed, "; ") + "."
	case len(notRun) > 0:
		verdict = "Passes every check that was run. Not run: " + strings.Join(notRun, "; ") + "."
	default:
		verdict = "Passes every check that was run."
	}
	if len(s.Warnings) > 0 || !c.MeetsSpec {
		verdict += " Read the warnings below before building."
	}
	return rows, verdict
}

// ampRows are the amplifier table's rows.
func ampRows(amps []Amplifier) []ampRow {
	const dataSheet = "see the part's data sheet"
	var rows []ampRow
	for _, a := range amps {
		r := ampRow{Ref: a.Name(), Section: fmt.Sprint(a.Section), Part: a.Part, Bin: a.Location,
			Pins: dataSheet, Supply: dataSheet}
		if r.Part == "" {
			r.Part, r.Bin = "op-amp of your choice (unity-gain stable)", notFromStock
		}
		if p := a.Pins; p != nil {
			pin := func(n string) string {
				if n == "" {
					return "?"
				}
				return n
			}
			r.Pins = fmt.Sprintf("+ in %s, - in %s, out %s", pin(p.Plus), pin(p.Minus), pin(p.Out))
			if p.VPos != "" || p.VNeg != "" {
				r.Supply = fmt.Sprintf("V+ %s, V- %s", pin(p.VPos), pin(p.VNeg))
			}
		}
		rows = append(rows, r)
	}
	return rows
}

// withBiasComments adds the bias resistors to the netlist as comments
// before its ".end" line: the ideal op-amp model has no - input node, and
// the resistors do not change the response.
func withBiasComments(netlist string, bias []BiasResistor) string {
	if len(bias) == 0 || netlist == "" {
		return netlist
	}
	var b strings.Builder
	for _, br := range bias {
		what := "not in stock"
		if len(br.Component.Parts) > 0 {
			what = strconv.FormatFloat(br.Component.Value, 'g', -1, 64) + " ohms"
		}
		fmt.Fprintf(&b, "* %s: bias-current compensation of section %d, %s, from the op-amp's output to its - input (not simulated: no effect on the response)\n",
			br.Component.Ref, br.Section, what)
	}
	i := strings.LastIndex(netlist, ".end")
	if i < 0 {
		return netlist + b.String()
	}
	return netlist[:i] + b.String() + netlist[i:]
}
