package production_test

import (
	"fmt"
	"strings"

	"drawerfit/optimize"
	"drawerfit/production"
	"drawerfit/synth"
)

// A first-order low-pass of an invented plant-moisture sensor, built from
// stock rows 7 (resistor, bin A2) and 12 (capacitor, bin C1): the pick
// list for 30 boards.
func ExampleNewBatch() {
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 10, Order: 1}
	ideal, err := synth.NewDesign(spec, 1, synth.OddOnePole)
	if err != nil {
		panic(err)
	}
	c := &optimize.Candidate{Design: ideal, Sections: []optimize.SectionFit{{Target: ideal.Sections[0], Components: []optimize.Component{
		{Ref: "R1", Kind: synth.Resistor, Value: 160e3, Parts: []optimize.Part{{StockID: 7, Value: 160e3, Tolerance: 0.01, Location: "A2", Package: "0805"}}},
		{Ref: "C1", Kind: synth.Capacitor, Value: 100e-9, Parts: []optimize.Part{{StockID: 12, Value: 100e-9, Tolerance: 0.05, Location: "C1", Dielectric: "C0G", Package: "1206"}}},
	}}}}
	d := &production.Design{ID: "m2snqe", Boards: 30, Filters: []production.Filter{{Spec: spec, Candidate: c}}}
	b, err := production.NewBatch(d, 30)
	if err != nil {
		panic(err)
	}
	for _, p := range b.Picks {
		fmt.Printf("%s row %d: %d × %s for %s\n", p.Part.Location, p.StockID, p.Quantity, p.Part.Label(), strings.Join(p.Refs, " "))
	}
	// Output:
	// A2 row 7: 30 × 160 kΩ 1% 0805 @A2 for R1
	// C1 row 12: 30 × 100 nF 5% C0G 1206 @C1 for C1
}
