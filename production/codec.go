package production

import (
	"encoding/json"
	"fmt"
	"math"
	"strconv"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/synth"
)

// documentFormat is the version of the stored design document. A change
// that older code cannot read gets a new number; DecodeDesign refuses
// numbers it does not know.
const documentFormat = 1

// The stored document. Enumerations are stored by name, not number, so
// that reordering a Go constant cannot change a saved design.
type docDesign struct {
	Format   int         `json:"format"`
	Name     string      `json:"name"`
	Boards   int         `json:"boards"`
	Rank     int         `json:"rank"`
	Pareto   bool        `json:"pareto"`
	Settings Settings    `json:"settings"`
	Filters  []docFilter `json:"filters"`
}

type docFilter struct {
	Label     string       `json:"label"`
	Spec      docSpec      `json:"spec"`
	Candidate docCandidate `json:"candidate"`
}

type docSpec struct {
	Kind       string  `json:"kind"`
	Response   string  `json:"response"`
	Pass       float64 `json:"pass_hz"`
	PassAtten  float64 `json:"pass_atten_db"`
	Stop       float64 `json:"stop_hz"`
	StopAtten  float64 `json:"stop_atten_db"`
	Ripple     float64 `json:"ripple_db"`
	Order      int     `json:"order"`
	Odd        string  `json:"odd"`
	BesselNorm string  `json:"bessel_norm"`
	// Placement is "inside" when the target was placed inside the
	// specification; empty (documents before it existed) is the classical
	// placement.
	Placement string `json:"placement,omitempty"`
	// GainDB, Polarity and Topology are the passband gain and the choices
	// of circuit (empty or zero: unity gain, any polarity, auto).
	GainDB   float64 `json:"gain_db,omitempty"`
	Polarity string  `json:"polarity,omitempty"`
	Topology string  `json:"topology,omitempty"`
}

type docCandidate struct {
	Order           int          `json:"order"`
	Odd             string       `json:"odd"`
	ResponseError   float64      `json:"response_error_db"`
	PassAtten       float64      `json:"pass_atten_db"`
	StopAtten       *float64     `json:"stop_atten_db"`
	MeetsSpec       bool         `json:"meets_spec"`
	PartCount       int          `json:"part_count"`
	UniqueParts     int          `json:"unique_parts"`
	BoardsBuildable int          `json:"boards_buildable"`
	Pareto          bool         `json:"pareto"`
	Sections        []docSection `json:"sections"`
	StockUse        []docUse     `json:"stock_use"`
	// Amp is the amplifier the candidate was fitted with; absent (documents
	// before amplifiers, or ideal ones) means ideal amplifiers.
	Amp *docAmp `json:"amp,omitempty"`
}

// docAmp is a candidate's amplifier: the row (0 for a generic one), its
// figures as fitted, and each section's package and channel.
type docAmp struct {
	StockID       int64    `json:"stock_id"`
	Label         string   `json:"label"`
	Channels      int      `json:"channels"`
	Location      string   `json:"location"`
	Package       string   `json:"package"`
	GBW           float64  `json:"gbw_hz"`
	DCGain        float64  `json:"dc_gain"` // V/V
	DCGainAssumed bool     `json:"dc_gain_assumed,omitempty"`
	Packages      int      `json:"packages"`
	Slots         [][2]int `json:"slots"` // per section: package (1-based), channel (0-based)
	IdealError    float64  `json:"ideal_error_db"`
}

type docSection struct {
	Topology   string         `json:"topology"`
	F0         float64        `json:"f0_hz"`
	Q          float64        `json:"q"`
	RealF0     float64        `json:"real_f0_hz"`
	Components []docComponent `json:"components"`
}

type docComponent struct {
	Ref         string    `json:"ref"`
	Symbol      string    `json:"symbol"`
	Kind        string    `json:"kind"`
	Value       float64   `json:"value"`
	Arrangement string    `json:"arrangement"`
	Parts       []docPart `json:"parts"`
}

type docPart struct {
	StockID    int64   `json:"stock_id"`
	Value      float64 `json:"value"`
	Tolerance  float64 `json:"tolerance"`
	Location   string  `json:"location"`
	Dielectric string  `json:"dielectric"`
	Package    string  `json:"package"`
}

type docUse struct {
	StockID  int64 `json:"stock_id"`
	PerBoard int   `json:"per_board"`
}

func specDoc(s synth.Spec) docSpec {
	d := docSpec{Kind: s.Kind.String(), Response: s.Approx.String(), Pass: s.Pass, PassAtten: s.PassAtten,
		Stop: s.Stop, StopAtten: s.StopAtten, Ripple: s.Ripple, Order: s.Order, BesselNorm: s.BesselNorm.String()}
	if s.Odd != synth.OddDefault {
		d.Odd = s.Odd.String()
	}
	if s.Placement != synth.PlaceEdge {
		d.Placement = s.Placement.String()
	}
	d.GainDB = s.GainDB
	if s.Polarity != synth.PolarityAny {
		d.Polarity = s.Polarity.String()
	}
	if s.Topology != synth.TopologyAuto {
		d.Topology = s.Topology.String()
	}
	return d
}

func (d docSpec) spec() (synth.Spec, error) {
	s := synth.Spec{Pass: d.Pass, PassAtten: d.PassAtten, Stop: d.Stop, StopAtten: d.StopAtten, Ripple: d.Ripple, Order: d.Order}
	var err error
	if s.Kind, err = synth.ParseKind(d.Kind); err != nil {
		return s, err
	}
	if s.Approx, err = synth.ParseApprox(d.Response); err != nil {
		return s, err
	}
	if d.Odd != "" {
		if s.Odd, err = synth.ParseOdd(d.Odd); err != nil {
			return s, err
		}
	}
	if s.BesselNorm, err = synth.ParseBesselNorm(d.BesselNorm); err != nil {
		return s, err
	}
	if d.Placement != "" {
		if s.Placement, err = synth.ParsePlacement(d.Placement); err != nil {
			return s, err
		}
	}
	s.GainDB = d.GainDB
	if d.Polarity != "" {
		if s.Polarity, err = synth.ParsePolarity(d.Polarity); err != nil {
			return s, err
		}
	}
	if d.Topology != "" {
		if s.Topology, err = synth.ParseTopologyChoice(d.Topology); err != nil {
			return s, err
		}
	}
	return s, nil
}

// EncodeDesign writes d as the JSON document the store keeps (its ID and
// creation time are the store's columns, not part of it).
func EncodeDesign(d *Design) ([]byte, error) {
	if err := d.Problems(); err != nil {
		return nil, err
	}
	doc := docDesign{Format: documentFormat, Name: d.Name, Boards: d.Boards, Rank: d.Rank, Pareto: d.Pareto, Settings: d.Settings}
	for _, f := range d.Filters {
		c := f.Candidate
		dc := docCandidate{Order: c.Design.Order, Odd: c.Design.Odd.String(), ResponseError: c.ResponseError,
			PassAtten: c.PassAtten, MeetsSpec: c.MeetsSpec, PartCount: c.PartCount, UniqueParts: c.UniqueParts,
			BoardsBuildable: c.BoardsBuildable, Pareto: c.Pareto, StockUse: []docUse{}}
		if !math.IsNaN(c.StopAtten) {
			v := c.StopAtten
			dc.StopAtten = &v
		}
		for _, s := range c.Sections {
			ds := docSection{Topology: s.Target.Topology.ID(), F0: s.F0, Q: s.Q, RealF0: s.RealF0}
			for _, comp := range s.Components {
				dcomp := docComponent{Ref: comp.Ref, Symbol: comp.Symbol, Kind: comp.Kind.String(), Value: comp.Value,
					Arrangement: comp.Arrangement.String()}
				for _, p := range comp.Parts {
					dcomp.Parts = append(dcomp.Parts, docPart(p))
				}
				ds.Components = append(ds.Components, dcomp)
			}
			dc.Sections = append(dc.Sections, ds)
		}
		for _, u := range c.StockUse {
			dc.StockUse = append(dc.StockUse, docUse(u))
		}
		if a := c.Amp; a != nil {
			da := &docAmp{StockID: a.StockID, Label: a.Label, Channels: a.Channels, Location: a.Location, Package: a.Package,
				GBW: a.Model.GBW, DCGain: a.Model.A0(), DCGainAssumed: a.DCGainAssumed, Packages: c.AmpPackages,
				IdealError: c.IdealAmpError, Slots: [][2]int{}}
			for _, sl := range c.AmpSlots {
				da.Slots = append(da.Slots, [2]int{sl.Package, sl.Channel})
			}
			dc.Amp = da
		}
		doc.Filters = append(doc.Filters, docFilter{Label: f.Label, Spec: specDoc(f.Spec), Candidate: dc})
	}
	b, err := json.Marshal(doc)
	if err != nil {
		return nil, fmt.Errorf("encode design: %w", err)
	}
	return b, nil
}

// DecodeDesign reads a document written by EncodeDesign. The ideal design
// of every filter is computed again from its specification, order and
// odd arrangement (synth.NewDesign is deterministic), and must have the
// stored sections. Errors: fault.Conflict for a document this version
// cannot read, or whose design no longer comes out the same.
func DecodeDesign(b []byte) (*Design, error) {
	var doc docDesign
	if err := json.Unmarshal(b, &doc); err != nil {
		return nil, fault.Conflictf("the saved design cannot be read: %v", err)
	}
	if doc.Format != documentFormat {
		return nil, fault.Conflictf("the saved design has format %d; this drawerfit reads format %d", doc.Format, documentFormat)
	}
	d := &Design{Name: doc.Name, Boards: doc.Boards, Rank: doc.Rank, Pareto: doc.Pareto, Settings: doc.Settings}
	for i, df := range doc.Filters {
		spec, err := df.Spec.spec()
		if err != nil {
			return nil, fault.Conflictf("filter %d of the saved design: %v", i+1, err)
		}
		c, err := df.Candidate.candidate(spec)
		if err != nil {
			return nil, fault.Conflictf("filter %d of the saved design: %v", i+1, err)
		}
		d.Filters = append(d.Filters, Filter{Label: df.Label, Spec: spec, Candidate: c})
	}
	if len(d.Filters) == 0 {
		return nil, fault.Conflictf("the saved design has no filters")
	}
	return d, nil
}

func (dc docCandidate) candidate(spec synth.Spec) (*optimize.Candidate, error) {
	odd, err := synth.ParseOdd(dc.Odd)
	if err != nil {
		return nil, err
	}
	// As optimize.Fit makes its designs: the order and arrangement written
	// into the specification.
	s := spec
	s.Order, s.Odd = dc.Order, odd
	sd, err := synth.NewDesign(s, dc.Order, odd)
	if err != nil {
		return nil, fmt.Errorf("the ideal design cannot be made again: %w", err)
	}
	if len(sd.Sections) != len(dc.Sections) {
		return nil, fmt.Errorf("the ideal design now has %d sections, the saved one %d", len(sd.Sections), len(dc.Sections))
	}
	c := &optimize.Candidate{Design: sd, ResponseError: dc.ResponseError, PassAtten: dc.PassAtten, StopAtten: math.NaN(),
		MeetsSpec: dc.MeetsSpec, PartCount: dc.PartCount, UniqueParts: dc.UniqueParts,
		BoardsBuildable: dc.BoardsBuildable, Pareto: dc.Pareto}
	if dc.StopAtten != nil {
		c.StopAtten = *dc.StopAtten
	}
	// The fit may have built a section with another of its alternatives
	// (a multiple-feedback instead of a Sallen-Key section).
	for i, ds := range dc.Sections {
		if sd.Sections[i].Topology.ID() != ds.Topology {
			if t := synth.TopologyByID(ds.Topology); t != nil {
				_ = sd.Use(i, t) // refused: reported just below
			}
		}
	}
	for i, ds := range dc.Sections {
		target := sd.Sections[i]
		if target.Topology.ID() != ds.Topology {
			return nil, fmt.Errorf("section %d is now a %s, saved as %s", i+1, target.Topology.ID(), ds.Topology)
		}
		if len(ds.Components) != target.Topology.NumElements() {
			return nil, fmt.Errorf("section %d has %d components, its topology %d", i+1, len(ds.Components), target.Topology.NumElements())
		}
		sf := optimize.SectionFit{Target: target, F0: ds.F0, Q: ds.Q, RealF0: ds.RealF0}
		for j, dcomp := range ds.Components {
			kind := target.Topology.Element(j).Kind
			if kind.String() != dcomp.Kind {
				return nil, fmt.Errorf("section %d element %d is a %s, saved as %s", i+1, j+1, kind, dcomp.Kind)
			}
			arr, err := parseArrangement(dcomp.Arrangement)
			if err != nil {
				return nil, err
			}
			comp := optimize.Component{Ref: dcomp.Ref, Symbol: dcomp.Symbol, Kind: kind, Value: dcomp.Value, Arrangement: arr}
			for _, p := range dcomp.Parts {
				comp.Parts = append(comp.Parts, optimize.Part(p))
			}
			if len(comp.Parts) == 0 {
				return nil, fmt.Errorf("%s has no parts", comp.Ref)
			}
			sf.Components = append(sf.Components, comp)
		}
		c.Sections = append(c.Sections, sf)
	}
	for _, u := range dc.StockUse {
		c.StockUse = append(c.StockUse, optimize.StockUse(u))
	}
	if da := dc.Amp; da != nil {
		if len(da.Slots) != len(c.Sections) || da.Channels < 1 || !(da.GBW > 0) {
			return nil, fmt.Errorf("the amplifier of the saved design is malformed (%d slots for %d sections)", len(da.Slots), len(c.Sections))
		}
		c.Amp = &optimize.Amplifier{StockID: da.StockID, Label: da.Label, Channels: da.Channels, Location: da.Location,
			Package: da.Package, Model: synth.OpAmp{GBW: da.GBW, DCGain: da.DCGain}, DCGainAssumed: da.DCGainAssumed}
		c.AmpPackages, c.IdealAmpError = da.Packages, da.IdealError
		for _, sl := range da.Slots {
			c.AmpSlots = append(c.AmpSlots, optimize.AmpSlot{Package: sl[0], Channel: sl[1]})
		}
	}
	return c, nil
}

func parseArrangement(s string) (synth.Arrangement, error) {
	for _, a := range []synth.Arrangement{synth.Single, synth.Series, synth.Parallel} {
		if a.String() == s {
			return a, nil
		}
	}
	return synth.Single, fmt.Errorf("unknown arrangement %q", s)
}

// formatHz writes a frequency with up to four significant digits (see
// synth.FormatFrequency): "1 kHz", "15.5 kHz", "0.5 Hz".
func formatHz(f float64) string { return synth.FormatFrequency(f, 4) }

func itoa(n int) string { return strconv.Itoa(n) }
