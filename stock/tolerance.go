package stock

import (
	"math"
	"strconv"
	"strings"
	"unicode"

	"drawerfit/fault"
)

// toleranceLetters are the IEC 60062 tolerance letters for relative
// tolerances (docs/check-values.md, "Value and tolerance codes": C, D, F, G, J, K, M confirmed in published
// marking charts; B from memory).
var toleranceLetters = map[rune]float64{
	'B': 0.001,  // ±0.1 %
	'C': 0.0025, // ±0.25 %
	'D': 0.005,  // ±0.5 %
	'F': 0.01,   // ±1 %
	'G': 0.02,   // ±2 %
	'J': 0.05,   // ±5 %
	'K': 0.1,    // ±10 %
	'M': 0.2,    // ±20 %
}

// absoluteBelow10pF are the letters that IEC 60062 gives an absolute meaning
// for capacitors below 10 pF: B ±0.1 pF, C ±0.25 pF, D ±0.5 pF (docs/check-values.md, "Value and tolerance codes",
// B from memory), F ±1 pF and G ±2 pF (from memory).
const absoluteBelow10pF = "BCDFG"

// smallCapacitor is the value below which the letters in absoluteBelow10pF
// mean picofarads, not percent (IEC 60062): 10 pF.
const smallCapacitor = 10e-12

// MaxTolerance is the largest tolerance accepted, as a fraction: 50 %,
// above anything marked on a part (common practice, no source).
const MaxTolerance = 0.5

// ParseTolerance reads a symmetric tolerance and returns it as a fraction
// (1 % is 0.01). It accepts a percentage with an optional ± or +/- sign and
// optional spaces (1%, ±0.5%, +/- 5 %), or one IEC 60062 letter in either
// case: B 0.1 %, C 0.25 %, D 0.5 %, F 1 %, G 2 %, J 5 %, K 10 %, M 20 %.
// A number without % is refused (is 1 one percent or a hundred?), as are
// asymmetric tolerances such as Z (+80/-20 %), zero, negative values and
// anything above MaxTolerance; errors are fault.Invalid and quote the text.
//
// ParseTolerance does not know the part's value; use ParseToleranceFor for
// capacitors, where some letters mean picofarads below 10 pF.
func ParseTolerance(s string) (float64, error) {
	f, err := parseTolerance(s)
	if err != "" {
		return 0, fault.Invalidf("tolerance %q: %s", s, err)
	}
	return f, nil
}

// ParseToleranceFor is ParseTolerance for a part of kind k and value v. For
// capacitors below 10 pF it refuses the letters B, C, D, F and G, which IEC
// 60062 defines there as absolute tolerances (±0.1, 0.25, 0.5, 1, 2 pF)
// that a relative tolerance cannot hold; write a percentage instead.
func ParseToleranceFor(s string, k Kind, v float64) (float64, error) {
	t := strings.TrimSpace(s)
	if k == Capacitor && v > 0 && v < smallCapacitor && len(t) == 1 &&
		strings.ContainsRune(absoluteBelow10pF, unicode.ToUpper(rune(t[0]))) {
		return 0, fault.Invalidf("tolerance %q: below 10 pF this letter means an absolute tolerance in pF (IEC 60062); write it as a percentage of %s", s, FormatValue(v, k))
	}
	return ParseTolerance(s)
}

func parseTolerance(s string) (float64, string) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, "empty"
	}
	if r := []rune(t); len(r) == 1 && unicode.IsLetter(r[0]) {
		u := unicode.ToUpper(r[0])
		if f, ok := toleranceLetters[u]; ok {
			return f, ""
		}
		if u == 'Z' || u == 'P' || u == 'S' {
			return 0, "asymmetric tolerances are not supported; give the larger side as a percentage"
		}
		return 0, "unknown tolerance letter (IEC 60062 letters: B C D F G J K M)"
	}
	for _, pre := range []string{"±", "+/-", "+-"} {
		if strings.HasPrefix(t, pre) {
			t = strings.TrimSpace(t[len(pre):])
			break
		}
	}
	if strings.HasPrefix(t, "-") {
		return 0, "negative; write a symmetric tolerance like ±1%"
	}
	num, ok := strings.CutSuffix(t, "%")
	if !ok {
		if strings.ContainsAny(t, "/") {
			return 0, "asymmetric tolerances are not supported; give the larger side as a percentage"
		}
		return 0, "write a percentage (1%) or an IEC 60062 letter (F)"
	}
	num = strings.TrimSpace(num)
	if num == "" || strings.ContainsAny(num, "eEiInN_+-") {
		return 0, "malformed percentage"
	}
	for _, r := range num {
		if !isDigit(r) && r != '.' {
			return 0, "malformed percentage"
		}
	}
	if strings.Count(num, ".") > 1 || num == "." {
		return 0, "malformed percentage"
	}
	if len(num) > 12 {
		return 0, "too many digits"
	}
	// Parse num·10^-2 from the text so that 0.25% is the float64 nearest to
	// 0.0025, not 0.25/100.
	f, err := strconv.ParseFloat(num+"e-2", 64)
	if err != nil || math.IsNaN(f) {
		return 0, "malformed percentage"
	}
	if f == 0 {
		return 0, "zero; leave the tolerance empty when it is not known"
	}
	if f > MaxTolerance {
		return 0, "above " + FormatTolerance(MaxTolerance)
	}
	return f, ""
}

// FormatTolerance writes a fraction as a percentage with trimmed digits
// (0.01 is "1%", 0.0025 is "0.25%"); zero, meaning not stated, is "".
// The text reads back with ParseTolerance as exactly f.
func FormatTolerance(f float64) string {
	if f == 0 {
		return ""
	}
	if !(f > 0) || math.IsInf(f, 0) {
		return strconv.FormatFloat(f*100, 'g', -1, 64) + "%"
	}
	return toDecimal(f, 0).shifted(-2) + "%"
}
