package tolerance

import (
	"fmt"
	"math"
	"strings"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// Practical returns the warnings a bench technician would give about the
// candidate's values and parts: values outside synth.PracticalLimits (the
// limits the fit searches within by default) and class-2 ceramic dielectrics (X7R, X5R,
// Y5V, ...) in the signal path. The thresholds are common practice, no
// source, and every warning says so. Errors: fault.Invalid for a malformed
// candidate.
func Practical(c *optimize.Candidate) ([]string, error) {
	b, err := newBoard(c)
	if err != nil {
		return nil, err
	}
	w := []string{}
	for ci := range b.comps {
		bc := &b.comps[ci]
		lim := synth.PracticalLimits
		switch {
		case bc.kind == synth.Resistor && bc.nominal < lim.RMin:
			w = append(w, fmt.Sprintf("%s is %s, below about %s: it loads the op-amp and the stage before (common practice, no source)",
				b.label(ci), ohms(bc.nominal), ohms(lim.RMin)))
		case bc.kind == synth.Resistor && bc.nominal > lim.RMax:
			w = append(w, fmt.Sprintf("%s is %s, above about %s: noise, bias-current error and stray capacitance start to matter (common practice, no source)",
				b.label(ci), ohms(bc.nominal), ohms(lim.RMax)))
		case bc.kind == synth.Capacitor && bc.nominal < lim.CMin:
			w = append(w, fmt.Sprintf("%s is %s, below about %s: stray and op-amp input capacitance become a noticeable part of it (common practice, no source)",
				b.label(ci), farads(bc.nominal), farads(lim.CMin)))
		case bc.kind == synth.Capacitor && bc.nominal > lim.CMax:
			w = append(w, fmt.Sprintf("%s is %s, above about %s: large capacitors of the stable dielectrics are rare and bulky (common practice, no source)",
				b.label(ci), farads(bc.nominal), farads(lim.CMax)))
		}
		if bc.kind != synth.Capacitor {
			continue
		}
		for _, p := range b.parts[bc.lo:bc.hi] {
			if ClassTwoCeramic(p.diel) {
				w = append(w, fmt.Sprintf("%s uses a %s ceramic: class-2 dielectrics change with voltage, temperature and age; use C0G/NP0 or film in the signal path (common practice, no source)",
					b.label(ci), stock.NormalizeDielectric(p.diel)))
				break
			}
		}
	}
	return w, nil
}

// ClassTwoCeramic reports whether a dielectric (any spelling
// stock.NormalizeDielectric reads) is a class-2 (or class-3) ceramic by its
// EIA code: a letter X, Y or Z for the low temperature, a digit for the
// high one and a letter for the change, as in X7R, X5R, Y5V, Z5U. Class-1
// codes (C0G, NP0, U2J) and film types are not.
func ClassTwoCeramic(code string) bool {
	c := strings.ToUpper(stock.NormalizeDielectric(code))
	if len(c) != 3 {
		return false
	}
	return strings.ContainsRune("XYZ", rune(c[0])) && c[1] >= '2' && c[1] <= '9' && c[2] >= 'P' && c[2] <= 'V'
}

// BiasResistor is the bias-current compensation resistor of one section.
type BiasResistor struct {
	Section int `json:"section"` // 1-based
	// Ohms is the DC resistance seen from the follower's + input, which the
	// resistor in the feedback path (output to - input) should equal.
	Ohms float64 `json:"ohms"`
	// Path names the resistors that make it: "R1+R2", "R2", ...
	Path string `json:"path"`
}

// BiasResistors returns, for each section, the DC resistance at the
// follower's + input with the source and the op-amp output as zero-impedance
// nodes and every capacitor open: R1+R2 for the Sallen-Key low-pass,
// R1+R2+R3 for the 3-pole low-pass, Rg (Rb) for the high-passes, R for the
// first-order sections. A resistor of that value in each follower's
// feedback path cancels the offset of a bipolar-input op-amp's bias
// currents without changing the response (common practice, no source). It
// is computed by nodal analysis of the DC network, so it holds for any
// topology. Errors: fault.Invalid for a malformed candidate, or a section
// whose + input has no DC path.
func BiasResistors(c *optimize.Candidate) ([]BiasResistor, error) {
	b, err := newBoard(c)
	if err != nil {
		return nil, err
	}
	var out []BiasResistor
	for si, s := range b.sections {
		t := s.topo
		vals := make([]float64, len(s.comps))
		for k, ci := range s.comps {
			vals[k] = b.comps[ci].nominal
		}
		r, path, ok := dcResistance(t, vals)
		if !ok {
			return nil, fault.Invalidf("section %d (%s): the + input has no DC path to the source or ground", si+1, t.Name())
		}
		out = append(out, BiasResistor{Section: si + 1, Ohms: r, Path: path})
	}
	return out, nil
}

// dcResistance injects 1 A into the + input of the resistive network left
// when capacitors are open, with "in", "0" and "out" held at 0 V, and
// returns the voltage there (the resistance) and the resistors that carry
// current. When the + input is grounded (a multiple-feedback section) it
// measures at the - input instead: a compensating resistor from the +
// input to ground then matches what the - input sees.
func dcResistance(t *synth.Topology, v []float64) (float64, string, bool) {
	var names []string
	index := func(n string) int {
		if n == "in" || n == "0" || n == "out" {
			return -1
		}
		for i, x := range names {
			if x == n {
				return i
			}
		}
		names = append(names, n)
		return len(names) - 1
	}
	at := t.Plus()
	if at == "0" {
		at = t.Minus()
	}
	plus := index(at)
	if plus < 0 {
		return 0, "", false
	}
	for _, e := range t.Elements() {
		index(e.From)
		index(e.To)
	}
	n := len(names)
	if n > 8 {
		return 0, "", false
	}
	var m [8][9]complex128
	for k, e := range t.Elements() {
		if e.Kind != synth.Resistor {
			continue
		}
		g := complex(1/v[k], 0)
		a, bb := index(e.From), index(e.To)
		if a >= 0 {
			m[a][a] += g
		}
		if bb >= 0 {
			m[bb][bb] += g
		}
		if a >= 0 && bb >= 0 {
			m[a][bb] -= g
			m[bb][a] -= g
		}
	}
	// Nodes with no resistor (only capacitors) float at DC; tie them with a
	// negligible conductance so the system stays regular. They carry no
	// current from the + input unless it floats too.
	for i := 0; i < n; i++ {
		if m[i][i] == 0 {
			m[i][i] = 1e-30
		}
	}
	m[plus][n] = 1
	x := solveAll(&m, n)
	r := real(x[plus])
	if !(r > 0) || r > 1e20 || math.IsNaN(r) {
		return 0, "", false
	}
	// Name the resistors that carry current from the + input.
	volt := func(node string) float64 {
		if i := index(node); i >= 0 {
			return real(x[i])
		}
		return 0
	}
	var path []string
	for _, e := range t.Elements() {
		if e.Kind == synth.Resistor && math.Abs(volt(e.From)-volt(e.To)) > 1e-9*r {
			path = append(path, e.Ref)
		}
	}
	return r, strings.Join(path, "+"), true
}

// ohms and farads format values for messages (4 significant digits).
func ohms(v float64) string   { return stock.FormatValuePrec(v, stock.Resistor, 4) }
func farads(v float64) string { return stock.FormatValuePrec(v, stock.Capacitor, 4) }
