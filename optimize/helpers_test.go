package optimize

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"drawerfit/stock"
)

// e24 and e12 are the IEC 60063 lists (docs/check-values.md, "Preferred values").
var e24 = []float64{1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1}
var e12 = []float64{1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2}

// fullSeriesStock is the synthetic benchmark stock of the issue: every E24
// resistor from 10 Ω to 1 MΩ and every E12 capacitor from 100 pF to 1 µF,
// all C0G, ample quantities (invented data).
func fullSeriesStock() []stock.Item {
	var items []stock.Item
	id := int64(1)
	for dec := 1; dec <= 6; dec++ {
		for _, m := range e24 {
			v := m * math.Pow(10, float64(dec))
			if v > 1e6*(1+1e-9) {
				break
			}
			items = append(items, stock.Item{ID: id, Kind: stock.Resistor, Value: round3(v), Tolerance: 0.01, Quantity: 1000, Location: "R-bin"})
			id++
		}
		if dec == 6 {
			break
		}
	}
	for dec := -10; dec <= -7; dec++ {
		for _, m := range e12 {
			v := m * math.Pow(10, float64(dec))
			items = append(items, stock.Item{ID: id, Kind: stock.Capacitor, Value: v, Tolerance: 0.05, Quantity: 1000, Dielectric: "C0G", Location: "C-bin"})
			id++
		}
	}
	items = append(items, stock.Item{ID: id, Kind: stock.Capacitor, Value: 1e-6, Tolerance: 0.05, Quantity: 1000, Dielectric: "C0G", Location: "C-bin"})
	return items
}

func round3(v float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(v))-2)
	return math.Round(v/p) * p
}

func ftoa(x float64) string { return strconv.FormatFloat(x, 'g', 12, 64) }

func parseF(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(strings.TrimSuffix(s, ","), 64)
	if err != nil {
		t.Fatalf("parse %q: %v", s, err)
	}
	return v
}
