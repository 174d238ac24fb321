package tolerance

import (
	"fmt"
	"math"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/synth"
)

// board is a candidate flattened for fast repeated analysis: every physical
// part in a fixed order (the order in which a trial draws them), the
// components built from them and the sections built from the components.
type board struct {
	parts    []physPart
	comps    []boardComp
	sections []boardSection
	// amp is the candidate's amplifier model (nil: ideal); with it every
	// analysis of the board uses the single-pole model, measured from the
	// passband gain ampRef = (A0/(1+A0))^2n in |H|², as the fit scores it.
	amp    *synth.OpAmp
	ampRef float64
	// ampFmax caps the frequencies analysed with the amplifier (Hz; 0: no
	// cap): a high-pass is judged up to HighPassUpperFactor·fp, as the fit
	// scores it, not into the amplifier's roll-off.
	ampFmax float64
}

// physPart is one physical part of the board.
type physPart struct {
	nominal float64 // ohms or farads
	tol     float64 // relative tolerance, fraction
	comp    int     // index into board.comps
	stockID int64
	diel    string
	// assumed is set when the stock gives no tolerance and tol is the
	// default of DefaultTolerance.
	assumed bool
}

// Default tolerances for parts whose stock row gives none (a stored 0): the
// usual tolerance of a film or C0G capacitor and of a metal-film resistor
// (common practice, no source). Simulating such parts as exact would make
// the yield optimistic.
const (
	DefaultCapacitorTolerance = 0.05
	DefaultResistorTolerance  = 0.01
)

// DefaultTolerance returns the tolerance assumed for a part of kind k whose
// stock row gives none.
func DefaultTolerance(k synth.PartKind) float64 {
	if k == synth.Capacitor {
		return DefaultCapacitorTolerance
	}
	return DefaultResistorTolerance
}

// boardComp is one circuit position: parts[lo:hi] joined by arr.
type boardComp struct {
	ref, symbol string
	kind        synth.PartKind
	arr         synth.Arrangement
	lo, hi      int // range in board.parts
	section     int // index into board.sections
	element     int // index into the section topology's Elements
	nominal     float64
}

// boardSection is one section: its topology and its components in Elements
// order (indices into board.comps).
type boardSection struct {
	topo  *synth.Topology
	comps []int
}

// label names a component for people: "C2 (Cg, section 2)".
func (b *board) label(ci int) string {
	c := &b.comps[ci]
	if c.symbol != "" && c.symbol != c.ref {
		return fmt.Sprintf("%s (%s, section %d)", c.ref, c.symbol, c.section+1)
	}
	return fmt.Sprintf("%s (section %d)", c.ref, c.section+1)
}

// newBoard flattens a candidate. Malformed candidates (a missing topology,
// components that do not match it, parts with non-positive values or
// tolerances outside [0, 1)) are fault.Invalid errors: they come from stored
// data.
func newBoard(c *optimize.Candidate) (*board, error) {
	if c == nil || len(c.Sections) == 0 {
		return nil, fault.Invalidf("the design has no sections to analyse")
	}
	b := &board{}
	for si := range c.Sections {
		sf := &c.Sections[si]
		t := sf.Target.Topology
		if t == nil {
			return nil, fault.Invalidf("section %d has no circuit topology", si+1)
		}
		if len(sf.Components) != t.NumElements() {
			return nil, fault.Invalidf("section %d (%s) has %d components, its circuit needs %d",
				si+1, t.Name(), len(sf.Components), t.NumElements())
		}
		bs := boardSection{topo: t}
		for ei, comp := range sf.Components {
			if comp.Kind != t.Element(ei).Kind {
				return nil, fault.Invalidf("section %d: %s should be a %s, got a %s",
					si+1, t.Element(ei).Ref, t.Element(ei).Kind, comp.Kind)
			}
			if len(comp.Parts) == 0 {
				return nil, fault.Invalidf("section %d: %s has no parts", si+1, comp.Ref)
			}
			if comp.Arrangement == synth.Single && len(comp.Parts) != 1 {
				return nil, fault.Invalidf("section %d: %s is a single part but lists %d", si+1, comp.Ref, len(comp.Parts))
			}
			bc := boardComp{
				ref: comp.Ref, symbol: comp.Symbol, kind: comp.Kind, arr: comp.Arrangement,
				lo: len(b.parts), section: si, element: ei,
			}
			if bc.ref == "" {
				bc.ref = t.Element(ei).Ref
			}
			if bc.symbol == "" {
				bc.symbol = t.Element(ei).Symbol
			}
			vals := make([]float64, len(comp.Parts))
			for pi, p := range comp.Parts {
				if !(p.Value > 0) || math.IsInf(p.Value, 0) {
					return nil, fault.Invalidf("section %d: %s has a part of value %g", si+1, bc.ref, p.Value)
				}
				if !(p.Tolerance >= 0 && p.Tolerance < 1) {
					return nil, fault.Invalidf("section %d: %s has a part with tolerance %g (want a fraction in [0, 1))", si+1, bc.ref, p.Tolerance)
				}
				vals[pi] = p.Value
				pp := physPart{
					nominal: p.Value, tol: p.Tolerance, comp: len(b.comps),
					stockID: p.StockID, diel: p.Dielectric,
				}
				if pp.tol == 0 {
					pp.tol, pp.assumed = DefaultTolerance(comp.Kind), true
				}
				b.parts = append(b.parts, pp)
			}
			bc.hi = len(b.parts)
			// The nominal value is recomputed from the parts so that the
			// analysis never mixes a stored rounded value with drawn parts.
			bc.nominal = comp.Kind.Combine(comp.Arrangement, vals...)
			bs.comps = append(bs.comps, len(b.comps))
			b.comps = append(b.comps, bc)
		}
		b.sections = append(b.sections, bs)
	}
	if c.Amp != nil {
		m := c.Amp.Model
		b.amp = &m
		dc := m.DCFollowerGain()
		b.ampRef = math.Pow(dc*dc, float64(len(b.sections)))
		if c.Design != nil && c.Design.Spec.Kind == synth.HighPass {
			b.ampFmax = HighPassUpperFactor * c.Design.Spec.Pass
		}
	}
	return b, nil
}

// nominalParts returns the nominal value of every part.
func (b *board) nominalParts() []float64 {
	v := make([]float64, len(b.parts))
	for i, p := range b.parts {
		v[i] = p.nominal
	}
	return v
}

// coeffs holds one section's transfer function.
type coeffs struct {
	num, den synth.Poly
	poles    int
	// pass2 is the section's passband |H|² (1 for a unity-gain section):
	// a board's response is judged relative to its own passband gain, as
	// the specification's attenuations are.
	pass2 float64
}

// workspace is the per-goroutine scratch for analysing a board.
type workspace struct {
	b      *board
	vals   [][]float64 // per section, element values
	buf    []float64   // scratch for combining parts
	coeffs []coeffs
	// ideal analyses with ideal amplifiers even when the board has one
	// (the op-amp check's reference).
	ideal bool
}

func (b *board) newWorkspace() *workspace {
	w := &workspace{b: b, vals: make([][]float64, len(b.sections)), coeffs: make([]coeffs, len(b.sections))}
	maxParts := 0
	for _, c := range b.comps {
		maxParts = max(maxParts, c.hi-c.lo)
	}
	w.buf = make([]float64, maxParts)
	for i, s := range b.sections {
		w.vals[i] = make([]float64, len(s.comps))
		w.coeffs[i].poles = s.topo.Poles()
	}
	return w
}

// compValue combines the drawn parts of component ci.
func (w *workspace) compValue(ci int, parts []float64) float64 {
	c := &w.b.comps[ci]
	if c.hi-c.lo == 1 {
		return parts[c.lo]
	}
	buf := w.buf[:c.hi-c.lo]
	copy(buf, parts[c.lo:c.hi])
	return c.kind.Combine(c.arr, buf...)
}

// load computes every section's coefficients from part values.
func (w *workspace) load(parts []float64) {
	for si := range w.b.sections {
		w.loadSection(si, parts)
	}
}

// loadSection recomputes the coefficients of section si from part values.
func (w *workspace) loadSection(si int, parts []float64) {
	s := &w.b.sections[si]
	v := w.vals[si]
	for k, ci := range s.comps {
		v[k] = w.compValue(ci, parts)
	}
	c := &w.coeffs[si]
	c.num, c.den = s.topo.Coeffs(v)
	p := c.num[0] / c.den[0]
	if s.topo.Response() == synth.HighPass {
		p = c.num[c.poles] / c.den[c.poles]
	}
	c.pass2 = p * p
}

// passGain2 returns the cascade's passband |H|² (1 for unity-gain
// sections).
func (w *workspace) passGain2() float64 {
	g := 1.0
	for i := range w.coeffs {
		g *= w.coeffs[i].pass2
	}
	return g
}

// gain2 returns the cascade's |H(jω)|², with the board's amplifier when
// it has one (measured from its passband gain), relative to the
// passband gain of its sections with gain.
func (w *workspace) gain2(omega float64) float64 {
	if w.b.amp != nil && !w.ideal {
		if w.b.ampFmax > 0 {
			omega = math.Min(omega, 2*math.Pi*w.b.ampFmax)
		}
		g := 1.0
		for i, s := range w.b.sections {
			h := synth.AmpResponse(s.topo, w.vals[i], w.b.amp, omega)
			g *= real(h)*real(h) + imag(h)*imag(h)
		}
		return g / w.b.ampRef / w.passGain2()
	}
	g := 1.0
	for i := range w.coeffs {
		c := &w.coeffs[i]
		g *= synth.Gain2(c.num, c.den, c.poles, omega)
		if c.pass2 != 1 {
			g /= c.pass2
		}
	}
	return g
}
