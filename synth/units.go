package synth

import (
	"math"
	"strconv"
	"strings"

	"drawerfit/fault"
)

// ParseFrequency reads a frequency in hertz: a decimal number (exponent
// allowed) with an optional SI prefix and an optional unit Hz, with or
// without a space: "1500", "1.5k", "1.5kHz", "1.5 kHz", "2M", "2MHz",
// "20e3", "50mHz". Prefixes are m (milli), k or K (kilo), M (mega) and G
// (giga); case matters for m and M as in SI. The result must be positive and
// finite. Errors are fault.Invalid with the text quoted.
func ParseFrequency(s string) (float64, error) {
	t := strings.TrimSpace(s)
	bad := func() (float64, error) {
		return 0, fault.Invalidf("cannot read the frequency %q: write e.g. 1500, 1.5k or 1.5kHz", s)
	}
	// The longest prefix of t that is a number.
	i := 0
	for i < len(t) && strings.IndexByte("0123456789.+-eE", t[i]) >= 0 {
		if (t[i] == 'e' || t[i] == 'E') && (i+1 >= len(t) || strings.IndexByte("0123456789+-", t[i+1]) < 0) {
			break
		}
		i++
	}
	if i == 0 {
		return bad()
	}
	num := t[:i]
	if _, err := strconv.ParseFloat(num, 64); err != nil {
		return bad()
	}
	rest := strings.TrimSpace(t[i:])
	if r, ok := strings.CutSuffix(rest, "Hz"); ok {
		rest = r
	} else if r, ok := strings.CutSuffix(rest, "hz"); ok {
		rest = r
	}
	exp := 0
	switch rest {
	case "":
	case "m":
		exp = -3
	case "k", "K":
		exp = 3
	case "M":
		exp = 6
	case "G":
		exp = 9
	default:
		return bad()
	}
	// Scale in decimal so that "1.1k" is the float nearest 1100, not 1.1·1000.
	v, _ := strconv.ParseFloat(num, 64)
	if exp != 0 {
		if strings.ContainsAny(num, "eE") {
			v *= math.Pow10(exp)
		} else {
			v, _ = strconv.ParseFloat(num+"e"+strconv.Itoa(exp), 64)
		}
	}
	if !(v > 0) || math.IsInf(v, 0) {
		return 0, fault.Invalidf("frequency %q must be positive and finite", s)
	}
	return v, nil
}

// FormatFrequency writes a frequency in hertz for people, with sig
// significant digits (at least 1) and trailing zeros dropped: "1 kHz",
// "15.5 kHz", "440 Hz", "2.5 MHz". Below 1 Hz it writes decimals of Hz,
// "0.5 Hz", never "500 mHz", which reads as MHz on a bench. The value is
// rounded before the prefix is chosen, so 999.99 Hz at four digits is
// "1 kHz". Zero, negative, NaN and infinite values are written plainly in
// Hz. This is the one frequency formatter of the program's output.
func FormatFrequency(f float64, sig int) string {
	if sig < 1 {
		sig = 1
	}
	if !(f > 0) || math.IsInf(f, 0) {
		return strconv.FormatFloat(f, 'g', -1, 64) + " Hz"
	}
	r, err := strconv.ParseFloat(strconv.FormatFloat(f, 'e', sig-1, 64), 64)
	if err != nil {
		r = f
	}
	for _, p := range []struct {
		prefix string
		scale  float64
	}{{"G", 1e9}, {"M", 1e6}, {"k", 1e3}} {
		if r >= p.scale {
			return trimDecimal(r/p.scale, sig) + " " + p.prefix + "Hz"
		}
	}
	return trimDecimal(r, sig) + " Hz"
}

// trimDecimal writes x (already rounded) in plain decimals with at most
// sig significant digits, without trailing zeros.
func trimDecimal(x float64, sig int) string {
	exp := int(math.Floor(math.Log10(x)))
	decimals := max(sig-1-exp, 0)
	s := strconv.FormatFloat(x, 'f', decimals, 64)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return s
}
