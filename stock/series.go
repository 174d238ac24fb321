package stock

import (
	"math"
	"strings"

	"drawerfit/fault"
)

// Series is an IEC 60063 preferred-number series. Its numeric value is the
// number of values per decade (E24 is 24).
type Series uint8

// The IEC 60063 series.
const (
	E3   Series = 3
	E6   Series = 6
	E12  Series = 12
	E24  Series = 24
	E48  Series = 48
	E96  Series = 96
	E192 Series = 192
)

// AllSeries lists the series from the coarsest to the finest.
var AllSeries = []Series{E3, E6, E12, E24, E48, E96, E192}

// The lists below are data, not formulas. E3 to E24 are the lists printed
// in IEC 60063 (as quoted in docs/check-values.md, "Preferred values"); eight E24
// values (2.7 3.0 3.3 3.6 3.9 4.3 4.7 8.2) differ from rounding 10^(m/24).
// Values are mantissas times 10 (E3-E24, two figures) or 100 (E192, three
// figures).
var (
	e3List  = []uint16{10, 22, 47}
	e6List  = []uint16{10, 15, 22, 33, 47, 68}
	e12List = []uint16{10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82}
	e24List = []uint16{10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
		33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91}

	// e192List is IEC 60063 E192: 10^(m/192) to three figures, except
	// m = 185, where the standard has 9.20 (the formula gives 9.19).
	// E96 is every second value and E48 every fourth.
	e192List = []uint16{
		100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114,
		115, 117, 118, 120, 121, 123, 124, 126, 127, 129, 130, 132,
		133, 135, 137, 138, 140, 142, 143, 145, 147, 149, 150, 152,
		154, 156, 158, 160, 162, 164, 165, 167, 169, 172, 174, 176,
		178, 180, 182, 184, 187, 189, 191, 193, 196, 198, 200, 203,
		205, 208, 210, 213, 215, 218, 221, 223, 226, 229, 232, 234,
		237, 240, 243, 246, 249, 252, 255, 258, 261, 264, 267, 271,
		274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309, 312,
		316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361,
		365, 370, 374, 379, 383, 388, 392, 397, 402, 407, 412, 417,
		422, 427, 432, 437, 442, 448, 453, 459, 464, 470, 475, 481,
		487, 493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556,
		562, 569, 576, 583, 590, 597, 604, 612, 619, 626, 634, 642,
		649, 657, 665, 673, 681, 690, 698, 706, 715, 723, 732, 741,
		750, 759, 768, 777, 787, 796, 806, 816, 825, 835, 845, 856,
		866, 876, 887, 898, 909, 920, 931, 942, 953, 965, 976, 988,
	}
)

// seriesValues holds each series' mantissas in [1, 10), ascending.
var seriesValues = func() map[Series][]float64 {
	m := map[Series][]float64{}
	two := func(l []uint16) []float64 {
		out := make([]float64, len(l))
		for i, n := range l {
			out[i] = float64(n) / 10
		}
		return out
	}
	m[E3], m[E6], m[E12], m[E24] = two(e3List), two(e6List), two(e12List), two(e24List)
	for _, s := range []Series{E48, E96, E192} {
		step := 192 / int(s)
		var out []float64
		for i := 0; i < len(e192List); i += step {
			out = append(out, float64(e192List[i])/100)
		}
		m[s] = out
	}
	return m
}()

// memberTolerance is the relative distance within which a value counts as
// equal to a series value: far below any marked tolerance, far above
// float64 rounding in value arithmetic (common practice, no source).
const memberTolerance = 1e-9

// Valid reports whether s is one of the IEC 60063 series.
func (s Series) Valid() bool { _, ok := seriesValues[s]; return ok }

// String returns the series name, such as "E24".
func (s Series) String() string { return "E" + itoa(int(s)) }

// Tolerance returns the tolerance IEC 60063 associates with the series, as a
// fraction: E3 above 20 % (returned as 0.4, common practice, no source), E6
// 20 %, E12 10 %, E24 5 %, E48 2 %, E96 1 %, E192 0.5 % and finer.
func (s Series) Tolerance() float64 {
	switch s {
	case E3:
		return 0.4
	case E6:
		return 0.2
	case E12:
		return 0.1
	case E24:
		return 0.05
	case E48:
		return 0.02
	case E96:
		return 0.01
	case E192:
		return 0.005
	}
	return 0
}

// ParseSeries reads a series name such as "E24" or "e96".
func ParseSeries(name string) (Series, error) {
	t := strings.ToUpper(strings.TrimSpace(name))
	for _, s := range AllSeries {
		if t == s.String() {
			return s, nil
		}
	}
	return 0, fault.Invalidf("series %q is not one of E3, E6, E12, E24, E48, E96, E192", name)
}

// Values returns the series' mantissas, ascending in [1, 10). The slice is a
// copy. It panics if s is not a valid series.
func (s Series) Values() []float64 {
	v, ok := seriesValues[s]
	if !ok {
		panic("stock: invalid series " + s.String())
	}
	return append([]float64(nil), v...)
}

// decade splits v > 0 into a mantissa in [1, 10) and a power of ten.
func decade(v float64) (float64, int) {
	e := int(math.Floor(math.Log10(v)))
	m := v / math.Pow10(e)
	// Log10 can land one off near exact powers of ten.
	if m >= 10 {
		m, e = m/10, e+1
	} else if m < 1 {
		m, e = m*10, e-1
	}
	return m, e
}

func closeTo(a, b float64) bool { return math.Abs(a-b) <= memberTolerance*b }

// Contains reports whether v, in any decade, is a value of the series
// (within a relative 1e-9, so 4.7e-9 and 4700 are both E12 members). It is
// false for values that are not finite and positive, and panics if s is
// not valid.
func (s Series) Contains(v float64) bool {
	vals := s.Values()
	if !(v > 0) || math.IsInf(v, 0) {
		return false
	}
	m, _ := decade(v)
	for _, x := range vals {
		if closeTo(m, x) {
			return true
		}
	}
	// A mantissa a hair under 10 is the next decade's 1.0.
	return closeTo(m, 10)
}

// Neighbours returns the nearest series values strictly below and strictly
// above v, in v's units: for E12, 3386 gives 3300 and 3900, and 4700 (a
// member) gives 3900 and 5600. A value within 1e-9 of a member counts as
// that member. It panics if v is not finite and positive or s is not valid.
func (s Series) Neighbours(v float64) (below, above float64) {
	vals := s.Values()
	if !(v > 0) || math.IsInf(v, 0) {
		panic("stock: Neighbours of a value that is not finite and positive")
	}
	m, e := decade(v)
	scale := math.Pow10(e)
	// Candidates: the decade's values, the last of the decade below and the
	// first of the decade above.
	cands := make([]float64, 0, len(vals)+2)
	cands = append(cands, vals[len(vals)-1]/10)
	cands = append(cands, vals...)
	cands = append(cands, 10, vals[1]*10)
	below, above = math.NaN(), math.NaN()
	for _, c := range cands {
		switch {
		case closeTo(m, c):
			// v itself; not a neighbour.
		case c < m:
			below = c
		case c > m && math.IsNaN(above):
			above = c
		}
	}
	return roundTo(below * scale), roundTo(above * scale)
}

// Nearest returns the series value closest to v on a logarithmic scale, in
// v's units (E12: 3386 gives 3300). It panics like Neighbours.
func (s Series) Nearest(v float64) float64 {
	if s.Contains(v) {
		m, e := decade(v)
		for _, x := range append(s.Values(), 10) {
			if closeTo(m, x) {
				return roundTo(x * math.Pow10(e))
			}
		}
	}
	lo, hi := s.Neighbours(v)
	if math.Log(v/lo) <= math.Log(hi/v) {
		return lo
	}
	return hi
}

// roundTo removes the float64 noise that scaling by a power of ten leaves
// (3.3·1e3 is 3299.9999999999995): it returns the value nearest to the
// product's shortest 12-figure decimal, so results compare equal to
// parsed values such as ParseValue("3.3k").
func roundTo(v float64) float64 {
	d := toDecimal(v, 12)
	f, _ := parseDecimal(d)
	return f
}

// SeriesOf returns the series that contain v, coarsest first: 4.7 kΩ is in
// E3, E6, E12, E24 and E192 (E192 has 4.70, E48 and E96 do not), 4.75 kΩ
// in E96 and E192. The result is empty for a value in none of them.
func SeriesOf(v float64) []Series {
	var out []Series
	for _, s := range AllSeries {
		if s.Contains(v) {
			out = append(out, s)
		}
	}
	return out
}
