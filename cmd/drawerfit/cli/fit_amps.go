package cli

import (
	"fmt"
	"math"
	"strings"

	"drawerfit/optimize"
	"drawerfit/report"
	"drawerfit/stock"
	"drawerfit/synth"
)

// ampCell is the table's amplifier column: "#159 ×2" (stock row, packages
// per board), "generic" or "ideal".
func ampCell(c *optimize.Candidate) string {
	switch {
	case c.Amp == nil:
		return "ideal"
	case !c.Amp.FromStock():
		return "generic"
	}
	return fmt.Sprintf("#%d ×%d", c.Amp.StockID, c.AmpPackages)
}

// ampSummary says in the detail line which amplifiers the candidate uses.
func ampSummary(c *optimize.Candidate) string {
	if c.Amp == nil {
		return fmt.Sprintf("%d ideal op-amp(s)", len(c.Sections))
	}
	a := c.Amp
	if !a.FromStock() {
		return fmt.Sprintf("%d generic op-amp(s) of %s (not from stock)", len(c.Sections), stock.FormatGBW(a.Model.GBW))
	}
	return fmt.Sprintf("%s of row #%d %s (%s, %s, bin %s): %d of %d channels used",
		plural(c.AmpPackages, "package"), a.StockID, a.Label, stock.PackageWord(a.Channels), stock.FormatGBW(a.Model.GBW),
		orDash(a.Location), len(c.Sections), c.AmpPackages*a.Channels)
}

// ampLegend explains the amplifier columns.
func ampLegend(run *fitRun) string {
	var names []string
	for _, a := range run.amps.Amps {
		dc := fmt.Sprintf("%.0f dB", 20*math.Log10(a.Model.A0()))
		if a.DCGainAssumed {
			dc += " assumed (the row states none)"
		}
		if a.FromStock() {
			names = append(names, fmt.Sprintf("#%d %s (%s, %s, DC gain %s)", a.StockID, a.Label, stock.PackageWord(a.Channels), stock.FormatGBW(a.Model.GBW), dc))
		} else {
			names = append(names, fmt.Sprintf("a generic amplifier of %s, DC gain %s, not drawn from stock", stock.FormatGBW(a.Model.GBW), dc))
		}
	}
	return "Scored with the amplifier that is soldered in (single-pole model: DC gain and gain-bandwidth), errors and attenuations measured from its DC gain A0/(1+A0): " +
		strings.Join(names, "; ") + ". amplifier = stock row × packages per board; ideal-amp dB = the same parts' error with ideal amplifiers."
}

// slowNotes say which sections no amplifier tried is fast enough for.
func slowNotes(run *fitRun) []string {
	if run.amps == nil {
		return nil
	}
	var out []string
	for _, s := range run.amps.Slow {
		desc := fmt.Sprintf("fc %s", formatHz(s.F0))
		if s.Q > 0 {
			desc = fmt.Sprintf("f0 %s, Q %.3g", formatHz(s.F0), s.Q)
		}
		need := "no gain-bandwidth up to 1 THz is enough"
		if s.NeedGBW > 0 {
			need = "it needs a gain-bandwidth of about " + synth.FormatFrequency(s.NeedGBW, 3)
		}
		out = append(out, fmt.Sprintf("order %d, section %d (%s): no amplifier tried is fast enough; with the fastest, %s, its predistorted realisation stays %.2f dB off (good enough: %g dB); %s",
			s.Order, s.Section, desc, s.Fastest, s.ErrorDB, run.opts.GoodEnough, need))
	}
	return out
}

// jsonAmp is one amplifier row a candidate uses (--json "opamps").
type jsonAmp struct {
	StockID          int64    `json:"stock_id"`
	Label            string   `json:"label"`
	GBW              float64  `json:"gbw_hz"`
	DCGain           float64  `json:"dc_gain"` // V/V
	ChannelsUsed     int      `json:"channels_used"`
	PackagesPerBoard int      `json:"packages_per_board"`
	Sections         []int    `json:"sections"` // 1-based, in channel order
	Designators      []string `json:"designators"`
}

func ampJSON(c *optimize.Candidate) []jsonAmp {
	if c.Amp == nil {
		return []jsonAmp{}
	}
	a := c.Amp
	j := jsonAmp{StockID: a.StockID, Label: a.Label, GBW: a.Model.GBW, DCGain: a.Model.A0(), ChannelsUsed: len(c.AmpSlots),
		Sections: []int{}, Designators: []string{}}
	if a.FromStock() {
		j.PackagesPerBoard = c.AmpPackages
	}
	for i, s := range c.AmpSlots {
		j.Sections = append(j.Sections, i+1)
		j.Designators = append(j.Designators, s.Designator(a.Channels))
	}
	return []jsonAmp{j}
}

// sheetAmps are the candidate's amplifier channels for the build sheet:
// one per section, with the package designator and channel letter.
func sheetAmps(c *optimize.Candidate) []report.Amplifier {
	var out []report.Amplifier
	for i, sl := range c.AmpSlots {
		a := report.Amplifier{Ref: fmt.Sprintf("U%d", sl.Package), Section: i + 1, Channels: c.Amp.Channels}
		if c.Amp.Channels > 1 {
			a.Channel = string(rune('A' + sl.Channel))
		}
		if c.Amp.FromStock() {
			a.Part = fmt.Sprintf("%s (%s, %s)", c.Amp.Label, stock.PackageWord(c.Amp.Channels), stock.FormatGBW(c.Amp.Model.GBW))
			if c.Amp.Package != "" {
				a.Part += " " + c.Amp.Package
			}
			a.Location, a.StockID = c.Amp.Location, c.Amp.StockID
		}
		out = append(out, a)
	}
	return out
}

// jsonSlowSection is a section no amplifier tried is fast enough for
// (--json "slow_sections").
type jsonSlowSection struct {
	Order   int     `json:"order"`
	Section int     `json:"section"` // 1-based
	F0      float64 `json:"f0_hz"`
	Q       float64 `json:"q"`
	ErrorDB float64 `json:"error_db"` // with the fastest amplifier tried
	Fastest string  `json:"fastest"`
	// NeedGBW is the gain-bandwidth that would do (Hz); null when none up
	// to 1 THz does.
	NeedGBW *float64 `json:"need_gbw_hz"`
}

func slowJSON(run *fitRun) []jsonSlowSection {
	out := []jsonSlowSection{}
	if run.amps == nil {
		return out
	}
	for _, s := range run.amps.Slow {
		j := jsonSlowSection{Order: s.Order, Section: s.Section, F0: s.F0, Q: s.Q, ErrorDB: s.ErrorDB, Fastest: s.Fastest}
		if s.NeedGBW > 0 {
			v := s.NeedGBW
			j.NeedGBW = &v
		}
		out = append(out, j)
	}
	return out
}
