package respplot

import (
	"math"
	"strconv"
	"strings"
)

// prefixes are the SI prefixes from pico to giga, indexed by exponent/3 + 4.
var prefixes = []string{"p", "n", "µ", "m", "", "k", "M", "G"}

// FormatEng writes v with an SI prefix and unit in engineering notation:
// FormatEng(15300, "Ω", 3) is "15.3 kΩ", FormatEng(2.2e-9, "F", 3) is
// "2.2 nF", FormatEng(1000, "Hz", 3) is "1 kHz". sig is the number of
// significant digits kept (at least 1); trailing zeros are dropped. Values
// outside pico to giga fall back to an exponent; zero, NaN and infinities
// are written plainly.
func FormatEng(v float64, unit string, sig int) string {
	if sig < 1 {
		sig = 1
	}
	join := func(num, prefix string) string {
		if unit == "" && prefix == "" {
			return num
		}
		return num + " " + prefix + unit
	}
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return join(strconv.FormatFloat(v, 'g', -1, 64), "")
	}
	// Round to sig digits first so that 999.96 becomes 1 k, not 1000.
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'e', sig-1, 64), 64)
	if err != nil {
		r = v
	}
	exp := int(math.Floor(math.Log10(math.Abs(r))))
	e3 := exp - ((exp%3)+3)%3
	idx := e3/3 + 4
	if idx < 0 || idx >= len(prefixes) {
		return join(strconv.FormatFloat(r, 'e', sig-1, 64), "")
	}
	m := r / math.Pow(10, float64(e3))
	decimals := sig - 1 - (exp - e3)
	if decimals < 0 {
		decimals = 0
	}
	s := strconv.FormatFloat(m, 'f', decimals, 64)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return join(s, prefixes[idx])
}
