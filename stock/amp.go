package stock

import (
	"math"
	"strconv"
	"strings"

	"drawerfit/fault"
	"drawerfit/synth"
)

// DefaultDCGainDB is the open-loop DC gain assumed for an amplifier row that
// states none: 100 dB (1e5 V/V), the figure synth.OpAmp assumes when its
// DCGain is zero (common practice for general-purpose parts, no source).
const DefaultDCGainDB = 100

// Limits of the amplifier figures a row may hold. They are guards against
// typing slips, far outside real parts (common practice, no source).
const (
	MaxGBW      = 1e12 // Hz
	MaxDCGainDB = 200  // dB
	MaxSlew     = 1e5  // V/µs
)

// ChannelCounts are the amplifier counts a package may hold.
var ChannelCounts = []int{1, 2, 4}

// PackageWord names a package by its channel count: "single", "dual" or
// "quad" ("N-channel" otherwise).
func PackageWord(channels int) string {
	switch channels {
	case 1:
		return "single"
	case 2:
		return "dual"
	case 4:
		return "quad"
	}
	return strconv.Itoa(channels) + "-channel"
}

// DCGainDB is the row's DC gain in dB, DefaultDCGainDB when not stated.
func (it Item) DCGainDB() float64 {
	if it.DCGain == 0 {
		return DefaultDCGainDB
	}
	return it.DCGain
}

// DCGainVV is the row's DC gain as a ratio (V/V).
func (it Item) DCGainVV() float64 { return math.Pow(10, it.DCGainDB()/20) }

// OpAmpModel is the single-pole model of an amplifier row (its DC gain,
// DefaultDCGainDB when not stated, and its gain-bandwidth). It panics if it
// is not an amplifier row.
func (it Item) OpAmpModel() synth.OpAmp {
	if it.Kind != OpAmp {
		panic("stock: OpAmpModel of a " + it.Kind.String() + " row")
	}
	return synth.OpAmp{DCGain: it.DCGainVV(), GBW: it.GBW}
}

// ValueText is the row's value as people read it: "4.7 kΩ", "2.2 nF", or an
// amplifier's label.
func (it Item) ValueText() string {
	if it.Kind == OpAmp {
		return it.Name
	}
	return FormatValue(it.Value, it.Kind)
}

func (it Item) ampLabel() string {
	parts := []string{it.Name}
	if it.Channels > 0 {
		parts = append(parts, PackageWord(it.Channels))
	}
	if it.GBW > 0 {
		parts = append(parts, FormatGBW(it.GBW))
	}
	if it.Package != "" {
		parts = append(parts, it.Package)
	}
	if it.Location != "" {
		parts = append(parts, "@"+it.Location)
	}
	return strings.Join(parts, " ")
}

// ampProblems checks an amplifier row: a label, no value, tolerance or
// dielectric, 1, 2 or 4 channels, and figures within their limits (0 is
// "not stated" for gbw, dc-gain and slew).
func (it Item) ampProblems() []FieldError {
	var out []FieldError
	add := func(f, r string) { out = append(out, FieldError{f, r}) }
	if it.Name == "" {
		add("value", "an amplifier row needs a label in the value column (your own name for the part)")
	}
	if it.Value != 0 {
		add("value", "an amplifier row has a label, not a number value")
	}
	if it.Tolerance != 0 {
		add("tolerance", "an amplifier has no tolerance")
	}
	if it.Dielectric != "" {
		add("dielectric", "an amplifier has no dielectric")
	}
	if !validChannels(it.Channels) {
		add("channels", "channels "+strconv.Itoa(it.Channels)+" is not 1, 2 or 4")
	}
	if math.IsNaN(it.GBW) || it.GBW < 0 || it.GBW > MaxGBW {
		add("gbw", "gain-bandwidth "+strconv.FormatFloat(it.GBW, 'g', -1, 64)+" Hz is outside 0 to "+FormatGBW(MaxGBW))
	}
	if math.IsNaN(it.DCGain) || it.DCGain < 0 || it.DCGain > MaxDCGainDB {
		add("dc-gain", "DC gain "+strconv.FormatFloat(it.DCGain, 'g', -1, 64)+" dB is outside 0 to "+strconv.Itoa(MaxDCGainDB)+" dB")
	}
	if math.IsNaN(it.Slew) || it.Slew < 0 || it.Slew > MaxSlew {
		add("slew", "slew rate "+strconv.FormatFloat(it.Slew, 'g', -1, 64)+" V/µs is outside 0 to "+strconv.Itoa(MaxSlew)+" V/µs")
	}
	return out
}

// passiveAmpFields refuses amplifier figures on a resistor or capacitor.
func (it Item) passiveAmpFields() []FieldError {
	var out []FieldError
	only := func(f string) { out = append(out, FieldError{f, "only amplifier rows have " + f}) }
	if it.Name != "" {
		out = append(out, FieldError{"value", "a " + it.Kind.String() + " has a number value, not a label"})
	}
	if it.Channels != 0 {
		only("channels")
	}
	if it.GBW != 0 {
		only("gbw")
	}
	if it.DCGain != 0 {
		only("dc-gain")
	}
	if it.Slew != 0 {
		only("slew")
	}
	if it.Supply != "" {
		only("supply")
	}
	return out
}

func validChannels(n int) bool {
	for _, c := range ChannelCounts {
		if n == c {
			return true
		}
	}
	return false
}

// SameAmpFigures reports whether two amplifier rows state the same
// channels, gain-bandwidth, DC gain, slew rate and supply (the figures
// that are not part of the identity).
func SameAmpFigures(a, b Item) bool {
	return a.Channels == b.Channels && a.GBW == b.GBW && a.DCGain == b.DCGain && a.Slew == b.Slew &&
		strings.EqualFold(a.Supply, b.Supply)
}

// ParseChannels reads an amplifier count per package: 1, 2 or 4 (also the
// words single, dual and quad). Empty text is 1. Errors are fault.Invalid
// and quote the text.
func ParseChannels(s string) (int, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	switch t {
	case "":
		return 1, nil
	case "single":
		return 1, nil
	case "dual":
		return 2, nil
	case "quad":
		return 4, nil
	}
	n, err := strconv.Atoi(t)
	if err != nil || !validChannels(n) {
		return 0, fault.Invalidf("channels %q is not 1, 2 or 4", s)
	}
	return n, nil
}

// ParseGBW reads a gain-bandwidth product in Hz as synth.ParseFrequency
// does (1000000, 1M, 1 MHz, 2.5e6); empty text is 0 (not stated). It must
// be at most MaxGBW. Errors are fault.Invalid and quote the text.
func ParseGBW(s string) (float64, error) {
	if strings.TrimSpace(s) == "" {
		return 0, nil
	}
	v, err := synth.ParseFrequency(s)
	if err != nil {
		return 0, fault.Invalidf("gain-bandwidth %q is not a frequency: write e.g. 10M, 10 MHz or 1e7", s)
	}
	if v > MaxGBW {
		return 0, fault.Invalidf("gain-bandwidth %q is above %s", s, FormatGBW(MaxGBW))
	}
	return v, nil
}

// ParseDCGain reads an open-loop DC gain in dB ("100", "100 dB"); empty
// text is 0 (not stated, DefaultDCGainDB assumed). It must be above 0 and
// at most MaxDCGainDB. Errors are fault.Invalid and quote the text.
func ParseDCGain(s string) (float64, error) {
	return parseFigure(s, "DC gain", "dB", MaxDCGainDB, "dB")
}

// ParseSlew reads a slew rate in V/µs ("13", "13 V/us", "13V/µs"); empty
// text is 0 (not stated). It must be above 0 and at most MaxSlew. Errors
// are fault.Invalid and quote the text.
func ParseSlew(s string) (float64, error) {
	return parseFigure(s, "slew rate", "V/µs", MaxSlew, "V/us", "V/µs", "V/μs")
}

func parseFigure(s, what, unit string, max float64, suffixes ...string) (float64, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, nil
	}
	for _, suf := range suffixes {
		if len(t) > len(suf) && strings.EqualFold(t[len(t)-len(suf):], suf) {
			t = strings.TrimSpace(t[:len(t)-len(suf)])
			break
		}
	}
	v, err := strconv.ParseFloat(t, 64)
	switch {
	case err != nil || math.IsNaN(v) || math.IsInf(v, 0):
		return 0, fault.Invalidf("%s %q is not a number of %s", what, s, unit)
	case v <= 0:
		return 0, fault.Invalidf("%s %q must be above 0 %s", what, s, unit)
	case v > max:
		return 0, fault.Invalidf("%s %q is above %s %s", what, s, strconv.FormatFloat(max, 'g', -1, 64), unit)
	}
	return v, nil
}

// FormatGBW writes a gain-bandwidth for people: "10 MHz", "800 kHz"
// (synth.FormatFrequency, six significant digits at most).
func FormatGBW(v float64) string { return synth.FormatFrequency(v, 6) }

// compactGBW writes v exactly for files (ParseGBW reads back the same
// float64): "10M", "3.5M", "800k", else the shortest plain number.
func compactGBW(v float64) string {
	if v == 0 {
		return ""
	}
	for _, p := range []struct {
		scale float64
		sym   string
	}{{1e9, "G"}, {1e6, "M"}, {1e3, "k"}} {
		if v >= p.scale {
			t := strconv.FormatFloat(v/p.scale, 'f', -1, 64) + p.sym
			if back, err := ParseGBW(t); err == nil && back == v {
				return t
			}
		}
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// compactFigure writes a dB or V/µs figure exactly; 0 (not stated) is
// empty.
func compactFigure(v float64) string {
	if v == 0 {
		return ""
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}
