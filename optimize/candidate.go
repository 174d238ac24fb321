package optimize

import (
	"math"
	"sort"

	"drawerfit/stock"
	"drawerfit/synth"
)

// Part is one physical part taken from a stock row.
type Part struct {
	StockID    int64
	Value      float64 // ohms or farads
	Tolerance  float64 // fraction, e.g. 0.01
	Location   string
	Dielectric string
	Package    string
}

// Component is one circuit position of a section as built: a single part or
// two parts in series or parallel.
type Component struct {
	Ref         string // board designator: R1, C4, ...
	Symbol      string // textbook symbol of the position (Cf, Cg, Ra, ...)
	Kind        synth.PartKind
	Value       float64 // the combination's nominal value
	Arrangement synth.Arrangement
	Parts       []Part
}

// Tolerance returns the effective relative tolerance of the combination:
// the parts' tolerances weighted by their share of the total (docs/check-values.md,
// "Real parts").
func (c Component) Tolerance() float64 {
	if len(c.Parts) == 1 {
		return c.Parts[0].Tolerance
	}
	var t float64
	for _, p := range c.Parts {
		t += p.Tolerance * share(c.Kind, c.Arrangement, p.Value, c.Value)
	}
	return t
}

// share is the part's share of a combination's value: for an additive
// arrangement (series R, parallel C) v/total, for a reciprocal one total/v.
func share(k synth.PartKind, a synth.Arrangement, v, total float64) float64 {
	if (a == synth.Series) == (k == synth.Resistor) {
		return v / total
	}
	return total / v
}

// SectionFit is one section of a candidate: the ideal target and the
// components chosen for it.
type SectionFit struct {
	Target     synth.Section
	Components []Component // in Target.Topology.Elements order
	F0         float64     // realised natural frequency, Hz (of the pair for a 3-pole section)
	Q          float64     // realised Q (0 for a 1-pole section)
	RealF0     float64     // realised real-pole frequency of a 3-pole section, Hz
}

// Values returns the nominal element values in Elements order.
func (s *SectionFit) Values() []float64 {
	v := make([]float64, len(s.Components))
	for i, c := range s.Components {
		v[i] = c.Value
	}
	return v
}

// Stage returns the section as a synth.Stage (for netlists and analysis).
func (s *SectionFit) Stage() synth.Stage {
	st := synth.Stage{Topology: s.Target.Topology, Positions: make([]synth.Position, len(s.Components))}
	for i, c := range s.Components {
		parts := make([]float64, len(c.Parts))
		for j, p := range c.Parts {
			parts[j] = p.Value
		}
		st.Positions[i] = synth.Position{Arrangement: c.Arrangement, Parts: parts}
	}
	return st
}

// StockUse is how many parts of one stock row a single board takes.
type StockUse struct {
	StockID  int64
	PerBoard int
}

// Candidate is one buildable design: an order and arrangement, the ideal
// design it approximates, and the parts chosen for every section.
type Candidate struct {
	Design        *synth.Design
	Sections      []SectionFit // cascade order
	ResponseError float64      // dB, largest |candidate - target| on the scoring grid
	PassAtten     float64      // dB at fp, from the candidate's own response
	StopAtten     float64      // dB at fs; NaN when the spec has no fs
	MeetsSpec     bool
	PartCount     int // physical parts per board
	UniqueParts   int // distinct stock rows per board
	StockUse      []StockUse
	// BoardsBuildable is how many boards the stock covers for this design.
	BoardsBuildable int
	// Cautions are the Caution-grade dielectrics (stock.SignalGrade: PET,
	// PEN, PC, film of unstated type) among the candidate's capacitors,
	// sorted; empty when every capacitor is of a precision dielectric.
	Cautions []string
	// CostPerBoard is the parts cost of one board: every physical part
	// (both parts of a pair) at its stock row's unit price. Unknown when a
	// row used has no price.
	CostPerBoard stock.Money
	// Pareto is true when no other listed candidate is at least as good in
	// response error, part count and unique parts and better in one.
	Pareto bool

	// Amp is the amplifier the sections are built with and scored with
	// (nil: ideal amplifiers). With it, ResponseError, PassAtten, StopAtten
	// and MeetsSpec are the figures with its single-pole model; part count,
	// unique rows, stock use and boards buildable include its packages
	// when it is drawn from stock.
	Amp *Amplifier
	// AmpSlots gives each section's amplifier channel (with Amp).
	AmpSlots []AmpSlot
	// AmpPackages is the number of amplifier packages one board takes.
	AmpPackages int
	// IdealAmpError is the response error with ideal amplifiers, dB (with
	// Amp; the figure an ideal-amplifier score would give these parts).
	IdealAmpError float64
}

// GainDB returns the section's passband gain in dB from its built values
// (at DC for a low-pass, at high frequencies for a high-pass).
func (s *SectionFit) GainDB() float64 {
	return 20 * math.Log10(math.Abs(s.Target.Topology.PassbandGain(s.Values())))
}

// GainDB returns the candidate's passband gain in dB from its built values:
// the sum of its sections'.
func (c *Candidate) GainDB() float64 {
	var g float64
	for i := range c.Sections {
		g += c.Sections[i].GainDB()
	}
	return g
}

// Inverting reports whether the candidate inverts the signal (an odd
// number of inverting sections).
func (c *Candidate) Inverting() bool { return c.Design.Inverting() }

// Topologies names the candidate's circuits in cascade order, e.g.
// "MFB + 2 × SK" (synth.Design.TopologySummary).
func (c *Candidate) Topologies() string { return c.Design.TopologySummary() }

// Order returns the filter order of the candidate.
func (c *Candidate) Order() int { return c.Design.Order }

// Stages returns the candidate's sections as synth stages.
func (c *Candidate) Stages() []synth.Stage {
	st := make([]synth.Stage, len(c.Sections))
	for i := range c.Sections {
		st[i] = c.Sections[i].Stage()
	}
	return st
}

// costPerBoard sums the unit prices of the parts one board takes, exactly;
// unknown when a row has no price.
func costPerBoard(use []StockUse, rows []Row) stock.Money {
	price := map[int64]stock.Money{}
	for _, r := range rows {
		price[r.StockID] = r.Price
	}
	var t stock.Tally
	for _, u := range use {
		t.Add(price[u.StockID], u.PerBoard)
	}
	return t.Total()
}

// cautions lists the Caution-grade dielectrics of the candidate's parts.
func cautions(c *Candidate) []string {
	seen := map[string]bool{}
	var out []string
	for _, s := range c.Sections {
		for _, comp := range s.Components {
			for _, p := range comp.Parts {
				d := stock.NormalizeDielectric(p.Dielectric)
				if comp.Kind == synth.Capacitor && stock.SignalGrade(d) == stock.Caution && !seen[d] {
					seen[d] = true
					out = append(out, d)
				}
			}
		}
	}
	sort.Strings(out)
	return out
}
