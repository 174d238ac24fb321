package synth

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strconv"
	"strings"

	"drawerfit/fault"
)

// Section is one stage of the ideal cascade: a complex pole pair (2-pole), a
// real pole (1-pole), or a real pole with a pair (3-pole).
type Section struct {
	Topology *Topology
	// F0 is the natural frequency in Hz of the pair, or of the real pole of a
	// 1-pole section; for a 3-pole section it is the pair's.
	F0 float64
	// Q is the pair's quality factor; 0 for a 1-pole section.
	Q float64
	// RealF0 is the real pole's frequency in Hz for a 3-pole section, else 0.
	RealF0 float64
	// Num and Den are the ideal target section N(s)/D(s), s in rad/s,
	// Den[0] = 1, passband gain Gain (positive: the sign a circuit gives
	// is its topology's).
	Num, Den Poly
	// Gain is the section's passband gain magnitude, V/V (1 for unity).
	Gain float64
	// Reason says in a few words why the section is what and where it is.
	Reason string
}

// Eval returns the ideal section response N(jw)/D(jw) at angular frequency w.
func (s *Section) Eval(w float64) complex128 {
	return EvalRational(s.Num, s.Den, s.Topology.poles, w)
}

// Design is an ideal cascade of unity-gain sections realising a Spec.
type Design struct {
	Spec  Spec // normalised copy of the specification
	Order int
	Odd   Odd // the odd-order arrangement used (as asked; irrelevant for even orders)
	// Sections in cascade order: ascending Q, a 1-pole section first.
	Sections []Section
	// Notes explain the design: how the edge was placed, the stopband
	// margin, the Chebyshev even-order passband, an order below the minimum.
	Notes []string
	// Placing says where the target sits within the specification and the
	// margins it leaves (Spec.Placement asks; see Placing).
	Placing Placing

	edgeW float64 // 2π·fp: the normalisation frequency of element values
}

// MinOrder returns the lowest order (1..MaxOrder) whose design meets the
// specification at fp and fs. Butterworth and Chebyshev use the closed-form
// order formulas (docs/check-values.md, "Approximations"), then the order is checked against the
// analysed design (an even Chebyshev order with unity-gain sections has its
// attenuation measured from the ripple minimum at DC and may need one more).
// Bessel has no closed form: the order is increased from 1 until the design
// meets the specification. Without a stopband edge the result is the lowest
// order that meets the passband (1 except for unusual Bessel delay specs).
//
// Errors: fault.Invalid for a bad specification (see Spec.Normalize, except
// that a missing order is allowed here), fault.Infeasible when no order up to
// MaxOrder meets it (for Bessel, whose attenuation near the edge stops
// growing with the order, some demands are unreachable at any order).
func MinOrder(s Spec) (int, error) {
	if s.Order == 0 && s.Stop == 0 {
		s.Order = 1 // only to pass Normalize; MinOrder decides
	}
	if err := s.Normalize(); err != nil {
		return 0, err
	}
	start := 1
	if s.Stop != 0 && s.Approx != Bessel {
		raw := closedFormOrder(&s)
		if raw > MaxOrder {
			return 0, fault.Infeasiblef("%s %s needs order %d for %g dB at %s; the limit is %d. %s",
				s.Approx, s.Kind, int(math.Ceil(raw-1e-9)), s.StopAtten, FormatFrequency(s.Stop, 4), MaxOrder, beyondMaxOrder(s))
		}
		start = max(1, int(math.Ceil(raw-1e-9)))
	}
	best, bestN := math.Inf(-1), 0
	for n := start; n <= MaxOrder; n++ {
		d, err := buildDesign(s, n, OddOnePole)
		if err != nil {
			return 0, err
		}
		ap := d.AttenuationAt(s.Pass)
		if ap > s.PassAtten+attenSlack {
			continue
		}
		if s.Stop == 0 {
			return n, nil
		}
		as := d.AttenuationAt(s.Stop)
		if as >= s.StopAtten-attenSlack {
			return n, nil
		}
		if as > best {
			best, bestN = as, n
		}
	}
	if s.Stop == 0 {
		return 0, fault.Infeasiblef("no %s order up to %d keeps the attenuation at %g Hz within %.6g dB",
			s.Approx, MaxOrder, s.Pass, s.PassAtten)
	}
	if bestN == 0 {
		return 0, fault.Infeasiblef("no %s order up to %d meets %g dB at %g Hz with at most %.6g dB at %g Hz",
			s.Approx, MaxOrder, s.StopAtten, s.Stop, s.PassAtten, s.Pass)
	}
	return 0, fault.Infeasiblef("no %s order up to %d reaches %g dB at %g Hz: the most is %.2f dB (order %d); move the stopband edge away or use another response",
		s.Approx, MaxOrder, s.StopAtten, s.Stop, best, bestN)
}

// beyondMaxOrder says what would bring a specification that needs more
// than MaxOrder (closed form, Butterworth or Chebyshev) within reach: a
// Chebyshev response with the same passband attenuation as its ripple (for
// a Butterworth), what order MaxOrder reaches at fs, and the stopband edge
// where order MaxOrder reaches the attenuation asked for.
func beyondMaxOrder(s Spec) string {
	var out []string
	if s.Approx == Butterworth {
		c := s
		c.Approx, c.Ripple, c.Order = Chebyshev, s.PassAtten, 0
		if n, err := MinOrder(c); err == nil {
			out = append(out, fmt.Sprintf("A Chebyshev response with %s dB ripple would do it with order %d.",
				strconv.FormatFloat(s.PassAtten, 'g', 3, 64), n))
		}
	}
	gp := math.Pow(10, s.PassAtten/10) - 1
	gs := math.Pow(10, s.StopAtten/10) - 1
	n := float64(MaxOrder)
	r := s.stopRatio()
	var reach, ratio float64
	if s.Approx == Chebyshev {
		reach = 10 * math.Log10(1+gp*math.Pow(math.Cosh(n*math.Acosh(r)), 2))
		ratio = math.Cosh(math.Acosh(math.Sqrt(gs/gp)) / n)
	} else {
		reach = 10 * math.Log10(1+gp*math.Pow(r, 2*n))
		ratio = math.Pow(gs/gp, 1/(2*n))
	}
	// The edge rounded outward to three digits, so that it is enough.
	scale := math.Pow(10, math.Floor(math.Log10(s.Pass*ratio))-2)
	edge := math.Ceil(s.Pass*ratio/scale-1e-9) * scale
	if s.Kind == HighPass {
		scale = math.Pow(10, math.Floor(math.Log10(s.Pass/ratio))-2)
		edge = math.Floor(s.Pass/ratio/scale+1e-9) * scale
	}
	out = append(out, fmt.Sprintf("Or relax the specification: order %d reaches %.1f dB at %s, and %g dB from %s.",
		MaxOrder, reach, FormatFrequency(s.Stop, 4), s.StopAtten, FormatFrequency(edge, 3)))
	return strings.Join(out, " ")
}

// attenSlack absorbs rounding when a design meets a specification exactly
// (dB; far below anything measurable).
const attenSlack = 1e-9

// closedFormOrder returns the unrounded minimum order of the closed-form
// formulas (docs/check-values.md, "Approximations"; the same as scipy.signal buttord and cheb1ord).
func closedFormOrder(s *Spec) float64 {
	r := s.stopRatio()
	gs := math.Pow(10, s.StopAtten/10) - 1
	gp := math.Pow(10, s.PassAtten/10) - 1
	if s.Approx == Chebyshev {
		return math.Acosh(math.Sqrt(gs/gp)) / math.Acosh(r)
	}
	return math.Log10(gs/gp) / (2 * math.Log10(r))
}

// NewDesign designs the ideal cascade for s at the given order (0: s.Order,
// or MinOrder when that is 0 too) with the given odd-order arrangement
// (OddDefault: s.Odd). Any order 1..MaxOrder may be asked for; an order below
// the minimum gives a design with a note saying by how much it misses the
// stopband. The passband edge is always met exactly (attenuation Ap at fp,
// or the unit-delay placement for BesselDelay) and the slack of a higher
// order goes to the stopband.
//
// Errors: fault.Invalid for a bad specification or order, fault.Infeasible
// when no order meets the specification or a 3-pole section has no positive
// element values.
func NewDesign(s Spec, order int, odd Odd) (*Design, error) {
	if order == 0 {
		order = s.Order
	}
	if order < 0 || order > MaxOrder {
		return nil, fault.Invalidf("order %d is outside 1..%d", order, MaxOrder)
	}
	if order != 0 && s.Order == 0 && s.Stop == 0 {
		s.Order = order
	}
	if err := s.Normalize(); err != nil {
		return nil, err
	}
	if odd == OddDefault {
		odd = s.Odd
	}
	if odd != OddOnePole && odd != OddThreePole {
		return nil, fault.Invalidf("unknown odd-order arrangement %d", odd)
	}
	minN := 0
	if s.Stop != 0 {
		var err error
		minN, err = MinOrder(s)
		if err != nil && (order == 0 || fault.KindOf(err) != fault.Infeasible) {
			return nil, err
		}
	}
	if order == 0 {
		order = minN
	}
	pl := placed{k: 1, r: s.Ripple}
	switch {
	case s.Placement != PlaceInside:
		pl.why = "the classical placement was asked for"
	case minN != 0 && order < minN:
		pl.why = fmt.Sprintf("order %d is below the minimum %d, so there is no slack", order, minN)
	default:
		pl = placement(&s, order)
	}
	d, err := buildPlaced(s, order, odd, pl.k, pl.r)
	if err != nil {
		return nil, err
	}
	d.place(pl)
	if err := d.assignGains(); err != nil {
		return nil, err
	}
	d.explain(minN)
	return d, nil
}

// buildDesign computes the poles with the classical placement (Ap exactly at
// fp) and groups the sections.
func buildDesign(s Spec, n int, odd Odd) (*Design, error) {
	return buildPlaced(s, n, odd, 1, s.Ripple)
}

// buildPlaced computes the poles (Chebyshev with ripple r), places the edge
// classically, scales the frequencies by k on the low-pass prototype axis
// (k > 1 moves a low-pass edge up and a high-pass edge down) and groups the
// sections.
func buildPlaced(s Spec, n int, odd Odd, k, r float64) (*Design, error) {
	poles := Prototype(s.Approx, n, r, s.BesselNorm)
	scaleClassical(&s, n, poles)
	for i := range poles {
		poles[i] *= complex(k, 0)
	}
	d := &Design{Spec: s, Order: n, Odd: odd, edgeW: 2 * math.Pi * s.Pass}
	var pairs []complex128
	var realPole float64
	for _, p := range poles {
		if imag(p) == 0 {
			realPole = -real(p)
		} else {
			pairs = append(pairs, p)
		}
	}
	sort.SliceStable(pairs, func(i, j int) bool {
		_, qi := PairF0Q(pairs[i])
		_, qj := PairF0Q(pairs[j])
		return qi < qj
	})
	// Normalised frequency w maps to fp·w (low-pass) or fp/w (high-pass).
	hz := func(w float64) float64 {
		if s.Kind == HighPass {
			return s.Pass / w
		}
		return s.Pass * w
	}
	total := len(pairs)
	if realPole != 0 && (odd == OddOnePole || len(pairs) == 0) {
		total++ // the real pole is a stage of its own
	}
	if realPole != 0 && (odd == OddOnePole || len(pairs) == 0) {
		f := hz(realPole)
		sec := Section{F0: f, Topology: TopologyFor(s.Kind, 1),
			Reason: "real pole of the odd order as its own buffered RC section; first, as it has no peaking"}
		sec.Num, sec.Den = firstOrderPoly(s.Kind, 2*math.Pi*f)
		d.Sections = append(d.Sections, sec)
	}
	for i, p := range pairs {
		w0, q := PairF0Q(p)
		f := hz(w0)
		num, den := pairPoly(s.Kind, 2*math.Pi*f, q)
		sec := Section{F0: f, Q: q, Topology: TopologyFor(s.Kind, 2), Num: num, Den: den,
			Reason: fmt.Sprintf("pole pair, Q %.4g: stage %d of %d in order of rising Q", q, len(d.Sections)+1, total)}
		if i == 0 && realPole != 0 && odd == OddThreePole {
			fr := hz(realPole)
			n1, d1 := firstOrderPoly(s.Kind, 2*math.Pi*fr)
			sec.Topology = TopologyFor(s.Kind, 3)
			sec.RealF0 = fr
			sec.Num, sec.Den = mulPoly(n1, num), mulPoly(d1, den)
			sec.Reason = fmt.Sprintf("real pole (%s) with the lowest-Q pair (Q %.4g) in one single-amplifier 3-pole section; first, as it has the lowest Q",
				hzString(fr), q)
			if _, ok := sec.Topology.Normalised(d.normalisedDen(sec.Den)); !ok {
				return nil, fault.Infeasiblef("%s order %d: the 3-pole section (real pole with the Q %.3g pair) has no positive element values; use the 1-pole arrangement",
					s.Approx, n, q)
			}
		}
		d.Sections = append(d.Sections, sec)
	}
	return d, nil
}

// firstOrderPoly returns the unity-gain first-order section with pole at w.
func firstOrderPoly(k Kind, w float64) (num, den Poly) {
	if k == HighPass {
		return Poly{0, 1 / w}, Poly{1, 1 / w}
	}
	return Poly{1}, Poly{1, 1 / w}
}

// pairPoly returns the unity-gain second-order section with natural angular
// frequency w0 and quality factor q.
func pairPoly(k Kind, w0, q float64) (num, den Poly) {
	den = Poly{1, 1 / (w0 * q), 1 / (w0 * w0)}
	if k == HighPass {
		return Poly{0, 0, 1 / (w0 * w0)}, den
	}
	return Poly{1}, den
}

// mulPoly multiplies a first-order by a second-order polynomial.
func mulPoly(a, b Poly) Poly {
	var c Poly
	for i := 0; i <= 1; i++ {
		for j := 0; j <= 2; j++ {
			c[i+j] += a[i] * b[j]
		}
	}
	return c
}

// normalisedDen rescales a section denominator from s in rad/s to s in units
// of the design's edge 2π·fp.
func (d *Design) normalisedDen(den Poly) Poly {
	w := 1.0
	for i := range den {
		den[i] *= w
		w *= d.edgeW
	}
	return den
}

// Target returns the ideal cascade response at angular frequency w (rad/s):
// the product of the ideal sections, unity passband gain.
func (d *Design) Target(w float64) complex128 {
	h := complex(1, 0)
	for i := range d.Sections {
		h *= d.Sections[i].Eval(w)
	}
	return h
}

// AttenuationAt returns the ideal design's attenuation at f (Hz) in positive
// dB relative to the passband gain.
func (d *Design) AttenuationAt(f float64) float64 {
	return Attenuation(d.Target(2*math.Pi*f)) + d.GainDB()
}

// GainDB returns the ideal design's passband gain in dB: the sum of its
// sections' gains.
func (d *Design) GainDB() float64 {
	var g float64
	for i := range d.Sections {
		if s := &d.Sections[i]; s.Gain > 0 {
			g += 20 * math.Log10(s.Gain)
		}
	}
	return g
}

// Inverting reports whether the design's chosen topologies invert the
// signal overall (an odd number of inverting sections).
func (d *Design) Inverting() bool {
	n := 0
	for i := range d.Sections {
		if d.Sections[i].Topology.inverting {
			n++
		}
	}
	return n%2 == 1
}

// GainSections returns the indices of the sections that can carry gain:
// the 2-pole sections (a 1-pole RC section and the single-amplifier 3-pole
// section are unity-gain followers).
func (d *Design) GainSections() []int {
	var out []int
	for i := range d.Sections {
		if d.Sections[i].Topology.poles == 2 {
			out = append(out, i)
		}
	}
	return out
}

// assignGains shares the specification's passband gain between the
// sections by the rule in the package doc (equal shares in dB over the
// 2-pole sections), scales their numerators, and picks each 2-pole
// section's topology from the specification's choice (TopologyFor the
// family; auto plans with Sallen-Key). Errors: fault.Infeasible when a gain
// is asked for and the design has no 2-pole section, or when the
// specification asks for multiple-feedback sections that keep the polarity
// and the count of 2-pole sections is odd.
func (d *Design) assignGains() error {
	s := &d.Spec
	gs := d.GainSections()
	for i := range d.Sections {
		d.Sections[i].Gain = 1
	}
	if s.GainDB > 0 && len(gs) == 0 {
		return fault.Infeasiblef("a passband gain of %g dB needs a 2-pole section, and order %d (%s) has none; ask for a higher order or the 1-pole arrangement",
			s.GainDB, d.Order, d.Odd)
	}
	share := 1.0
	if len(gs) > 0 {
		share = math.Pow(10, s.GainDB/20/float64(len(gs)))
	}
	for _, i := range gs {
		sec := &d.Sections[i]
		sec.Gain = share
		for k := range sec.Num {
			sec.Num[k] *= share
		}
		sec.Topology = PlanTopology(s.Kind, share, s.Topology)
	}
	if s.Topology == TopologyMFB && s.Polarity == PolarityKeep && len(gs)%2 == 1 {
		return fault.Infeasiblef("order %d has %d 2-pole sections: an odd number of inverting multiple-feedback sections inverts the signal, which the polarity keep forbids; use --topology auto or sallen-key, or another order",
			d.Order, len(gs))
	}
	return nil
}

// PlanTopology returns the topology a plan without stock gives a 2-pole
// section of kind k with passband gain magnitude gain (V/V) under choice c:
// multiple-feedback for TopologyMFB, otherwise Sallen-Key (unity-gain for a
// gain of 1, with gain K = 1 + Rb/Ra above).
func PlanTopology(k Kind, gain float64, c TopologyChoice) *Topology {
	switch {
	case c == TopologyMFB && k == LowPass:
		return &mfbLowPass
	case c == TopologyMFB:
		return &mfbHighPass
	case gain > 1+1e-12 && k == LowPass:
		return &sallenKeyGainLowPass
	case gain > 1+1e-12:
		return &sallenKeyGainHighPass
	}
	return TopologyFor(k, 2)
}

// Use builds section i with topology t, one of its Alternatives. Errors:
// fault.Invalid when t is not among them.
func (d *Design) Use(i int, t *Topology) error {
	for _, a := range d.Alternatives(i) {
		if a == t {
			d.Sections[i].Topology = t
			return nil
		}
	}
	return fault.Invalidf("section %d (%s) cannot be built as a %s", i+1, d.Sections[i].Topology.name, t.name)
}

// Alternatives returns the topologies that may build section i under the
// design's specification, the plan's own choice first: for a 2-pole
// section under TopologyAuto both families (the Sallen-Key that fits the
// section's gain, and the multiple-feedback), otherwise only the one the
// specification asks for.
func (d *Design) Alternatives(i int) []*Topology {
	sec := &d.Sections[i]
	k := d.Spec.Kind
	if sec.Topology.poles != 2 {
		return []*Topology{TopologyFor(k, sec.Topology.poles)}
	}
	if d.Spec.Topology != TopologyAuto {
		return []*Topology{PlanTopology(k, sec.Gain, d.Spec.Topology)}
	}
	return []*Topology{PlanTopology(k, sec.Gain, TopologySallenKey), PlanTopology(k, sec.Gain, TopologyMFB)}
}

// TargetGroupDelay returns the ideal cascade's group delay in seconds at
// angular frequency w.
func (d *Design) TargetGroupDelay(w float64) float64 {
	var t float64
	for i := range d.Sections {
		s := &d.Sections[i]
		t += GroupDelayRational(s.Num, s.Den, s.Topology.poles, w)
	}
	return t
}

// Attenuation returns -20·log10|h|: positive dB of loss for a response h
// relative to unity gain.
func Attenuation(h complex128) float64 { return -20 * math.Log10(cmplx.Abs(h)) }

// explain fills the design's notes.
func (d *Design) explain(minN int) {
	s := &d.Spec
	ap := d.AttenuationAt(s.Pass)
	inside := d.Placing.Used == PlaceInside
	switch {
	case inside:
		d.note("%s", d.Placing.Why)
		if s.Approx == Chebyshev && d.Order%2 == 0 {
			d.note("even order with unity-gain sections: the %s gain is the ripple minimum, so the passband rises up to %.3g dB above it; the passband is judged by its ripple", dcName(s.Kind), d.Placing.Ripple)
		}
	case s.Approx == Chebyshev:
		d.note("fp %s is the edge of the %.4g dB ripple band", hzString(s.Pass), s.Ripple)
		if d.Order%2 == 0 {
			ref := dcName(s.Kind)
			d.note("even order with unity-gain sections: the %s gain is the ripple minimum, so the passband rises up to %.4g dB above it and the attenuation at fp is 0 dB relative to the %s gain", ref, s.Ripple, ref)
		}
	case s.Approx == Bessel && s.BesselNorm == BesselDelay:
		d.note("unit-delay Bessel normalisation scaled to fp: group delay at DC %s, attenuation at fp %.3f dB, -3 dB at %s",
			secondsString(d.TargetGroupDelay(0)), ap, hzString(d.halfPower()))
	default:
		if math.Abs(s.PassAtten-HalfPowerDB) < 1e-12 {
			d.note("edge placed at the -3 dB point: %.4f dB at fp %s", ap, hzString(s.Pass))
		} else {
			d.note("edge placed to meet the passband exactly: %.4g dB at fp %s, -3 dB at %s", ap, hzString(s.Pass), hzString(d.halfPower()))
		}
	}
	if !inside && s.Placement == PlaceInside {
		d.note("%s", d.Placing.Why)
	}
	if s.Stop == 0 {
		return
	}
	as := d.AttenuationAt(s.Stop)
	switch {
	case minN == 0:
		d.note("no order up to %d meets %.4g dB at fs %s; order %d gives %.2f dB there", MaxOrder, s.StopAtten, hzString(s.Stop), d.Order, as)
	case d.Order < minN:
		d.note("order %d is below the minimum %d: %.2f dB at fs %s, %.2f dB short of the required %.4g dB", d.Order, minN, as, hzString(s.Stop), s.StopAtten-as, s.StopAtten)
	case inside && d.Order > minN:
		d.note("order %d is above the minimum %d: %.2f dB at fs %s, margin %.2f dB", d.Order, minN, as, hzString(s.Stop), as-s.StopAtten)
	case d.Order > minN:
		d.note("order %d is above the minimum %d: the passband edge is met exactly and the slack goes to the stopband: %.2f dB at fs %s, margin %.2f dB", d.Order, minN, as, hzString(s.Stop), as-s.StopAtten)
	default:
		d.note("minimum order %d: %.2f dB at fs %s, margin %.2f dB over the required %.4g dB", d.Order, as, hzString(s.Stop), as-s.StopAtten, s.StopAtten)
	}
}

// dcName names where a unity-gain cascade has its passband gain reference.
func dcName(k Kind) string {
	if k == HighPass {
		return "high-frequency"
	}
	return "DC"
}

func (d *Design) note(format string, args ...any) {
	d.Notes = append(d.Notes, fmt.Sprintf(format, args...))
}

// halfPower returns the frequency in Hz where the ideal design's attenuation
// (relative to its passband gain) is 3.0103 dB; the response of every
// approximation here crosses that level once.
func (d *Design) halfPower() float64 {
	lo, hi := d.Spec.Pass, d.Spec.Pass
	at := func(f float64) float64 {
		a := d.AttenuationAt(f)
		if d.Spec.Kind == HighPass {
			return -a // attenuation falls with frequency
		}
		return a
	}
	target := HalfPowerDB
	if d.Spec.Kind == HighPass {
		target = -target
	}
	for at(lo) > target {
		lo /= 2
	}
	for at(hi) < target {
		hi *= 2
	}
	for it := 0; it < 200 && hi-lo > 1e-13*hi; it++ {
		m := 0.5 * (lo + hi)
		if at(m) < target {
			lo = m
		} else {
			hi = m
		}
	}
	return 0.5 * (lo + hi)
}

// hzString formats a frequency for notes and reasons: 1.5 kHz, 50 Hz.
func hzString(f float64) string { return FormatFrequency(f, 4) }

func secondsString(t float64) string { return siString(t, "s") }

// siString formats x with an SI prefix and four significant figures.
func siString(x float64, unit string) string {
	prefixes := []struct {
		p string
		v float64
	}{{"G", 1e9}, {"M", 1e6}, {"k", 1e3}, {"", 1}, {"m", 1e-3}, {"µ", 1e-6}, {"n", 1e-9}, {"p", 1e-12}, {"f", 1e-15}}
	ax := math.Abs(x)
	for _, p := range prefixes {
		if ax >= p.v*(1-5e-5) {
			return fmt.Sprintf("%.4g %s%s", x/p.v, p.p, unit)
		}
	}
	return fmt.Sprintf("%.4g %s", x, unit)
}

// MaxVariants bounds the topology assignments Variants lists: with more
// 2-pole sections than fit in it, only the uniform assignments are listed.
const MaxVariants = 16

// Variants returns the design built with every assignment of its
// sections' Alternatives that the specification's polarity allows, the
// plan's own assignment first (when allowed). When the assignments number
// more than MaxVariants, only the uniform ones (every 2-pole section of one
// family) are returned. Each variant is a copy; d is not changed.
func (d *Design) Variants() []*Design {
	var idx []int
	var alts [][]*Topology
	total := 1
	for i := range d.Sections {
		if a := d.Alternatives(i); len(a) > 1 {
			idx = append(idx, i)
			alts = append(alts, a)
			total *= len(a)
		}
	}
	if len(idx) == 0 {
		return []*Design{d}
	}
	var out []*Design
	add := func(choice []int) {
		v := *d
		v.Sections = append([]Section(nil), d.Sections...)
		v.Notes = append([]string(nil), d.Notes...)
		for k, i := range idx {
			v.Sections[i].Topology = alts[k][choice[k]]
		}
		if d.Spec.Polarity == PolarityKeep && v.Inverting() {
			return
		}
		out = append(out, &v)
	}
	choice := make([]int, len(idx))
	if total > MaxVariants {
		for c := 0; c < len(alts[0]); c++ {
			for k := range choice {
				choice[k] = min(c, len(alts[k])-1)
			}
			add(choice)
		}
		return out
	}
	for {
		add(choice)
		k := len(choice) - 1
		for k >= 0 {
			choice[k]++
			if choice[k] < len(alts[k]) {
				break
			}
			choice[k] = 0
			k--
		}
		if k < 0 {
			return out
		}
	}
}

// TopologySummary names the design's circuits in cascade order, counting
// runs of one family: "RC + 2 × SK", "MFB + SK".
func (d *Design) TopologySummary() string {
	var parts []string
	for i := 0; i < len(d.Sections); {
		t := d.Sections[i].Topology
		j := i
		for j < len(d.Sections) && d.Sections[j].Topology.family == t.family && d.Sections[j].Topology.poles == t.poles {
			j++
		}
		f := t.family
		name := f.Short()
		if d.Sections[i].Topology.poles == 3 {
			name = "3-pole SK"
		}
		if j-i > 1 {
			name = fmt.Sprintf("%d × %s", j-i, name)
		}
		parts = append(parts, name)
		i = j
	}
	return strings.Join(parts, " + ")
}
