package stock

import (
	"math"
	"strconv"
	"strings"

	"drawerfit/fault"
)

// Voltage rating bounds, in volts: a guard against a wrong prefix, beyond
// any capacitor a filter uses at either end (common practice, no source).
const (
	MinVoltage = 0.1
	MaxVoltage = 100e3
)

// ParseVoltage reads a rated voltage in volts: a decimal number with an
// optional SI prefix (m, k) and an optional unit V, with or without a
// space: "50", "50V", "6.3 V", "1kV", "500mV". An empty text is 0 (not
// rated). The result is the float64 nearest the decimal written, so "1kV"
// and "1000" are the same number. Anything else (a sign, a comma, a word
// such as "high", a value outside MinVoltage to MaxVoltage) is a
// fault.Invalid error that quotes the text.
func ParseVoltage(s string) (float64, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, nil
	}
	v, reason := parseVoltage(t)
	if reason != "" {
		return 0, fault.Invalidf("voltage %q %s", s, reason)
	}
	return v, nil
}

func parseVoltage(t string) (float64, string) {
	if len(t) > maxValueText {
		return 0, "is too long"
	}
	i := 0
	for i < len(t) && (isDigit(rune(t[i])) || t[i] == '.') {
		i++
	}
	num, rest := t[:i], strings.TrimSpace(t[i:])
	if num == "" || strings.Trim(num, ".") == "" {
		if strings.HasPrefix(t, "-") {
			return 0, "is negative"
		}
		return 0, "is not a number with an optional prefix and unit (50, 50V, 6.3 V, 1kV)"
	}
	if strings.Count(num, ".") > 1 || strings.HasPrefix(rest, ",") {
		return 0, "is malformed (more than one decimal point, or a comma)"
	}
	exp := 0
	if rest != "" {
		switch rest[0] {
		case 'm':
			exp, rest = -3, rest[1:]
		case 'k', 'K':
			exp, rest = 3, rest[1:]
		}
		if rest != "" && rest != "V" && rest != "v" {
			return 0, "has an unknown prefix or unit " + strconv.Quote(rest) + " (use m or k, and V)"
		}
	}
	v, err := strconv.ParseFloat(num+"e"+strconv.Itoa(exp), 64)
	if err != nil || math.IsInf(v, 0) {
		return 0, "is out of range"
	}
	if v < MinVoltage || v > MaxVoltage {
		return 0, "is outside " + FormatVoltage(MinVoltage) + " to " + FormatVoltage(MaxVoltage)
	}
	return v, ""
}

// voltGroup picks the prefix for a voltage whose first digit is at 10^e.
func voltGroup(e int) (int, string) {
	switch {
	case e < 0:
		return -3, "m"
	case e >= 4:
		return 3, "k"
	}
	return 0, ""
}

// FormatVoltage writes a rating for people, exactly: "50 V", "6.3 V",
// "500 mV", "10 kV" (up to 9999 V in volts); 0 (not rated) is "".
func FormatVoltage(v float64) string {
	if v == 0 {
		return ""
	}
	if !(v > 0) || math.IsInf(v, 0) {
		return strconv.FormatFloat(v, 'g', -1, 64) + " V"
	}
	d := toDecimal(v, 0)
	g, sym := voltGroup(d.exp10)
	return d.shifted(g) + " " + sym + "V"
}

// compactVoltage writes a rating for files, exactly (ParseVoltage reads it
// back as the same float64): "50V", "6.3V", "10kV"; 0 is "".
func compactVoltage(v float64) string {
	return strings.ReplaceAll(FormatVoltage(v), " ", "")
}
