package stock

import (
	"math"
	"reflect"
	"testing"
)

// e24Standard is the IEC 60063 E24 list as quoted in docs/check-values.md, "Preferred values".
var e24Standard = []float64{1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
	3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1}

func TestSeriesLists(t *testing.T) {
	t.Parallel()
	// IEC 60063 (docs/check-values.md, "Preferred values"): E6 and the values E12 adds.
	if got := E6.Values(); !reflect.DeepEqual(got, []float64{1.0, 1.5, 2.2, 3.3, 4.7, 6.8}) {
		t.Errorf("E6 = %v", got)
	}
	if got := E12.Values(); !reflect.DeepEqual(got, []float64{1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2}) {
		t.Errorf("E12 = %v", got)
	}
	if got := E3.Values(); !reflect.DeepEqual(got, []float64{1.0, 2.2, 4.7}) {
		t.Errorf("E3 = %v", got)
	}
	if got := E24.Values(); !reflect.DeepEqual(got, e24Standard) {
		t.Errorf("E24 = %v", got)
	}
	for _, s := range AllSeries {
		if n := len(s.Values()); n != int(s) {
			t.Errorf("%v has %d values", s, n)
		}
	}
}

// TestE24DiffersFromFormula checks that E24 is the standard's list, not the
// rounded formula: docs/check-values.md, "Preferred values" names the eight values where they part.
func TestE24DiffersFromFormula(t *testing.T) {
	t.Parallel()
	var differ []float64
	for m, v := range E24.Values() {
		f := math.Round(math.Pow(10, float64(m)/24)*10) / 10
		if f != v {
			differ = append(differ, v)
		}
	}
	want := []float64{2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2}
	if !reflect.DeepEqual(differ, want) {
		t.Fatalf("E24 values that differ from 10^(m/24): %v, want %v", differ, want)
	}
}

// TestE192Formula checks E48, E96 and E192 against 10^(m/N) to three
// figures, with IEC 60063's one exception: E192 m = 185 is 9.20, where the
// formula gives 9.19 (docs/check-values.md, "Preferred values").
func TestE192Formula(t *testing.T) {
	t.Parallel()
	for _, s := range []Series{E48, E96, E192} {
		for m, v := range s.Values() {
			f := math.Round(math.Pow(10, float64(m)/float64(s))*100) / 100
			if s == E192 && m == 185 {
				if v != 9.20 || f != 9.19 {
					t.Errorf("E192 m=185: list %v, formula %v; want 9.20 and 9.19", v, f)
				}
				continue
			}
			if f != v {
				t.Errorf("%v m=%d: list %v, formula %v", s, m, v, f)
			}
		}
	}
}

func TestSeriesNesting(t *testing.T) {
	t.Parallel()
	// E6 ⊂ E12 ⊂ E24 and E48 ⊂ E96 ⊂ E192, every other value (docs/check-values.md, "Preferred values").
	for _, pair := range [][2]Series{{E3, E6}, {E6, E12}, {E12, E24}, {E48, E96}, {E96, E192}} {
		coarse, fine := pair[0], pair[1]
		for _, v := range coarse.Values() {
			if !fine.Contains(v) {
				t.Errorf("%v value %v not in %v", coarse, v, fine)
			}
		}
		if pair[0] != E3 {
			for i, v := range fine.Values() {
				if i%2 == 0 && v != coarse.Values()[i/2] {
					t.Errorf("%v[%d] = %v is not %v[%d]", fine, i, v, coarse, i/2)
				}
			}
		}
	}
}

func TestContainsAndSeriesOf(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		v    float64
		want []Series
	}{
		{"4.7 kΩ", 4700, []Series{E3, E6, E12, E24, E192}},
		{"4.7 nF", 4.7e-9, []Series{E3, E6, E12, E24, E192}},
		{"1 Ω", 1, AllSeries},
		{"100 kΩ", 1e5, AllSeries},
		{"2.7 kΩ", 2700, []Series{E12, E24}},
		{"9.1 pF", 9.1e-12, []Series{E24}},
		{"4.75 kΩ", 4750, []Series{E96, E192}},
		{"4.87 kΩ", 4870, []Series{E48, E96, E192}},
		{"9.20 kΩ", 9200, []Series{E192}},
		{"9.19 kΩ (formula, not the standard)", 9190, nil},
		{"3.386 kΩ", 3386, nil},
		{"1.0000001 kΩ", 1000.0001, nil},
		{"a hair under 10 kΩ", 9999.999999999, AllSeries},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := SeriesOf(c.v); !reflect.DeepEqual(got, c.want) {
				t.Fatalf("SeriesOf(%v) = %v, want %v", c.v, got, c.want)
			}
		})
	}
	for _, v := range []float64{0, -4700, math.NaN(), math.Inf(1)} {
		if E24.Contains(v) {
			t.Errorf("E24 contains %v", v)
		}
	}
}

func TestNeighbours(t *testing.T) {
	t.Parallel()
	cases := []struct {
		s            Series
		v            float64
		below, above float64
	}{
		// Bracketing a computed value (Op Amps for Everyone example, 3.386 kΩ).
		{E12, 3386, 3300, 3900},
		{E24, 3386, 3300, 3600},
		{E96, 3386, 3320, 3400},
		// A member's neighbours are the adjacent members.
		{E12, 4700, 3900, 5600},
		{E24, 2.2e-9, 2.0e-9, 2.4e-9},
		// Across a decade.
		{E12, 1000, 820, 1200},
		{E12, 9e3, 8200, 10e3},
		{E6, 8.2e-9, 6.8e-9, 10e-9},
		{E192, 9.15, 9.09, 9.20},
		{E3, 5e5, 4.7e5, 1e6},
	}
	for _, c := range cases {
		t.Run(c.s.String()+" "+FormatValue(c.v, Resistor), func(t *testing.T) {
			b, a := c.s.Neighbours(c.v)
			if b != c.below || a != c.above {
				t.Fatalf("%v.Neighbours(%v) = %v, %v; want %v, %v", c.s, c.v, b, a, c.below, c.above)
			}
		})
	}
	if got := E24.Nearest(3386); got != 3300 {
		t.Errorf("E24.Nearest(3386) = %v", got)
	}
	if got := E24.Nearest(3500); got != 3600 {
		// log(3500/3300) = 0.0588 > log(3600/3500) = 0.0282
		t.Errorf("E24.Nearest(3500) = %v", got)
	}
	if got := E12.Nearest(4.7e-9); got != 4.7e-9 {
		t.Errorf("E12.Nearest(4.7n) = %v", got)
	}
	defer func() {
		if recover() == nil {
			t.Error("Neighbours(0) did not panic")
		}
	}()
	E12.Neighbours(0)
}

func TestParseSeries(t *testing.T) {
	t.Parallel()
	for _, s := range AllSeries {
		got, err := ParseSeries(" " + s.String() + " ")
		if err != nil || got != s {
			t.Errorf("ParseSeries(%v) = %v, %v", s, got, err)
		}
	}
	if _, err := ParseSeries("E10"); err == nil {
		t.Error("E10 accepted")
	}
	if E96.Tolerance() != 0.01 || E24.Tolerance() != 0.05 {
		t.Error("series tolerances")
	}
}
