package optimize_test

import (
	"context"
	"fmt"

	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// A second-order Butterworth low-pass at 1 kHz from a tiny invented drawer:
// the fit lists the closest design of four single parts.
func ExampleFit() {
	drawer := []stock.Item{
		{ID: 1, Kind: stock.Resistor, Value: 10e3, Tolerance: 0.01, Quantity: 20, Location: "A1"},
		{ID: 2, Kind: stock.Resistor, Value: 11e3, Tolerance: 0.01, Quantity: 20, Location: "A1"},
		{ID: 3, Kind: stock.Resistor, Value: 22e3, Tolerance: 0.01, Quantity: 20, Location: "A2"},
		{ID: 4, Kind: stock.Resistor, Value: 47e3, Tolerance: 0.01, Quantity: 20, Location: "A3"},
		{ID: 5, Kind: stock.Capacitor, Value: 4.7e-9, Tolerance: 0.05, Quantity: 10, Dielectric: "C0G", Location: "C1"},
		{ID: 6, Kind: stock.Capacitor, Value: 10e-9, Tolerance: 0.05, Quantity: 10, Dielectric: "C0G", Location: "C1"},
		{ID: 7, Kind: stock.Capacitor, Value: 22e-9, Tolerance: 0.05, Quantity: 10, Dielectric: "C0G", Location: "C2"},
	}
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: 2}
	opt := optimize.DefaultOptions()
	opt.Combine = 1 // single parts only
	r, err := optimize.Fit(context.Background(), drawer, spec, opt)
	if err != nil {
		fmt.Println(err)
		return
	}
	best := r.Candidates[0]
	fmt.Printf("order %d, %d parts from %d rows, response error %.3f dB, %.2f dB down at 1 kHz\n",
		best.Order(), best.PartCount, best.UniqueParts, best.ResponseError, best.PassAtten)
	for _, c := range best.Sections[0].Components {
		fmt.Printf("%s (%s) = %s\n", c.Ref, c.Symbol, stock.FormatValue(c.Value, kindOf(c.Kind)))
	}
	// Output:
	// order 2, 4 parts from 3 rows, response error 0.343 dB, 2.82 dB down at 1 kHz
	// R1 (R1) = 11 kΩ
	// R2 (R2) = 11 kΩ
	// C1 (Cf) = 22 nF
	// C2 (Cg) = 10 nF
}

func kindOf(k synth.PartKind) stock.Kind {
	if k == synth.Capacitor {
		return stock.Capacitor
	}
	return stock.Resistor
}
