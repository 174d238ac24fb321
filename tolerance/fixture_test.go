package tolerance

import (
	"fmt"
	"testing"

	"drawerfit/optimize"
	"drawerfit/synth"
)

// The fixtures are built by hand, not by the fit: an ideal design scaled by
// the classical procedure (synth.Design.Scale), every element one part from
// an invented stock row.

// tols gives the tolerance of a part from its kind.
type tols struct{ r, c float64 }

// designCandidate builds a candidate for spec at the given order with single
// parts of the given tolerances.
func designCandidate(t testing.TB, spec synth.Spec, order int, odd synth.Odd, tl tols) *optimize.Candidate {
	t.Helper()
	d, err := synth.NewDesign(spec, order, odd)
	if err != nil {
		t.Fatalf("NewDesign: %v", err)
	}
	stages, err := d.Scale(synth.Scaling{})
	if err != nil {
		t.Fatalf("Scale: %v", err)
	}
	c := &optimize.Candidate{Design: d}
	nr, nc := 0, 0
	for i, st := range stages {
		sf := optimize.SectionFit{Target: d.Sections[i]}
		for k, e := range st.Topology.Elements() {
			v := st.Positions[k].Parts[0]
			tol := tl.r
			ref := ""
			if e.Kind == synth.Capacitor {
				tol = tl.c
				nc++
				ref = fmt.Sprintf("C%d", nc)
			} else {
				nr++
				ref = fmt.Sprintf("R%d", nr)
			}
			sf.Components = append(sf.Components, optimize.Component{
				Ref: ref, Symbol: e.Symbol, Kind: e.Kind, Value: v, Arrangement: synth.Single,
				Parts: []optimize.Part{{StockID: int64(100 + nr + 50*nc), Value: v, Tolerance: tol,
					Location: "bench drawer 3", Dielectric: "C0G", Package: "0805"}},
			})
		}
		c.Sections = append(c.Sections, sf)
	}
	return c
}

// singlePart is one invented stock part.
func singlePart(ref, sym string, k synth.PartKind, v, tol float64) optimize.Component {
	return optimize.Component{Ref: ref, Symbol: sym, Kind: k, Value: v, Arrangement: synth.Single,
		Parts: []optimize.Part{{StockID: 7, Value: v, Tolerance: tol, Location: "tray B", Dielectric: "C0G"}}}
}

// sallenKey builds a one-section Sallen-Key low-pass candidate with parts
// of the given tolerances (R1, R2, Cf, Cg).
func sallenKey(r1, r2, cf, cg float64, t [4]float64) *optimize.Candidate {
	topo := synth.SallenKeyLowPass()
	return &optimize.Candidate{Sections: []optimize.SectionFit{{
		Target: synth.Section{Topology: topo},
		Components: []optimize.Component{
			singlePart("R1", "R1", synth.Resistor, r1, t[0]),
			singlePart("R2", "R2", synth.Resistor, r2, t[1]),
			singlePart("C1", "Cf", synth.Capacitor, cf, t[2]),
			singlePart("C2", "Cg", synth.Capacitor, cg, t[3]),
		},
	}}}
}

// setTol sets the tolerance of every part of component ref.
func setTol(c *optimize.Candidate, ref string, tol float64) {
	for i := range c.Sections {
		for k := range c.Sections[i].Components {
			comp := &c.Sections[i].Components[k]
			if comp.Ref == ref {
				for p := range comp.Parts {
					comp.Parts[p].Tolerance = tol
				}
			}
		}
	}
}

// cloneCandidate deep-copies the sections of c.
func cloneCandidate(c *optimize.Candidate) *optimize.Candidate {
	n := *c
	n.Sections = make([]optimize.SectionFit, len(c.Sections))
	for i, s := range c.Sections {
		n.Sections[i] = s
		n.Sections[i].Components = make([]optimize.Component, len(s.Components))
		for k, comp := range s.Components {
			comp.Parts = append([]optimize.Part(nil), comp.Parts...)
			n.Sections[i].Components[k] = comp
		}
	}
	return &n
}

// butterworthLP is a low-pass Butterworth specification with a stopband.
func butterworthLP(fp, fs, as float64) synth.Spec {
	return synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: fp, Stop: fs, StopAtten: as}
}
