package report

import (
	"fmt"
	"math"
	"testing"

	"drawerfit/optimize"
	"drawerfit/respplot"
	"drawerfit/synth"
)

// e24 and e12 are the IEC 60063 mantissas (E24 as listed in docs/check-values.md, "Preferred values"; E12
// is every other E24 value, as the standard lists it).
var (
	e24 = []float64{1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1}
	e12 = []float64{1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2}
)

// nearest returns the value of series s nearest to v on a log scale.
func nearest(s []float64, v float64) float64 {
	dec := math.Pow(10, math.Floor(math.Log10(v)))
	best := 0.0
	for _, d := range []float64{dec / 10, dec, dec * 10} {
		for _, m := range s {
			c := m * d
			if best == 0 || math.Abs(math.Log(c/v)) < math.Abs(math.Log(best/v)) {
				best = c
			}
		}
	}
	return best
}

// stockRows invents the drawer the fixtures draw from: one row per value,
// ids from 100 up, bins named by kind and decade.
type stockRows struct {
	ids  map[string]int64
	next int64
}

func (s *stockRows) part(k synth.PartKind, v float64) optimize.Part {
	if s.ids == nil {
		s.ids, s.next = map[string]int64{}, 100
	}
	key := fmt.Sprintf("%d %.4g", k, v)
	id, ok := s.ids[key]
	if !ok {
		id = s.next
		s.next++
		s.ids[key] = id
	}
	if k == synth.Capacitor {
		return optimize.Part{StockID: id, Value: v, Tolerance: 0.05, Dielectric: "C0G", Package: "0805",
			Location: fmt.Sprintf("C-%d", int(math.Floor(math.Log10(v)))+13)}
	}
	return optimize.Part{StockID: id, Value: v, Tolerance: 0.01, Package: "0603",
		Location: fmt.Sprintf("R-%d", int(math.Floor(math.Log10(v))))}
}

// buildCandidate designs spec with synth, scales it with the hand procedure
// and rounds every value to the invented stock: E24 resistors, E12
// capacitors. The first resistor is made of two parts in series and the
// last capacitor of two in parallel, so that combinations appear on the
// sheet. The candidate's figures are computed from its response.
func buildCandidate(t testing.TB, spec synth.Spec, odd synth.Odd) *optimize.Candidate {
	t.Helper()
	d, err := synth.NewDesign(spec, 0, odd)
	if err != nil {
		t.Fatal(err)
	}
	stages, err := d.Scale(synth.Scaling{})
	if err != nil {
		t.Fatal(err)
	}
	var rows stockRows
	c := &optimize.Candidate{Design: d}
	nr, nc := 0, 0
	lastCap := [2]int{-1, -1}
	for si, st := range stages {
		sf := optimize.SectionFit{Target: d.Sections[si]}
		for ei, val := range st.Values() {
			el := st.Topology.Element(ei)
			comp := optimize.Component{Symbol: el.Symbol, Kind: el.Kind, Arrangement: synth.Single}
			if el.Kind == synth.Resistor {
				nr++
				comp.Ref = fmt.Sprintf("R%d", nr)
				if si == 0 && nr == 1 {
					a := nearest(e24, val*0.8)
					b := nearest(e24, val-a)
					comp.Arrangement = synth.Series
					comp.Parts = []optimize.Part{rows.part(el.Kind, a), rows.part(el.Kind, b)}
				} else {
					comp.Parts = []optimize.Part{rows.part(el.Kind, nearest(e24, val))}
				}
			} else {
				nc++
				comp.Ref = fmt.Sprintf("C%d", nc)
				comp.Parts = []optimize.Part{rows.part(el.Kind, nearest(e12, val))}
				lastCap = [2]int{si, ei}
			}
			vals := make([]float64, len(comp.Parts))
			for i, p := range comp.Parts {
				vals[i] = p.Value
			}
			comp.Value = el.Kind.Combine(comp.Arrangement, vals...)
			sf.Components = append(sf.Components, comp)
		}
		c.Sections = append(c.Sections, sf)
	}
	// The last capacitor becomes a parallel pair: E12 value plus the E12
	// value nearest to what is missing.
	comp := &c.Sections[lastCap[0]].Components[lastCap[1]]
	want := stages[lastCap[0]].Values()[lastCap[1]]
	if extra := want - comp.Value; extra > 0.05*comp.Value {
		comp.Arrangement = synth.Parallel
		comp.Parts = append(comp.Parts, rows.part(synth.Capacitor, nearest(e12, extra)))
		comp.Value += comp.Parts[1].Value
	} else {
		a := nearest(e12, want*0.7)
		comp.Arrangement = synth.Parallel
		comp.Parts = []optimize.Part{rows.part(synth.Capacitor, a), rows.part(synth.Capacitor, nearest(e12, want-a))}
		comp.Value = comp.Parts[0].Value + comp.Parts[1].Value
	}
	finish(c)
	return c
}

// finish computes a candidate's figures from its own response, as the fit
// defines them: attenuation at fp and fs, the largest deviation from the
// target on a log grid (100 points per decade), part counts.
func finish(c *optimize.Candidate) {
	st := c.Stages()
	h := func(f float64) complex128 { return synth.CascadeResponse(st, 2*math.Pi*f) }
	s := c.Design.Spec
	c.PassAtten = synth.Attenuation(h(s.Pass))
	c.StopAtten = math.NaN()
	if s.Stop > 0 {
		c.StopAtten = synth.Attenuation(h(s.Stop))
	}
	lo, hi := s.Pass/10, s.Stop
	if s.Kind == synth.HighPass {
		lo, hi = s.Stop, s.Pass*10
	}
	for _, f := range respplot.LogGrid(lo, hi, int(100*math.Log10(hi/lo))+1) {
		e := math.Abs(respplot.GainDB(h(f)) - respplot.GainDB(c.Design.Target(2*math.Pi*f)))
		c.ResponseError = math.Max(c.ResponseError, e)
	}
	c.MeetsSpec = c.PassAtten <= s.PassAtten+1e-9 && (s.Stop == 0 || c.StopAtten >= s.StopAtten)
	use := map[int64]int{}
	c.PartCount = 0
	for _, sf := range c.Sections {
		for _, comp := range sf.Components {
			for _, p := range comp.Parts {
				use[p.StockID]++
				c.PartCount++
			}
		}
	}
	c.UniqueParts = len(use)
	c.StockUse = nil
	for id := int64(100); len(c.StockUse) < len(use); id++ {
		if n, ok := use[id]; ok {
			c.StockUse = append(c.StockUse, optimize.StockUse{StockID: id, PerBoard: n})
		}
	}
	for i := range c.Sections {
		sf := &c.Sections[i]
		sf.F0, sf.Q, sf.RealF0 = realisedF0Q(sf)
	}
}

// realisedF0Q reads f0 and Q of the built section from its denominator:
// for a pair D = 1 + s/(w0 Q) + s²/w0² (docs/check-values.md, "Section Q and w0"); for a
// 1-pole section D = 1 + s/w0; for a 3-pole section the pair and the real
// root of the cubic.
func realisedF0Q(sf *optimize.SectionFit) (f0, q, real float64) {
	_, den := sf.Target.Topology.Coeffs(sf.Values())
	switch sf.Target.Topology.Poles() {
	case 1:
		return 1 / (2 * math.Pi * den[1]), 0, 0
	case 2:
		w0 := 1 / math.Sqrt(den[2])
		return w0 / (2 * math.Pi), 1 / (w0 * den[1]), 0
	}
	// The real root of a3 s³ + a2 s² + a1 s + 1 by bisection on s < 0 (the
	// cubic is 1 at 0 and tends to -∞), then the pair from the quotient.
	p := func(s float64) float64 { return ((den[3]*s+den[2])*s+den[1])*s + 1 }
	a, b := -1.0, 0.0
	for p(a) > 0 {
		a *= 2
	}
	for i := 0; i < 200; i++ {
		m := (a + b) / 2
		if p(m) > 0 {
			b = m
		} else {
			a = m
		}
	}
	r := (a + b) / 2
	// D(s) = (1 - s/r)(1 + b1 s + b2 s²): b2 = -a3 r, b1 = a1 + 1/r.
	b2 := -den[3] * r
	b1 := den[1] + 1/r
	w0 := 1 / math.Sqrt(b2)
	return w0 / (2 * math.Pi), 1 / (w0 * b1), -r / (2 * math.Pi)
}

// lowpass4 is a 4th-order Butterworth low-pass: fp 1 kHz at 3.01 dB, fs
// 3 kHz at 30 dB (the closed-form order formula, docs/check-values.md, "Approximations", gives n = 4).
func lowpass4(t testing.TB) *optimize.Candidate {
	return buildCandidate(t, synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth,
		Pass: 1000, Stop: 3000, StopAtten: 30}, synth.OddOnePole)
}

// highpass3 is a 3rd-order Chebyshev high-pass with 0.5 dB ripple above
// 300 Hz and 30 dB at 100 Hz, built as one 3-pole section.
func highpass3(t testing.TB) *optimize.Candidate {
	return buildCandidate(t, synth.Spec{Kind: synth.HighPass, Approx: synth.Chebyshev, Ripple: 0.5,
		Pass: 300, Stop: 100, StopAtten: 30, Order: 3}, synth.OddThreePole)
}

// lowpass5 is a 5th-order Bessel low-pass with its real pole as a 1-pole
// section, to show three section kinds on one sheet.
func lowpass5(t testing.TB) *optimize.Candidate {
	return buildCandidate(t, synth.Spec{Kind: synth.LowPass, Approx: synth.Bessel,
		Pass: 2000, Order: 5}, synth.OddOnePole)
}

// sampleYield invents a yield summary (figures made up: the report only
// shows what it is given) with a real envelope from Envelope.
func sampleYield(c *optimize.Candidate) *YieldSummary {
	return &YieldSummary{
		Yield: 0.9135, CILow: 0.9005, CIHigh: 0.9250, Trials: 2000, Seed: 7, Dist: "uniform",
		Facts:  []Fact{{"-3 dB frequency, 5th to 95th percentile", "981 Hz to 1.019 kHz"}},
		Blame:  []BlameLine{{Ref: "C2", Section: 1, Share: 0.41}, {Ref: "C4", Section: 2, Share: 0.33}},
		Advice: []string{"C2 of section 1 causes most failures."},
		Bands:  []respplot.Band{Envelope(c, EnvelopeOptions{Trials: 300, Seed: 1})},
	}
}
