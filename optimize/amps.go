package optimize

import (
	"context"
	"fmt"
	"math"
	"slices"
	"sort"

	"drawerfit/fault"
	"drawerfit/stock"
	"drawerfit/synth"
)

// Amplifier is the amplifier a candidate's sections are built with.
type Amplifier struct {
	// StockID is the stock row; 0 for a generic amplifier that is not
	// drawn from stock.
	StockID  int64
	Label    string
	Channels int // amplifiers per package
	Location string
	Package  string
	// Model is the single-pole model: DC gain (V/V) and gain-bandwidth.
	Model synth.OpAmp
	// DCGainAssumed is true when the row states no DC gain and
	// stock.DefaultDCGainDB was assumed.
	DCGainAssumed bool
}

// FromStock reports whether the amplifier is drawn from a stock row.
func (a *Amplifier) FromStock() bool { return a != nil && a.StockID != 0 }

// AmplifierOf describes an amplifier stock row. It panics if it is not
// one.
func AmplifierOf(it stock.Item) Amplifier {
	return Amplifier{StockID: it.ID, Label: it.Name, Channels: it.Channels, Location: it.Location,
		Package: it.Package, Model: it.OpAmpModel(), DCGainAssumed: it.DCGain == 0}
}

// GenericAmplifier is an amplifier of the given model not drawn from stock.
func GenericAmplifier(m synth.OpAmp) Amplifier {
	return Amplifier{Label: "generic " + stock.FormatGBW(m.GBW), Channels: 1, Model: m}
}

// AmpSlot is where one section's amplifier sits: package (1-based, the
// designator's number) and channel (0-based, the designator's letter).
type AmpSlot struct {
	Package int
	Channel int
}

// Designator names the slot on a board: U1 for a single, U1A, U1B, ... for
// the channels of a dual or quad.
func (s AmpSlot) Designator(channels int) string {
	if channels <= 1 {
		return fmt.Sprintf("U%d", s.Package)
	}
	return fmt.Sprintf("U%d%c", s.Package, 'A'+rune(s.Channel))
}

// AssignChannels puts n sections on packages of the given channel count in
// order: sections 1 to channels on U1, the next on U2, ... It returns the
// slots and the number of packages.
func AssignChannels(n, channels int) ([]AmpSlot, int) {
	if channels < 1 {
		channels = 1
	}
	slots := make([]AmpSlot, n)
	for i := range slots {
		slots[i] = AmpSlot{Package: i/channels + 1, Channel: i % channels}
	}
	return slots, (n + channels - 1) / channels
}

// AmpMode says where a fit's amplifiers come from.
type AmpMode uint8

const (
	// AmpFromStock tries every amplifier row of the stock that states a
	// gain-bandwidth; with none, the amplifiers are ideal.
	AmpFromStock AmpMode = iota
	// AmpIdeal scores with ideal amplifiers and assigns none.
	AmpIdeal
	// AmpPinned uses one stock row (AmpChoice.StockID).
	AmpPinned
	// AmpGeneric uses AmpChoice.Generic, not drawn from stock.
	AmpGeneric
)

// AmpChoice selects the amplifiers of a fit.
type AmpChoice struct {
	Mode    AmpMode
	StockID int64       // AmpPinned
	Generic synth.OpAmp // AmpGeneric
}

// SlowSection is a section that no amplifier tried is fast enough for:
// built with the fastest of them, even the predistorted handbook
// realisation stays further than the good-enough error from the ideal
// section.
type SlowSection struct {
	Order   int
	Section int // 1-based
	F0, Q   float64
	// ErrorDB is that realisation's error with the fastest amplifier, dB.
	ErrorDB float64
	// Fastest is the label of the fastest amplifier tried.
	Fastest string
	// NeedGBW is the smallest gain-bandwidth (Hz, to 1 %) at which the
	// error comes within the good-enough figure; 0 when none up to 1 THz.
	NeedGBW float64
}

// AmpsResult is a fit with amplifiers.
type AmpsResult struct {
	*Result
	// Amps are the amplifiers the search tried (empty: ideal).
	Amps []Amplifier
	// Slow lists the sections no tried amplifier is fast enough for.
	Slow []SlowSection
}

// FitAmps is Fit with amplifiers: it fits once per amplifier the choice
// allows (every stock row with a gain-bandwidth, one pinned row, or a
// generic model), scoring every candidate with that amplifier's
// single-pole model (Options.Amp), assigns each section a channel (sections
// fill packages in order), counts a stocked amplifier's packages in the
// part count, unique rows, stock use and boards buildable, drops
// candidates whose row has too few packages for the boards, and merges the
// lists by the ranking. Errors are Fit's, and fault.Invalid or
// fault.NotFound for a pinned row that is not an amplifier with a
// gain-bandwidth.
func FitAmps(ctx context.Context, items []stock.Item, spec synth.Spec, o Options, ch AmpChoice) (*AmpsResult, error) {
	amps, notes, err := ampsFor(items, ch)
	if err != nil {
		return nil, err
	}
	if len(amps) == 0 {
		o.Amp = nil
		r, err := Fit(ctx, items, spec, o)
		if err != nil {
			return nil, err
		}
		r.Notes = append(r.Notes, notes...)
		return &AmpsResult{Result: r}, nil
	}
	var out *AmpsResult
	var all []*Candidate
	var short []string
	var closest []*Candidate
	for i := range amps {
		a := amps[i]
		oa := o
		oa.Amp = &a.Model
		r, err := Fit(ctx, items, spec, oa)
		if err != nil {
			return nil, err
		}
		if out == nil {
			out = &AmpsResult{Result: r, Amps: amps}
			out.Notes = append(out.Notes, notes...)
		} else {
			out.Notes = append(out.Notes, r.Notes...)
		}
		// The notes on the listed parts are made again for the merged list.
		out.Notes = without(out.Notes, shopNotes(r.Candidates, items, o))
		dropped := 0
		for _, c := range r.Candidates {
			attachAmp(c, &a, items, o.Boards)
			if a.FromStock() && c.BoardsBuildable < o.Boards {
				dropped++
				continue
			}
			all = append(all, c)
		}
		if dropped > 0 {
			short = append(short, fmt.Sprintf("#%d %s (%d packages)", a.StockID, a.Label, stockQty(items, a.StockID)))
			out.Notes = append(out.Notes, fmt.Sprintf("%d candidates with %s left out: the row holds too few packages for %d boards",
				dropped, a.Label, o.Boards))
		}
		if r.Closest != nil {
			attachAmp(r.Closest, &a, items, o.Boards)
			closest = append(closest, r.Closest)
		}
		if len(r.Candidates) == 0 && len(out.Limits) == 0 {
			out.Limits = r.Limits
		}
	}
	key := func(c *Candidate) rankKey {
		cost := math.Inf(1)
		if c.CostPerBoard.Known() {
			cost = float64(c.CostPerBoard.Micros())
		}
		return makeKey(o.Rank, o.GoodEnough, c.ResponseError, c.PartCount, c.UniqueParts, cost)
	}
	sort.SliceStable(all, func(i, j int) bool { return key(all[i]).less(key(all[j])) })
	if len(all) > o.Top {
		all = all[:o.Top]
	}
	markPareto(all)
	out.Candidates = all
	out.Closest = nil
	out.Notes = append(out.Notes, shopNotes(all, items, o)...)
	if len(all) == 0 && len(short) > 0 {
		out.Limits = append([]string{fmt.Sprintf("amplifier packages for %d boards: the designs found need more than %s hold (restock, build fewer boards, or fit with ideal amplifiers)",
			o.Boards, joinOr(short))}, out.Limits...)
	}
	if len(all) == 0 {
		sort.SliceStable(closest, func(i, j int) bool { return closest[i].ResponseError < closest[j].ResponseError })
		if len(closest) > 0 {
			out.Closest = closest[0]
		}
	} else {
		out.Limits = nil
	}
	out.Slow = slowSections(out.Designs, amps, gridFor(out.Spec).w, o.GoodEnough)
	return out, nil
}

// ampsFor lists the amplifiers a choice allows, with notes on rows left
// out.
func ampsFor(items []stock.Item, ch AmpChoice) ([]Amplifier, []string, error) {
	switch ch.Mode {
	case AmpIdeal:
		return nil, nil, nil
	case AmpGeneric:
		if !(ch.Generic.GBW > 0) || math.IsInf(ch.Generic.GBW, 0) {
			return nil, nil, fault.Invalidf("the generic amplifier's gain-bandwidth must be a positive frequency")
		}
		return []Amplifier{GenericAmplifier(ch.Generic)}, nil, nil
	case AmpPinned:
		for _, it := range items {
			if it.ID != ch.StockID {
				continue
			}
			if it.Kind != stock.OpAmp {
				return nil, nil, fault.Invalidf("stock row %d is a %s, not an amplifier", it.ID, it.Kind)
			}
			if it.GBW == 0 {
				return nil, nil, fault.Invalidf("amplifier row %d (%s) states no gain-bandwidth; the fit cannot score it (add the gbw)", it.ID, it.Name)
			}
			return []Amplifier{AmplifierOf(it)}, nil, nil
		}
		return nil, nil, fault.NotFoundf("no stock row %d", ch.StockID)
	}
	var amps []Amplifier
	var notes []string
	for _, it := range items {
		if it.Kind != stock.OpAmp || it.Quantity == 0 {
			continue
		}
		if it.GBW == 0 {
			notes = append(notes, fmt.Sprintf("amplifier row %d (%s) states no gain-bandwidth and was not used", it.ID, it.Name))
			continue
		}
		amps = append(amps, AmplifierOf(it))
	}
	return amps, notes, nil
}

// attachAmp assigns the candidate's sections to channels of amplifier a
// and, for a stocked amplifier, counts its packages.
func attachAmp(c *Candidate, a *Amplifier, items []stock.Item, boards int) {
	c.Amp = a
	c.AmpSlots, c.AmpPackages = AssignChannels(len(c.Sections), a.Channels)
	c.IdealAmpError = cascadeAmpError(c, nil, gridFor(c.Design.Spec).w)
	if !a.FromStock() {
		return
	}
	c.PartCount += c.AmpPackages
	c.UniqueParts++
	c.StockUse = append(c.StockUse, StockUse{StockID: a.StockID, PerBoard: c.AmpPackages})
	sort.Slice(c.StockUse, func(i, j int) bool { return c.StockUse[i].StockID < c.StockUse[j].StockID })
	for _, it := range items {
		if it.ID == a.StockID {
			c.BoardsBuildable = min(c.BoardsBuildable, it.Quantity/c.AmpPackages)
			// The packages are parts of the board's cost too: unknown
			// when the row has no price.
			var t stock.Tally
			t.Add(c.CostPerBoard, 1)
			t.Add(it.Price, c.AmpPackages)
			c.CostPerBoard = t.Total()
		}
	}
}

// cascadeAmpError is the candidate's response error (dB) on the angular
// frequencies ws with amplifier op (nil: ideal) against the ideal design.
func cascadeAmpError(c *Candidate, op *synth.OpAmp, ws []float64) float64 {
	ref := 20 * math.Log10(op.DCFollowerGain()) * float64(len(c.Sections))
	e := 0.0
	for _, w := range ws {
		h := complex(1, 0)
		for i := range c.Sections {
			h *= synth.AmpResponse(c.Sections[i].Target.Topology, c.Sections[i].Values(), op, w)
		}
		e = math.Max(e, math.Abs(20*math.Log10(absC(h))-ref-20*math.Log10(absC(c.Design.Target(w)))))
	}
	return e
}

// CascadeAmpError is the candidate's response error (dB) on the fit's
// scoring grid with amplifier op (nil: ideal), measured from the
// follower's DC gain.
func CascadeAmpError(c *Candidate, op *synth.OpAmp) float64 {
	return cascadeAmpError(c, op, gridFor(c.Design.Spec).w)
}

// slowSections finds the sections of the designs that even the fastest of
// amps cannot bring within goodEnough (see SlowSection).
func slowSections(designs []*synth.Design, amps []Amplifier, ws []float64, goodEnough float64) []SlowSection {
	if len(amps) == 0 {
		return nil
	}
	fast := amps[0]
	for _, a := range amps[1:] {
		if a.Model.GBW > fast.Model.GBW {
			fast = a
		}
	}
	var out []SlowSection
	for _, d := range designs {
		for si := range d.Sections {
			sec := &d.Sections[si]
			e := residual(sec, fast.Model, ws)
			if e <= goodEnough {
				continue
			}
			s := SlowSection{Order: d.Order, Section: si + 1, F0: sec.F0, Q: sec.Q, ErrorDB: e, Fastest: fast.Label}
			lo, hi := fast.Model.GBW, fast.Model.GBW
			for hi <= 1e12 {
				hi *= 2
				m := fast.Model
				m.GBW = hi
				if residual(sec, m, ws) <= goodEnough {
					break
				}
			}
			if hi <= 1e12 {
				for hi/lo > 1.01 {
					mid := math.Sqrt(lo * hi)
					m := fast.Model
					m.GBW = mid
					if residual(sec, m, ws) <= goodEnough {
						hi = mid
					} else {
						lo = mid
					}
				}
				s.NeedGBW = hi
			}
			out = append(out, s)
		}
	}
	return out
}

// residual is the error of the predistorted handbook realisation of sec
// with amplifier m.
func residual(sec *synth.Section, m synth.OpAmp, ws []float64) float64 {
	pd, _ := Predistort(sec, &m, ws)
	v, ok := handbookValues(&pd)
	if !ok {
		return math.Inf(1)
	}
	return SectionAmpError(sec, v, &m, ws)
}

func stockQty(items []stock.Item, id int64) int {
	for _, it := range items {
		if it.ID == id {
			return it.Quantity
		}
	}
	return 0
}

// joinOr lists words as "a", "a or b", "a, b or c".
func joinOr(ws []string) string {
	switch len(ws) {
	case 0:
		return ""
	case 1:
		return ws[0]
	}
	out := ws[0]
	for _, w := range ws[1 : len(ws)-1] {
		out += ", " + w
	}
	return out + " or " + ws[len(ws)-1]
}

// without returns ss without the strings in drop, in order.
func without(ss, drop []string) []string {
	out := ss[:0:0]
	for _, s := range ss {
		if !slices.Contains(drop, s) {
			out = append(out, s)
		}
	}
	return out
}
