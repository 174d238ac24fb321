package production

import (
	"math"
	"sort"
	"strings"
	"time"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// Design is a saved design: the parts of one board, which carries one
// filter (a design kept from a single fit) or several (a board kept from a
// plan fit), with the specifications and search settings it came from.
type Design struct {
	// ID is the short id the store gives it (lower-case letters and digits,
	// see ValidID); empty before it is saved.
	ID string
	// Name is the plan's name; empty for a design from a single fit.
	Name string
	// Boards is the batch size the design was fitted for.
	Boards int
	// Rank is the design's place in the list it was saved from (1 = best).
	Rank int
	// Pareto is true when the design was on the Pareto front of its list.
	Pareto bool
	// Created is when it was saved (set by the store, UTC).
	Created time.Time
	// Settings are the search options of the fit.
	Settings Settings
	// Filters are the board's filters in plan order; a design from a
	// single fit has exactly one, without a label. Identical filters of a
	// plan may share one *optimize.Candidate.
	Filters []Filter
}

// Filter is one filter of a board: its label in the plan, its
// specification and the parts chosen for it.
type Filter struct {
	// Label names the filter on the board ("left channel anti-alias");
	// empty for a single fit.
	Label string
	// Spec is the normalised specification it was fitted to.
	Spec synth.Spec
	// Candidate is the design with its parts.
	Candidate *optimize.Candidate
}

// Settings are the options of optimize.Fit that shape a result, kept with
// a saved design so that it can be fitted again the same way. Ranges are
// in ohms and farads.
type Settings struct {
	Combine         int      `json:"combine"`
	Boards          int      `json:"boards"`
	MaxOrder        int      `json:"max_order"`
	Rank            string   `json:"rank"`
	Top             int      `json:"top"`
	GoodEnough      float64  `json:"good_enough_db"`
	RMin            float64  `json:"r_min"`
	RMax            float64  `json:"r_max"`
	CMin            float64  `json:"c_min"`
	CMax            float64  `json:"c_max"`
	AllowDielectric []string `json:"allow_dielectric"`
	// Odd is "1pole" or "3pole" when the fit was restricted to one odd
	// arrangement, else empty.
	Odd string `json:"odd"`
	// MinVoltage is the working voltage the capacitors had to be rated
	// for (0: none); RequireRating left unrated capacitors out.
	MinVoltage    float64 `json:"min_voltage,omitempty"`
	RequireRating bool    `json:"require_rating,omitempty"`
}

// SettingsOf returns the settings of o worth keeping (not the progress
// callback, worker count or search budgets).
func SettingsOf(o optimize.Options) Settings {
	s := Settings{Combine: o.Combine, Boards: o.Boards, MaxOrder: o.MaxOrder, Rank: o.Rank.String(), Top: o.Top,
		GoodEnough: o.GoodEnough, RMin: o.RMin, RMax: o.RMax, CMin: o.CMin, CMax: o.CMax,
		AllowDielectric: append([]string(nil), o.AllowDielectric...), MinVoltage: o.MinVoltage, RequireRating: o.RequireRating}
	if o.Odd != nil {
		s.Odd = o.Odd.String()
	}
	return s
}

// Options turns the settings back into fit options, starting from
// optimize.DefaultOptions. Errors: fault.Invalid for an unknown rank or odd
// arrangement.
func (s Settings) Options() (optimize.Options, error) {
	o := optimize.DefaultOptions()
	o.Combine, o.Boards, o.MaxOrder, o.Top, o.GoodEnough = s.Combine, s.Boards, s.MaxOrder, s.Top, s.GoodEnough
	o.RMin, o.RMax, o.CMin, o.CMax = s.RMin, s.RMax, s.CMin, s.CMax
	o.AllowDielectric = append([]string(nil), s.AllowDielectric...)
	o.MinVoltage, o.RequireRating = s.MinVoltage, s.RequireRating
	r, err := ParseRank(s.Rank)
	if err != nil {
		return o, err
	}
	o.Rank = r
	if s.Odd != "" {
		odd, err := synth.ParseOdd(s.Odd)
		if err != nil {
			return o, err
		}
		o.Odd = &odd
	}
	return o, nil
}

// ParseRank reads a ranking name as optimize.Rank.String writes it
// (balanced, error, parts, unique, cost; any letter case). Errors:
// fault.Invalid.
func ParseRank(s string) (optimize.Rank, error) {
	for _, r := range optimize.Ranks {
		if strings.EqualFold(s, r.String()) {
			return r, nil
		}
	}
	return optimize.RankBalanced, fault.Invalidf("unknown ranking %q: use balanced, error, parts, unique or cost", s)
}

// WorstError returns the largest response error (dB) of the board's
// filters.
func (d *Design) WorstError() float64 {
	w := 0.0
	for _, f := range d.Filters {
		w = math.Max(w, f.Candidate.ResponseError)
	}
	return w
}

// MeetsSpec reports whether every filter meets its specification.
func (d *Design) MeetsSpec() bool {
	for _, f := range d.Filters {
		if !f.Candidate.MeetsSpec {
			return false
		}
	}
	return len(d.Filters) > 0
}

// PartCount returns the number of physical parts on one board.
func (d *Design) PartCount() int {
	n := 0
	for _, f := range d.Filters {
		n += f.Candidate.PartCount
	}
	return n
}

// BoardsBuildable returns how many boards the stock items cover.
func (d *Design) BoardsBuildable(items []stock.Item) int {
	byID := map[int64]stock.Item{}
	for _, it := range items {
		byID[it.ID] = it
	}
	return buildable(d.StockUse(), byID)
}

// UniqueParts returns the number of distinct stock rows one board uses.
func (d *Design) UniqueParts() int { return len(d.StockUse()) }

// StockUse returns how many parts of each stock row one board takes,
// summed over its filters, by stock id.
//
// Amplifier packages are counted per board, not per filter: the filters'
// sections share the packages of one row (BoardAmps).
func (d *Design) StockUse() []optimize.StockUse {
	use := map[int64]int{}
	for _, f := range d.Filters {
		c := f.Candidate
		for _, u := range c.StockUse {
			if c.Amp.FromStock() && u.StockID == c.Amp.StockID {
				continue
			}
			use[u.StockID] += u.PerBoard
		}
	}
	for _, ba := range d.BoardAmps() {
		use[ba.Amp.StockID] += ba.Packages
	}
	return sortedUse(use)
}

func sortedUse(use map[int64]int) []optimize.StockUse {
	out := make([]optimize.StockUse, 0, len(use))
	for id, n := range use {
		out = append(out, optimize.StockUse{StockID: id, PerBoard: n})
	}
	sort.Slice(out, func(a, b int) bool { return out[a].StockID < out[b].StockID })
	return out
}

// Summary is a one-line description for lists: the filter's specification
// line for a single fit, or the plan name and its filters' labels.
func (d *Design) Summary() string {
	if len(d.Filters) == 1 && d.Name == "" {
		return SpecText(d.Filters[0].Spec, d.Filters[0].Candidate)
	}
	var labels []string
	for _, f := range d.Filters {
		labels = append(labels, f.Label)
	}
	name := d.Name
	if name == "" {
		name = "board"
	}
	return name + ": " + strings.Join(labels, ", ")
}

// SpecText describes a filter in a few words: "Butterworth low-pass, fp
// 1 kHz, order 5 (1-pole + 2 × 2-pole)".
func SpecText(s synth.Spec, c *optimize.Candidate) string {
	var b strings.Builder
	b.WriteString(strings.ToUpper(s.Approx.String()[:1]) + s.Approx.String()[1:])
	if s.Kind == synth.LowPass {
		b.WriteString(" low-pass")
	} else {
		b.WriteString(" high-pass")
	}
	b.WriteString(", fp " + formatHz(s.Pass))
	if s.Stop > 0 {
		b.WriteString(", fs " + formatHz(s.Stop))
	}
	if c != nil && c.Design != nil {
		b.WriteString(", order " + itoa(c.Order()) + " (" + c.Arrangement() + ")")
	}
	return b.String()
}

// Problems checks that d can be saved: at least one filter, every filter
// with a candidate built from stored rows (ids above zero), a batch size of
// at least one. Errors are fault.Invalid.
func (d *Design) Problems() error {
	if len(d.Filters) == 0 {
		return fault.Invalidf("a design needs at least one filter")
	}
	if d.Boards < 1 {
		return fault.Invalidf("a design needs a batch size of at least one board, not %d", d.Boards)
	}
	for i, f := range d.Filters {
		c := f.Candidate
		if c == nil || c.Design == nil || len(c.Sections) != len(c.Design.Sections) {
			return fault.Invalidf("filter %d has no complete candidate", i+1)
		}
		for _, s := range c.Sections {
			for _, comp := range s.Components {
				if len(comp.Parts) == 0 {
					return fault.Invalidf("filter %d: %s has no parts", i+1, comp.Ref)
				}
				for _, p := range comp.Parts {
					if p.StockID <= 0 {
						return fault.Invalidf("filter %d: %s is not made of stored stock rows", i+1, comp.Ref)
					}
				}
			}
		}
	}
	return nil
}
