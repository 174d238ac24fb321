package synth

import (
	"math"
	"slices"
	"sort"

	"gonum.org/v1/gonum/lapack"
	lapackgonum "gonum.org/v1/gonum/lapack/gonum"
)

// PartKind is the kind of a passive element in a section.
type PartKind uint8

const (
	// Resistor is a resistor, valued in ohms.
	Resistor PartKind = iota
	// Capacitor is a capacitor, valued in farads.
	Capacitor
)

func (k PartKind) String() string {
	if k == Capacitor {
		return "capacitor"
	}
	return "resistor"
}

// Arrangement says how one circuit position is built from physical parts.
type Arrangement uint8

const (
	// Single is one part.
	Single Arrangement = iota
	// Series is two or more parts in series.
	Series
	// Parallel is two or more parts in parallel.
	Parallel
)

func (a Arrangement) String() string {
	switch a {
	case Series:
		return "series"
	case Parallel:
		return "parallel"
	}
	return "single"
}

// Combine returns the value of parts of kind k joined by arrangement a:
// resistances add in series, capacitances add in parallel, and the other way
// round for reciprocals. It panics on an empty part list.
func (k PartKind) Combine(a Arrangement, parts ...float64) float64 {
	if len(parts) == 0 {
		panic("synth: Combine of no parts")
	}
	if a == Single {
		return parts[0]
	}
	add := (a == Series) == (k == Resistor)
	var s float64
	for _, p := range parts {
		if add {
			s += p
		} else {
			s += 1 / p
		}
	}
	if add {
		return s
	}
	return 1 / s
}

// Element is one circuit position of a topology.
type Element struct {
	Ref    string   // designator inside the section: R1, C2, ...
	Symbol string   // textbook name used in docs/check-values.md and handbook tables: Cf, Cg, Ra, ...
	Kind   PartKind // resistor or capacitor
	From   string   // node names: "in" and "out" are the section's ports, "0" is ground
	To     string
	Role   string // a few words for people: "feedback to output", "shunt to ground"
}

// Poly holds polynomial coefficients in ascending powers of s (s in rad/s).
// Entries beyond a section's pole count are zero.
type Poly [4]float64

// Family groups the section circuits a specification can ask for by name.
type Family uint8

const (
	// FamilyRC is the first-order RC section with a follower, used for the
	// real pole of an odd order whatever family is asked for.
	FamilyRC Family = iota
	// FamilySallenKey is the Sallen-Key family (unity gain or with a
	// non-inverting gain K = 1 + Rb/Ra) and the single-amplifier 3-pole
	// section built on it.
	FamilySallenKey
	// FamilyMFB is the multiple-feedback family: inverting, its gain a
	// resistor ratio (low-pass) or a capacitor ratio (high-pass).
	FamilyMFB
)

// String returns the family's identifier: "rc", "sallen-key" or "mfb".
func (f Family) String() string {
	switch f {
	case FamilySallenKey:
		return "sallen-key"
	case FamilyMFB:
		return "mfb"
	}
	return "rc"
}

// Short returns the family's abbreviation for tables: "RC", "SK", "MFB".
func (f Family) Short() string {
	switch f {
	case FamilySallenKey:
		return "SK"
	case FamilyMFB:
		return "MFB"
	}
	return "RC"
}

// Topology describes one section circuit once, as an immutable value read
// through its methods: its elements and nodes, the op-amp's connection, how
// its gain is set, which elements the search chooses and which the closed
// form solves, its symmetries, and its transfer function for arbitrary
// element values. Analysis, netlists, schematics, the fit, the yield and
// the build sheet all read this description.
//
// Every topology is a passive RC network around one op-amp with output
// node "out": the op-amp's + input is node Plus ("0" when grounded) and its
// - input node Minus ("out" for a follower).
type Topology struct {
	id       string // stable identifier used in JSON: "sallen-key-lowpass", ...
	name     string // for people: "Sallen-Key low-pass"
	response Kind   // LowPass or HighPass
	poles    int    // 1, 2 or 3
	elements []Element
	plus     string // node at the op-amp's + input
	minus    string // node at the op-amp's - input ("out" for a follower)
	family   Family
	// inverting: the passband gain is negative.
	inverting bool
	// gainFixed: the passband gain is 1 whatever the values; otherwise
	// minGain is the least passband gain magnitude the circuit can have
	// with positive elements (exclusive: 1 for K = 1 + Rb/Ra, 0 for MFB).
	gainFixed bool
	minGain   float64
	// gainElems are the elements whose ratio sets the gain (empty when
	// fixed), numerator first.
	gainElems []int
	// chosen are the elements the closed-form solver takes as given (the
	// search picks them from stock); the others it solves.
	chosen []int
	// symmetric lists pairs of elements the response cannot tell apart.
	symmetric [][2]int
	// equations are the design equations in plain text, for plan output.
	equations []string

	// coeffs returns N(s) and D(s) for element values v (ohms, farads, in
	// Elements order), with D(0) = 1.
	coeffs func(v []float64) (num, den Poly)
	// solve fills the solved elements of v, given its chosen ones, so that
	// D(s) equals den and the passband gain magnitude is gain (ignored by
	// a fixed-gain topology). It appends every positive solution to dst;
	// when none exists it appends the nearest realisable point (if nearest)
	// and reports false.
	solve func(v []float64, den Poly, gain float64, dst [][]float64, nearest bool) ([][]float64, bool)
	// normalised returns the textbook normalised values for den and gain:
	// unit resistors for a low-pass, unit capacitors for a high-pass, as
	// far as the gain allows.
	normalised func(den Poly, gain float64) ([]float64, bool)
}

// Coeffs returns the numerator and denominator of the section's transfer
// function for element values v (SI units, in Elements order). It panics if
// len(v) != len(t.Elements).
func (t *Topology) Coeffs(v []float64) (num, den Poly) {
	if len(v) != len(t.elements) {
		panic("synth: wrong number of element values for " + t.id)
	}
	return t.coeffs(v)
}

// Solve returns element vectors that realise the denominator den exactly
// with unity passband gain (see SolveGain).
func (t *Topology) Solve(caps []float64, den Poly) (sols [][]float64, ok bool) {
	return t.solve(caps, den, 1, nil, true)
}

// SolveGain returns element vectors that realise the denominator den
// exactly with passband gain magnitude gain (V/V; ignored by a topology of
// fixed unity gain), taking the chosen elements (Chosen: the capacitors,
// and for a divider the resistor to ground) from v (values in Elements
// order; the other entries are ignored) and solving for the others. ok is
// false when no exact positive solution exists; then the single returned
// vector is the nearest point the chosen values allow (for the Sallen-Key
// low-pass: equal resistors, which gives the highest Q those capacitors
// can reach).
func (t *Topology) SolveGain(v []float64, den Poly, gain float64) (sols [][]float64, ok bool) {
	return t.solve(v, den, gain, nil, true)
}

// SolveAppend is Solve appending to dst, for allocation-free loops.
func (t *Topology) SolveAppend(caps []float64, den Poly, dst [][]float64) ([][]float64, bool) {
	return t.solve(caps, den, 1, dst, true)
}

// SolveExactAppend is SolveAppend without the nearest point: it appends
// only exact positive solutions, and nothing when there is none. It is the
// fast path for searches that skip capacitor choices without a solution.
func (t *Topology) SolveExactAppend(caps []float64, den Poly, dst [][]float64) [][]float64 {
	dst, _ = t.solve(caps, den, 1, dst, false)
	return dst
}

// SolveGainExactAppend is SolveGain appending only exact positive
// solutions to dst.
func (t *Topology) SolveGainExactAppend(v []float64, den Poly, gain float64, dst [][]float64) [][]float64 {
	dst, _ = t.solve(v, den, gain, dst, false)
	return dst
}

// Normalised returns the classical normalised element values realising den
// with unity passband gain: unit resistors for a low-pass (capacitors
// solved), unit capacitors for a high-pass (resistors solved). ok is false
// when no positive solution exists.
func (t *Topology) Normalised(den Poly) ([]float64, bool) { return t.normalised(den, 1) }

// NormalisedGain is Normalised with passband gain magnitude gain (V/V).
// The gain-setting elements take the ratio the gain needs; the
// normalisation of each topology is written in its equations.
func (t *Topology) NormalisedGain(den Poly, gain float64) ([]float64, bool) {
	return t.normalised(den, gain)
}

// PassbandGain returns the signed passband gain (V/V) of the section with
// element values v: at DC for a low-pass, at infinite frequency for a
// high-pass.
func (t *Topology) PassbandGain(v []float64) float64 {
	num, den := t.Coeffs(v)
	if t.response == HighPass {
		return num[t.poles] / den[t.poles]
	}
	return num[0] / den[0]
}

// CanGain reports whether the topology realises passband gain magnitude g
// (V/V) with positive element values.
func (t *Topology) CanGain(g float64) bool {
	if t.gainFixed {
		return math.Abs(g-1) <= 1e-12
	}
	return g > t.minGain
}

// Eval returns H(jω) of the section with element values v at angular
// frequency w (rad/s).
func (t *Topology) Eval(v []float64, w float64) complex128 {
	num, den := t.coeffs(v)
	return EvalRational(num, den, t.poles, w)
}

// EvalRational returns N(jω)/D(jω) for polynomials of degree n.
func EvalRational(num, den Poly, n int, w float64) complex128 {
	s := complex(0, w)
	var nv, dv complex128
	for i := n; i >= 0; i-- {
		nv = nv*s + complex(num[i], 0)
		dv = dv*s + complex(den[i], 0)
	}
	return nv / dv
}

// Gain2 returns |N(jω)/D(jω)|² for real polynomials of degree n <= 3 without
// complex arithmetic: the hot path of the fit.
func Gain2(num, den Poly, n int, w float64) float64 {
	w2 := w * w
	// Even part: c0 - c2 w², odd part: c1 w - c3 w³.
	nr := num[0] - num[2]*w2
	ni := w * (num[1] - num[3]*w2)
	dr := den[0] - den[2]*w2
	di := w * (den[1] - den[3]*w2)
	return (nr*nr + ni*ni) / (dr*dr + di*di)
}

// Indices returns the positions in t.Elements of the elements of kind k.
func (t *Topology) Indices(k PartKind) []int {
	var out []int
	for i, e := range t.elements {
		if e.Kind == k {
			out = append(out, i)
		}
	}
	return out
}

// all lists every section circuit drawerfit knows, in a fixed order.
var all = []*Topology{&firstOrderLowPass, &firstOrderHighPass, &sallenKeyLowPass, &sallenKeyHighPass, &threePoleLowPass, &threePoleHighPass,
	&sallenKeyGainLowPass, &sallenKeyGainHighPass, &mfbLowPass, &mfbHighPass}

// Topologies returns every section circuit drawerfit knows, in a fixed
// order. The slice is a fresh copy; the topologies themselves are immutable.
func Topologies() []*Topology { return append([]*Topology(nil), all...) }

// FirstOrderLowPass returns the first-order RC low-pass with a follower.
func FirstOrderLowPass() *Topology { return &firstOrderLowPass }

// FirstOrderHighPass returns the first-order RC high-pass with a follower.
func FirstOrderHighPass() *Topology { return &firstOrderHighPass }

// SallenKeyLowPass returns the unity-gain Sallen-Key low-pass.
func SallenKeyLowPass() *Topology { return &sallenKeyLowPass }

// SallenKeyHighPass returns the unity-gain Sallen-Key high-pass.
func SallenKeyHighPass() *Topology { return &sallenKeyHighPass }

// ThreePoleLowPass returns the unity-gain single-amplifier 3-pole low-pass.
func ThreePoleLowPass() *Topology { return &threePoleLowPass }

// ThreePoleHighPass returns the unity-gain single-amplifier 3-pole high-pass.
func ThreePoleHighPass() *Topology { return &threePoleHighPass }

// SallenKeyGainLowPass returns the Sallen-Key low-pass with gain K = 1 + Rb/Ra.
func SallenKeyGainLowPass() *Topology { return &sallenKeyGainLowPass }

// SallenKeyGainHighPass returns the Sallen-Key high-pass with gain K = 1 + Rb/Ra.
func SallenKeyGainHighPass() *Topology { return &sallenKeyGainHighPass }

// MFBLowPass returns the multiple-feedback low-pass (inverting, gain R2/R1).
func MFBLowPass() *Topology { return &mfbLowPass }

// MFBHighPass returns the multiple-feedback high-pass (inverting, gain C1/C2).
func MFBHighPass() *Topology { return &mfbHighPass }

// TopologiesFor returns every topology for a section of the given response
// and pole count, the unity-gain default (TopologyFor) first.
func TopologiesFor(k Kind, poles int) []*Topology {
	var out []*Topology
	for _, t := range all {
		if t.response == k && t.poles == poles {
			out = append(out, t)
		}
	}
	return out
}

// TopologyFor returns the topology for a section of the given response and
// pole count (1, 2 or 3). It panics for any other pole count.
func TopologyFor(k Kind, poles int) *Topology {
	for _, t := range all {
		if t.response == k && t.poles == poles {
			return t
		}
	}
	panic("synth: no topology with that many poles")
}

// TopologyByID returns the topology with the given ID, or nil.
func TopologyByID(id string) *Topology {
	for _, t := range all {
		if t.id == id {
			return t
		}
	}
	return nil
}

// firstOrderLowPass is a series resistor and a shunt capacitor, buffered.
var firstOrderLowPass = Topology{
	id: "rc-lowpass", name: "first-order RC low-pass", response: LowPass, poles: 1, plus: "p",
	minus: "out", family: FamilyRC, gainFixed: true, chosen: []int{1}, symmetric: nil,
	equations: []string{"R·C = 1/w0", "gain 1 (follower)"},
	elements: []Element{
		{Ref: "R1", Symbol: "R", Kind: Resistor, From: "in", To: "p", Role: "series"},
		{Ref: "C1", Symbol: "C", Kind: Capacitor, From: "p", To: "0", Role: "shunt to ground"},
	},
	coeffs: func(v []float64) (num, den Poly) {
		return Poly{1}, Poly{1, v[0] * v[1]}
	},
	solve: func(v []float64, den Poly, _ float64, dst [][]float64, nearest bool) ([][]float64, bool) {
		return append(dst, []float64{den[1] / v[1], v[1]}), true
	},
	normalised: func(den Poly, _ float64) ([]float64, bool) { return []float64{1, den[1]}, den[1] > 0 },
}

// firstOrderHighPass is a series capacitor and a shunt resistor, buffered.
var firstOrderHighPass = Topology{
	id: "rc-highpass", name: "first-order RC high-pass", response: HighPass, poles: 1, plus: "p",
	minus: "out", family: FamilyRC, gainFixed: true, chosen: []int{0}, symmetric: nil,
	equations: []string{"R·C = 1/w0", "gain 1 (follower)"},
	elements: []Element{
		{Ref: "C1", Symbol: "C", Kind: Capacitor, From: "in", To: "p", Role: "series"},
		{Ref: "R1", Symbol: "R", Kind: Resistor, From: "p", To: "0", Role: "shunt to ground"},
	},
	coeffs: func(v []float64) (num, den Poly) {
		rc := v[0] * v[1]
		return Poly{0, rc}, Poly{1, rc}
	},
	solve: func(v []float64, den Poly, _ float64, dst [][]float64, nearest bool) ([][]float64, bool) {
		return append(dst, []float64{v[0], den[1] / v[0]}), true
	},
	normalised: func(den Poly, _ float64) ([]float64, bool) { return []float64{1, den[1]}, den[1] > 0 },
}

// sallenKeyLowPass is the unity-gain Sallen-Key low-pass:
// in -R1- a -R2- p; C1 (Cf) from a to out; C2 (Cg) from p to ground.
//
//	D(s) = 1 + s·Cg(R1+R2) + s²·R1 R2 Cf Cg
var sallenKeyLowPass = Topology{
	id: "sallen-key-lowpass", name: "Sallen-Key low-pass", response: LowPass, poles: 2, plus: "p",
	minus: "out", family: FamilySallenKey, gainFixed: true, chosen: []int{2, 3}, symmetric: [][2]int{{0, 1}},
	equations: []string{"w0² = 1/(R1·R2·Cf·Cg)", "1/Q = w0·Cg·(R1+R2)", "needs Cf/Cg >= 4Q²", "gain 1 (follower)"},
	elements: []Element{
		{Ref: "R1", Symbol: "R1", Kind: Resistor, From: "in", To: "a", Role: "series, input side"},
		{Ref: "R2", Symbol: "R2", Kind: Resistor, From: "a", To: "p", Role: "series, to + input"},
		{Ref: "C1", Symbol: "Cf", Kind: Capacitor, From: "a", To: "out", Role: "feedback to output"},
		{Ref: "C2", Symbol: "Cg", Kind: Capacitor, From: "p", To: "0", Role: "+ input to ground"},
	},
	coeffs: func(v []float64) (num, den Poly) {
		r1, r2, cf, cg := v[0], v[1], v[2], v[3]
		return Poly{1}, Poly{1, cg * (r1 + r2), r1 * r2 * cf * cg}
	},
	solve: func(v []float64, den Poly, _ float64, dst [][]float64, nearest bool) ([][]float64, bool) {
		cf, cg := v[2], v[3]
		p := den[2] / (cf * cg) // R1·R2
		s := den[1] / cg        // R1+R2
		disc := s*s - 4*p
		// Equal resistors put the discriminant exactly at zero, which
		// rounding can push just below: treat that as the double root.
		if disc < 0 && disc > -1e-12*s*s {
			disc = 0
		}
		if disc < 0 {
			if !nearest {
				return dst, false
			}
			r := math.Sqrt(p)
			return append(dst, []float64{r, r, cf, cg}), false
		}
		sq := math.Sqrt(disc)
		r1 := (s + sq) / 2
		r2 := p / r1 // avoids cancellation in (s - sq)/2
		return append(dst, []float64{r1, r2, cf, cg}), true
	},
	normalised: func(den Poly, _ float64) ([]float64, bool) {
		cg := den[1] / 2
		cf := den[2] / cg
		return []float64{1, 1, cf, cg}, cg > 0 && cf > 0
	},
}

// sallenKeyHighPass is the unity-gain Sallen-Key high-pass:
// in -C1- a -C2- p; R1 (Rf) from a to out; R2 (Rg) from p to ground.
//
//	H(s) = s² Rf Rg C1 C2 / (1 + s·Rf(C1+C2) + s²·Rf Rg C1 C2)
var sallenKeyHighPass = Topology{
	id: "sallen-key-highpass", name: "Sallen-Key high-pass", response: HighPass, poles: 2, plus: "p",
	minus: "out", family: FamilySallenKey, gainFixed: true, chosen: []int{0, 1}, symmetric: [][2]int{{0, 1}},
	equations: []string{"w0² = 1/(Rf·Rg·C1·C2)", "1/Q = w0·Rf·(C1+C2)", "gain 1 (follower)"},
	elements: []Element{
		{Ref: "C1", Symbol: "C1", Kind: Capacitor, From: "in", To: "a", Role: "series, input side"},
		{Ref: "C2", Symbol: "C2", Kind: Capacitor, From: "a", To: "p", Role: "series, to + input"},
		{Ref: "R1", Symbol: "Rf", Kind: Resistor, From: "a", To: "out", Role: "feedback to output"},
		{Ref: "R2", Symbol: "Rg", Kind: Resistor, From: "p", To: "0", Role: "+ input to ground"},
	},
	coeffs: func(v []float64) (num, den Poly) {
		c1, c2, rf, rg := v[0], v[1], v[2], v[3]
		a2 := rf * rg * c1 * c2
		return Poly{0, 0, a2}, Poly{1, rf * (c1 + c2), a2}
	},
	solve: func(v []float64, den Poly, _ float64, dst [][]float64, nearest bool) ([][]float64, bool) {
		c1, c2 := v[0], v[1]
		rf := den[1] / (c1 + c2)
		rg := den[2] / (rf * c1 * c2)
		return append(dst, []float64{c1, c2, rf, rg}), true
	},
	normalised: func(den Poly, _ float64) ([]float64, bool) {
		rf := den[1] / 2
		rg := den[2] / rf
		return []float64{1, 1, rf, rg}, rf > 0 && rg > 0
	},
}

// threePoleLowPass is the unity-gain single-amplifier third-order low-pass:
// in -R1- n1 -R2- n2 -R3- p; C1 (Ca) n1 to ground; C2 (Cf) n2 to out;
// C3 (Cb) p to ground.
//
//	D(s) = 1 + s(Ca R1 + Cb(R1+R2+R3)) + s²(Ca Cb R1(R2+R3) + Cb Cf R3(R1+R2)) + s³ Ca Cb Cf R1 R2 R3
var threePoleLowPass = Topology{
	id: "three-pole-lowpass", name: "single-amplifier 3-pole low-pass", response: LowPass, poles: 3, plus: "p",
	minus: "out", family: FamilySallenKey, gainFixed: true, chosen: []int{3, 4, 5}, symmetric: nil,
	equations: []string{"D(s) = 1 + s(Ca R1 + Cb(R1+R2+R3)) + s²(Ca Cb R1(R2+R3) + Cb Cf R3(R1+R2)) + s³ Ca Cb Cf R1 R2 R3", "gain 1 (follower)"},
	elements: []Element{
		{Ref: "R1", Symbol: "R1", Kind: Resistor, From: "in", To: "n1", Role: "series, input side"},
		{Ref: "R2", Symbol: "R2", Kind: Resistor, From: "n1", To: "n2", Role: "series, middle"},
		{Ref: "R3", Symbol: "R3", Kind: Resistor, From: "n2", To: "p", Role: "series, to + input"},
		{Ref: "C1", Symbol: "Ca", Kind: Capacitor, From: "n1", To: "0", Role: "shunt to ground"},
		{Ref: "C2", Symbol: "Cf", Kind: Capacitor, From: "n2", To: "out", Role: "feedback to output"},
		{Ref: "C3", Symbol: "Cb", Kind: Capacitor, From: "p", To: "0", Role: "+ input to ground"},
	},
	coeffs: func(v []float64) (num, den Poly) {
		r1, r2, r3, ca, cf, cb := v[0], v[1], v[2], v[3], v[4], v[5]
		return Poly{1}, Poly{1,
			ca*r1 + cb*(r1+r2+r3),
			ca*cb*r1*(r2+r3) + cb*cf*r3*(r1+r2),
			ca * cb * cf * r1 * r2 * r3}
	},
	solve: func(v []float64, den Poly, _ float64, dst [][]float64, nearest bool) ([][]float64, bool) {
		ca, cf, cb := v[3], v[4], v[5]
		a1, a2, a3 := den[1], den[2], den[3]
		// Given R1: R2+R3 = u from a1, R2·R3 = p from a3, and a2 then fixes
		// R3 linearly; the residual R2·R3 - p is a function of R1 alone.
		split := func(r1 float64) (r2, r3, g float64, okr bool) {
			u := (a1 - (ca+cb)*r1) / cb
			p := a3 / (ca * cb * cf * r1)
			r3 = ((a2-ca*cb*r1*u)/(cb*cf) - p) / r1
			r2 = u - r3
			return r2, r3, r2*r3 - p, u > 0 && r2 > 0 && r3 > 0
		}
		hi := a1 / (ca + cb)
		// g·cb·K²·R1⁴ (K = Ca Cb Cf) is the sextic U·N3·K·R1² - cb·N3² -
		// a3·cb·K·R1³ with U = a1 - (Ca+Cb)R1 and
		// N3 = -a3 + Ca a2 R1 - Ca² a1 R1² + Ca²(Ca+Cb) R1³.
		k := ca * cb * cf
		u := []float64{a1, -(ca + cb)}
		n3 := []float64{-a3, ca * a2, -ca * ca * a1, ca * ca * (ca + cb)}
		poly := polyAdd(polyScale(polyMul(polyMul(u, n3), []float64{0, 0, k}), 1),
			polyScale(polyMul(n3, n3), -cb))
		poly = polyAdd(poly, []float64{0, 0, 0, -a3 * cb * k})
		return polyRoots(hi, poly, split, func(r1, r2, r3 float64) []float64 {
			return []float64{r1, r2, r3, ca, cf, cb}
		}, dst, nearest)
	},
	normalised: func(den Poly, _ float64) ([]float64, bool) {
		a1, a2, a3 := den[1], den[2], den[3]
		// Unit resistors: a1 = Ca + 3Cb, a2 = 2Cb(Ca+Cf), a3 = Ca Cb Cf.
		// With x = Cb: Ca = a1 - 3x, Cf = a2/(2x) - Ca, and
		// (a2/2 - (a1-3x)x)(a1-3x) = a3.
		split := func(x float64) (ca, cf, g float64, okr bool) {
			ca = a1 - 3*x
			cf = a2/(2*x) - ca
			return ca, cf, ca*x*cf - a3, ca > 0 && cf > 0
		}
		// Times 2: (a2 - 2x(a1-3x))(a1-3x) - 2 a3, a cubic in x.
		y := []float64{a1, -3}
		poly := polyAdd(polyMul(polyAdd([]float64{a2}, polyMul([]float64{0, -2}, y)), y), []float64{-2 * a3})
		sols, ok := polyRoots(a1/3, poly, split, func(x, ca, cf float64) []float64 {
			return []float64{1, 1, 1, ca, cf, x}
		}, nil, true)
		if !ok {
			return sols[0], false
		}
		return sols[0], true
	},
}

// threePoleHighPass is the dual of ThreePoleLowPass:
// in -C1- n1 -C2- n2 -C3- p; R1 (Ra) n1 to ground; R2 (Rf) n2 to out;
// R3 (Rb) p to ground.
//
//	D(s) = 1 + s(C1 Ra + C2 Ra + C2 Rf + C3 Rf) + s²(Ra Rf (C1C2 + C1C3 + C2C3) + C2 C3 Rb Rf) + s³ C1 C2 C3 Ra Rb Rf
var threePoleHighPass = Topology{
	id: "three-pole-highpass", name: "single-amplifier 3-pole high-pass", response: HighPass, poles: 3, plus: "p",
	minus: "out", family: FamilySallenKey, gainFixed: true, chosen: []int{0, 1, 2}, symmetric: nil,
	equations: []string{"D(s) = 1 + s(C1 Ra + C2 Ra + C2 Rf + C3 Rf) + s²(Ra Rf (C1C2 + C1C3 + C2C3) + C2 C3 Rb Rf) + s³ C1 C2 C3 Ra Rb Rf", "gain 1 (follower)"},
	elements: []Element{
		{Ref: "C1", Symbol: "C1", Kind: Capacitor, From: "in", To: "n1", Role: "series, input side"},
		{Ref: "C2", Symbol: "C2", Kind: Capacitor, From: "n1", To: "n2", Role: "series, middle"},
		{Ref: "C3", Symbol: "C3", Kind: Capacitor, From: "n2", To: "p", Role: "series, to + input"},
		{Ref: "R1", Symbol: "Ra", Kind: Resistor, From: "n1", To: "0", Role: "shunt to ground"},
		{Ref: "R2", Symbol: "Rf", Kind: Resistor, From: "n2", To: "out", Role: "feedback to output"},
		{Ref: "R3", Symbol: "Rb", Kind: Resistor, From: "p", To: "0", Role: "+ input to ground"},
	},
	coeffs: func(v []float64) (num, den Poly) {
		c1, c2, c3, ra, rf, rb := v[0], v[1], v[2], v[3], v[4], v[5]
		a3 := c1 * c2 * c3 * ra * rb * rf
		return Poly{0, 0, 0, a3}, Poly{1,
			(c1+c2)*ra + (c2+c3)*rf,
			ra*rf*(c1*c2+c1*c3+c2*c3) + c2*c3*rb*rf,
			a3}
	},
	solve: func(v []float64, den Poly, _ float64, dst [][]float64, nearest bool) ([][]float64, bool) {
		return threePoleHighPassSolve(v[0], v[1], v[2], den, dst, nearest)
	},
	normalised: func(den Poly, _ float64) ([]float64, bool) {
		sols, ok := threePoleHighPassSolve(1, 1, 1, den, nil, true)
		return sols[0], ok
	},
}

// sallenKeyGainLowPass is the Sallen-Key low-pass with non-inverting gain
// K = 1 + Rb/Ra: in -R1- a -R2- p; C1 (Cf) from a to out; C2 (Cg) from p to
// ground; R3 (Ra) from the - input n to ground; R4 (Rb) from out to n.
//
//	H(s) = K / (1 + s·(Cg(R1+R2) + (1-K)·Cf·R1) + s²·R1 R2 Cf Cg)
var sallenKeyGainLowPass = Topology{
	id: "sallen-key-gain-lowpass", name: "Sallen-Key low-pass with gain", response: LowPass, poles: 2, plus: "p",
	minus: "n", family: FamilySallenKey, minGain: 1, gainElems: []int{5, 4}, chosen: []int{2, 3, 4},
	equations: []string{"K = 1 + Rb/Ra", "w0² = 1/(R1·R2·Cf·Cg)", "1/Q = w0·(Cg·(R1+R2) + (1-K)·Cf·R1)",
		"given Cf, Cg, K: (Cg + (1-K)Cf)·R1² - R1/(w0·Q) + 1/(w0²·Cf) = 0, R2 = 1/(w0²·R1·Cf·Cg)"},
	elements: []Element{
		{Ref: "R1", Symbol: "R1", Kind: Resistor, From: "in", To: "a", Role: "series, input side"},
		{Ref: "R2", Symbol: "R2", Kind: Resistor, From: "a", To: "p", Role: "series, to + input"},
		{Ref: "C1", Symbol: "Cf", Kind: Capacitor, From: "a", To: "out", Role: "feedback to output"},
		{Ref: "C2", Symbol: "Cg", Kind: Capacitor, From: "p", To: "0", Role: "+ input to ground"},
		{Ref: "R3", Symbol: "Ra", Kind: Resistor, From: "n", To: "0", Role: "gain divider, - input to ground"},
		{Ref: "R4", Symbol: "Rb", Kind: Resistor, From: "out", To: "n", Role: "gain divider, output to - input"},
	},
	coeffs: func(v []float64) (num, den Poly) {
		r1, r2, cf, cg, ra, rb := v[0], v[1], v[2], v[3], v[4], v[5]
		k := 1 + rb/ra
		return Poly{k}, Poly{1, cg*(r1+r2) + (1-k)*cf*r1, r1 * r2 * cf * cg}
	},
	solve: func(v []float64, den Poly, gain float64, dst [][]float64, nearest bool) ([][]float64, bool) {
		cf, cg, ra := v[2], v[3], v[4]
		rb := (gain - 1) * ra
		p := den[2] / (cf * cg) // R1·R2
		d1 := den[1]
		a := cg + (1-gain)*cf
		build := func(r1 float64) []float64 { return []float64{r1, p / r1, cf, cg, ra, rb} }
		if !(gain > 1) {
			if !nearest {
				return dst, false
			}
			r := math.Sqrt(p)
			return append(dst, []float64{r, r, cf, cg, ra, 0}), false
		}
		// a·R1² - d1·R1 + Cg·P = 0.
		disc := d1*d1 - 4*a*cg*p
		if disc < 0 && disc > -1e-12*d1*d1 {
			disc = 0
		}
		if disc < 0 {
			if !nearest {
				return dst, false
			}
			return append(dst, build(d1/(2*a))), false
		}
		sq := math.Sqrt(disc)
		// The root 2CgP/(d1+sq) is positive for any sign of a and free of
		// cancellation; the other, (d1+sq)/(2a), is positive only for a > 0.
		dst = append(dst, build(2*cg*p/(d1+sq)))
		if a > 0 && sq > 0 {
			dst = append(dst, build((d1+sq)/(2*a)))
		}
		return dst, true
	},
	normalised: func(den Poly, gain float64) ([]float64, bool) {
		// R1 = R2 = Ra = 1, Rb = K-1: (K-1)Cf² + d1·Cf - 2·d2 = 0.
		d1, d2 := den[1], den[2]
		k := gain
		cf := 4 * d2 / (d1 + math.Sqrt(d1*d1+8*(k-1)*d2))
		cg := d2 / cf
		return []float64{1, 1, cf, cg, 1, k - 1}, k > 1 && cf > 0 && cg > 0
	},
}

// sallenKeyGainHighPass is the Sallen-Key high-pass with non-inverting
// gain K = 1 + Rb/Ra: in -C1- a -C2- p; R1 (Rf) from a to out; R2 (Rg) from
// p to ground; R3 (Ra) from the - input n to ground; R4 (Rb) from out to n.
//
//	H(s) = K·s² Rf Rg C1 C2 / (1 + s·(Rf(C1+C2) + (1-K)·Rg·C2) + s²·Rf Rg C1 C2)
var sallenKeyGainHighPass = Topology{
	id: "sallen-key-gain-highpass", name: "Sallen-Key high-pass with gain", response: HighPass, poles: 2, plus: "p",
	minus: "n", family: FamilySallenKey, minGain: 1, gainElems: []int{5, 4}, chosen: []int{0, 1, 4},
	equations: []string{"K = 1 + Rb/Ra", "w0² = 1/(Rf·Rg·C1·C2)", "1/Q = w0·(Rf·(C1+C2) + (1-K)·Rg·C2)",
		"given C1, C2, K: (C1+C2)·Rf² - Rf/(w0·Q) - (K-1)/(w0²·C1) = 0, Rg = 1/(w0²·Rf·C1·C2)"},
	elements: []Element{
		{Ref: "C1", Symbol: "C1", Kind: Capacitor, From: "in", To: "a", Role: "series, input side"},
		{Ref: "C2", Symbol: "C2", Kind: Capacitor, From: "a", To: "p", Role: "series, to + input"},
		{Ref: "R1", Symbol: "Rf", Kind: Resistor, From: "a", To: "out", Role: "feedback to output"},
		{Ref: "R2", Symbol: "Rg", Kind: Resistor, From: "p", To: "0", Role: "+ input to ground"},
		{Ref: "R3", Symbol: "Ra", Kind: Resistor, From: "n", To: "0", Role: "gain divider, - input to ground"},
		{Ref: "R4", Symbol: "Rb", Kind: Resistor, From: "out", To: "n", Role: "gain divider, output to - input"},
	},
	coeffs: func(v []float64) (num, den Poly) {
		c1, c2, rf, rg, ra, rb := v[0], v[1], v[2], v[3], v[4], v[5]
		k := 1 + rb/ra
		a2 := rf * rg * c1 * c2
		return Poly{0, 0, k * a2}, Poly{1, rf*(c1+c2) + (1-k)*rg*c2, a2}
	},
	solve: skGainHighPassSolve,
	normalised: func(den Poly, gain float64) ([]float64, bool) {
		sols, ok := skGainHighPassSolve([]float64{1, 1, 0, 0, 1, 0}, den, gain, nil, true)
		return sols[0], ok
	},
}

func skGainHighPassSolve(v []float64, den Poly, gain float64, dst [][]float64, nearest bool) ([][]float64, bool) {
	c1, c2, ra := v[0], v[1], v[4]
	if !(gain > 1) {
		if !nearest {
			return dst, false
		}
		gain = 1
	}
	d1, d2 := den[1], den[2]
	// (C1+C2)·Rf² - d1·Rf - (K-1)·d2/C1 = 0: one positive root.
	rf := (d1 + math.Sqrt(d1*d1+4*(c1+c2)*(gain-1)*d2/c1)) / (2 * (c1 + c2))
	rg := d2 / (rf * c1 * c2)
	return append(dst, []float64{c1, c2, rf, rg, ra, (gain - 1) * ra}), gain > 1
}

// mfbLowPass is the multiple-feedback low-pass (inverting): in -R1- a;
// R2 from a to out; R3 from a to the - input m; C1 (Cg) from a to ground;
// C2 (Cf) from m to out; the + input is grounded.
//
//	H(s) = -(R2/R1) / (1 + s·Cf·(R2 + R3 + R2·R3/R1) + s²·R2 R3 Cf Cg)
var mfbLowPass = Topology{
	id: "mfb-lowpass", name: "multiple-feedback low-pass", response: LowPass, poles: 2, plus: "0",
	minus: "m", family: FamilyMFB, inverting: true, gainElems: []int{1, 0}, chosen: []int{3, 4},
	equations: []string{"H(0) = -R2/R1", "w0² = 1/(R2·R3·Cf·Cg)", "1/Q = w0·Cf·(R2 + R3 + R2·R3/R1)",
		"needs Cg/Cf >= 4Q²(1+|H(0)|)",
		"given Cf, Cg, G = |H(0)|: R2 = (1/(w0·Q·Cf) ± sqrt(1/(w0·Q·Cf)² - 4(1+G)/(w0²·Cf·Cg)))/2, R3 = 1/(w0²·R2·Cf·Cg), R1 = R2/G"},
	elements: []Element{
		{Ref: "R1", Symbol: "R1", Kind: Resistor, From: "in", To: "a", Role: "input, sets gain with R2"},
		{Ref: "R2", Symbol: "R2", Kind: Resistor, From: "a", To: "out", Role: "feedback to output, sets gain with R1"},
		{Ref: "R3", Symbol: "R3", Kind: Resistor, From: "a", To: "m", Role: "series, to - input"},
		{Ref: "C1", Symbol: "Cg", Kind: Capacitor, From: "a", To: "0", Role: "shunt to ground"},
		{Ref: "C2", Symbol: "Cf", Kind: Capacitor, From: "m", To: "out", Role: "feedback, - input to output"},
	},
	coeffs: func(v []float64) (num, den Poly) {
		r1, r2, r3, cg, cf := v[0], v[1], v[2], v[3], v[4]
		return Poly{-r2 / r1}, Poly{1, cf * (r2 + r3 + r2*r3/r1), r2 * r3 * cf * cg}
	},
	solve: func(v []float64, den Poly, gain float64, dst [][]float64, nearest bool) ([][]float64, bool) {
		cg, cf := v[3], v[4]
		if !(gain > 0) {
			panic("synth: multiple-feedback gain must be positive")
		}
		b := den[1] / cf                     // R2 + (1+G)·R3·... : R2² - b·R2 + c = 0
		c := (1 + gain) * den[2] / (cf * cg) // (1+G)·R2·R3
		build := func(r2 float64) []float64 {
			return []float64{r2 / gain, r2, den[2] / (cf * cg * r2), cg, cf}
		}
		disc := b*b - 4*c
		if disc < 0 && disc > -1e-12*b*b {
			disc = 0
		}
		if disc < 0 {
			if !nearest {
				return dst, false
			}
			return append(dst, build(b/2)), false
		}
		sq := math.Sqrt(disc)
		hi := (b + sq) / 2
		dst = append(dst, build(hi))
		if sq > 0 {
			dst = append(dst, build(c/hi))
		}
		return dst, true
	},
	normalised: func(den Poly, gain float64) ([]float64, bool) {
		// R2 = R3 = 1, R1 = 1/G: d1 = Cf(2+G), d2 = Cf·Cg.
		cf := den[1] / (2 + gain)
		cg := den[2] / cf
		return []float64{1 / gain, 1, 1, cg, cf}, gain > 0 && cf > 0 && cg > 0
	},
}

// mfbHighPass is the multiple-feedback high-pass (inverting): in -C1- a;
// C2 from a to out; C3 from a to the - input m; R1 from a to ground; R2
// from m to out; the + input is grounded.
//
//	H(s) = -s²·C1 C3 R1 R2 / (1 + s·R1·(C1+C2+C3) + s²·R1 R2 C2 C3)
var mfbHighPass = Topology{
	id: "mfb-highpass", name: "multiple-feedback high-pass", response: HighPass, poles: 2, plus: "0",
	minus: "m", family: FamilyMFB, inverting: true, gainElems: []int{0, 1}, chosen: []int{0, 1, 2},
	equations: []string{"H(inf) = -C1/C2", "w0² = 1/(R1·R2·C2·C3)", "1/Q = w0·R1·(C1+C2+C3)",
		"given C1, C2, C3: R1 = 1/(w0·Q·(C1+C2+C3)), R2 = 1/(w0²·R1·C2·C3)"},
	elements: []Element{
		{Ref: "C1", Symbol: "C1", Kind: Capacitor, From: "in", To: "a", Role: "input, sets gain with C2"},
		{Ref: "C2", Symbol: "C2", Kind: Capacitor, From: "a", To: "out", Role: "feedback to output, sets gain with C1"},
		{Ref: "C3", Symbol: "C3", Kind: Capacitor, From: "a", To: "m", Role: "series, to - input"},
		{Ref: "R1", Symbol: "R1", Kind: Resistor, From: "a", To: "0", Role: "shunt to ground"},
		{Ref: "R2", Symbol: "R2", Kind: Resistor, From: "m", To: "out", Role: "feedback, - input to output"},
	},
	coeffs: func(v []float64) (num, den Poly) {
		c1, c2, c3, r1, r2 := v[0], v[1], v[2], v[3], v[4]
		return Poly{0, 0, -c1 * c3 * r1 * r2}, Poly{1, r1 * (c1 + c2 + c3), r1 * r2 * c2 * c3}
	},
	solve: mfbHighPassSolve,
	normalised: func(den Poly, gain float64) ([]float64, bool) {
		// C2 = C3 = 1, C1 = G.
		sols, ok := mfbHighPassSolve([]float64{gain, 1, 1, 0, 0}, den, gain, nil, true)
		return sols[0], ok && gain > 0
	},
}

// mfbHighPassSolve: the gain is C1/C2, set by the chosen capacitors.
func mfbHighPassSolve(v []float64, den Poly, _ float64, dst [][]float64, _ bool) ([][]float64, bool) {
	c1, c2, c3 := v[0], v[1], v[2]
	r1 := den[1] / (c1 + c2 + c3)
	r2 := den[2] / (r1 * c2 * c3)
	return append(dst, []float64{c1, c2, c3, r1, r2}), true
}

func threePoleHighPassSolve(c1, c2, c3 float64, den Poly, dst [][]float64, nearest bool) ([][]float64, bool) {
	a1, a2, a3 := den[1], den[2], den[3]
	k := c1*c2 + c1*c3 + c2*c3
	// Given Ra: Rf from a1, Rb from a3, residual from a2.
	split := func(ra float64) (rf, rb, g float64, okr bool) {
		rf = (a1 - (c1+c2)*ra) / (c2 + c3)
		rb = a3 / (c1 * c2 * c3 * ra * rf)
		return rf, rb, ra*rf*k + c2*c3*rb*rf - a2, rf > 0 && rb > 0
	}
	// Times Ra: Ra² Rf k + a3/C1 - a2 Ra with Rf linear in Ra, a cubic.
	rfp := []float64{a1 / (c2 + c3), -(c1 + c2) / (c2 + c3)}
	poly := polyAdd(polyMul([]float64{0, 0, k}, rfp), []float64{a3 / c1, -a2})
	return polyRoots(a1/(c1+c2), poly, split, func(ra, rf, rb float64) []float64 {
		return []float64{c1, c2, c3, ra, rf, rb}
	}, dst, nearest)
}

// polyRoots appends build(x, ...) for every admissible real root x in
// (0, hi) of the polynomial poly (ascending powers), which must vanish
// exactly where split's residual does. The roots come from the eigenvalues
// of the companion matrix in the variable t = x/hi, polished by Newton steps
// on the residual's polynomial. A grid scan cannot be trusted here: for
// high-Q sections the admissible interval can be narrower than any
// affordable grid step. When no admissible root exists it falls back to
// scanRoots, which reports the nearest realisable point.
func polyRoots(hi float64, poly []float64, split func(x float64) (y1, y2, g float64, ok bool),
	build func(x, y1, y2 float64) []float64, dst [][]float64, nearest bool) ([][]float64, bool) {
	found := false
	for _, x := range realRootsIn(poly, hi) {
		y1, y2, _, ok := split(x)
		if ok {
			dst = append(dst, build(x, y1, y2))
			found = true
		}
	}
	if found || !nearest {
		return dst, found
	}
	return scanRoots(hi, split, build, dst)
}

// maxRootDegree is the highest polynomial degree realRootsIn handles (the
// 3-pole low-pass residual is a sextic).
const maxRootDegree = 6

// realRootsIn returns the real roots in (0, hi) of the polynomial c
// (ascending powers), in ascending order.
func realRootsIn(c []float64, hi float64) []float64 {
	// Substitute x = hi·t so that the roots of interest lie in (0, 1).
	t := make([]float64, len(c))
	scale := 1.0
	for i, v := range c {
		t[i] = v * scale
		scale *= hi
	}
	big := 0.0
	for _, v := range t {
		big = math.Max(big, math.Abs(v))
	}
	n := len(t) - 1
	for n > 0 && math.Abs(t[n]) <= 1e-14*big {
		n--
	}
	if n == 0 || big == 0 {
		return nil
	}
	if n > maxRootDegree {
		panic("synth: polynomial degree above maxRootDegree")
	}
	if !mayHaveRootIn01(t[:n+1]) {
		return nil
	}
	// Eigenvalues of the companion matrix, which is upper Hessenberg: a
	// diagonal balancing keeps that shape, and LAPACK's Dhseqr (gonum's
	// implementation) finds them without the allocations of mat.Eigen,
	// which matters in the fit's inner loop.
	var hbuf [maxRootDegree * maxRootDegree]float64
	var wr, wi, scl, work [maxRootDegree]float64
	h := hbuf[:n*n]
	for j := 0; j < n; j++ {
		h[j] = -t[n-1-j] / t[n]
	}
	for i := 1; i < n; i++ {
		h[i*n+i-1] = 1
	}
	var impl lapackgonum.Implementation
	ilo, ihi := impl.Dgebal(lapack.Scale, n, h, n, scl[:n])
	if impl.Dhseqr(lapack.EigenvaluesOnly, lapack.SchurNone, n, ilo, ihi, h, n, wr[:n], wi[:n], nil, 1, work[:n], n) > 0 {
		return nil
	}
	var out []float64
	for i := 0; i < n; i++ {
		z := complex(wr[i], wi[i])
		// A real double root (the edge of realisability) can come out as
		// a pair with a tiny imaginary part.
		if math.Abs(imag(z)) > 1e-7 || real(z) <= 0 || real(z) >= 1 {
			continue
		}
		r := polishReal(t[:n+1], real(z))
		if r > 0 && r < 1 {
			out = append(out, r*hi)
		}
	}
	sort.Float64s(out)
	return out
}

// mayHaveRootIn01 applies Descartes' rule of signs after the substitution
// t = u/(1+u), which maps (0, 1) onto (0, ∞): the polynomial
// q(u) = (1+u)^n p(u/(1+u)) = Σ c_i u^i (1+u)^(n-i) has as many positive
// roots as p has in (0, 1), at most its number of coefficient sign changes.
// No sign change proves there is no root; it is a cheap filter before the
// eigenvalue computation.
func mayHaveRootIn01(c []float64) bool {
	n := len(c) - 1
	var q [maxRootDegree + 1]float64
	for i, ci := range c {
		// ci · u^i · (1+u)^(n-i): binomial coefficients of (1+u)^(n-i).
		b := 1.0
		m := n - i
		for j := 0; j <= m; j++ {
			q[i+j] += ci * b
			b = b * float64(m-j) / float64(j+1)
		}
	}
	big := 0.0
	for _, v := range q[:n+1] {
		big = math.Max(big, math.Abs(v))
	}
	sign := 0
	for _, v := range q[:n+1] {
		if v == 0 || big == 0 {
			continue
		}
		sv := 1
		if v < 0 {
			sv = -1
		}
		if sign != 0 && sv != sign {
			return true
		}
		sign = sv
	}
	return false
}

// polishReal improves a real root x of c by Newton steps while they help.
func polishReal(c []float64, x float64) float64 {
	eval := func(x float64) (p, dp float64) {
		for i := len(c) - 1; i >= 0; i-- {
			dp = dp*x + p
			p = p*x + c[i]
		}
		return p, dp
	}
	p, _ := eval(x)
	for it := 0; it < 6 && p != 0; it++ {
		_, dp := eval(x)
		if dp == 0 {
			break
		}
		nx := x - p/dp
		np, _ := eval(nx)
		if math.Abs(np) >= math.Abs(p) {
			break
		}
		x, p = nx, np
	}
	return x
}

func polyMul(a, b []float64) []float64 {
	out := make([]float64, len(a)+len(b)-1)
	for i, x := range a {
		for j, y := range b {
			out[i+j] += x * y
		}
	}
	return out
}

func polyAdd(a, b []float64) []float64 {
	if len(a) < len(b) {
		a, b = b, a
	}
	out := append([]float64(nil), a...)
	for i, y := range b {
		out[i] += y
	}
	return out
}

func polyScale(a []float64, k float64) []float64 {
	out := make([]float64, len(a))
	for i, x := range a {
		out[i] = x * k
	}
	return out
}

// scanRoots finds the roots in (0, hi) of the residual g(x) returned by split,
// where split also yields two dependent values. It scans x on a logarithmic
// grid for sign changes of g among admissible points, refines each by
// bisection, and appends build(x, y1, y2) for every root. When there is no
// root it appends the admissible point with the smallest |g| relative to the
// scale of the problem (or the grid midpoint) and reports false.
func scanRoots(hi float64, split func(x float64) (y1, y2, g float64, ok bool),
	build func(x, y1, y2 float64) []float64, dst [][]float64) ([][]float64, bool) {
	const steps = 160
	lo := hi * 1e-6
	ratio := math.Pow(hi/lo, 1.0/steps)
	found := false
	bestX, bestG := math.NaN(), math.Inf(1)
	px, pg, pok := 0.0, 0.0, false
	x := lo
	for i := 0; i <= steps; i++ {
		if i == steps {
			x = hi * (1 - 1e-12)
		}
		_, _, g, ok := split(x)
		if ok {
			if math.Abs(g) < bestG {
				bestG, bestX = math.Abs(g), x
			}
			if pok && (g == 0 || (g > 0) != (pg > 0)) {
				a, b, ga := px, x, pg
				for it := 0; it < 200 && b-a > 1e-15*b; it++ {
					m := 0.5 * (a + b)
					_, _, gm, okm := split(m)
					if !okm {
						break
					}
					if (gm > 0) == (ga > 0) {
						a, ga = m, gm
					} else {
						b = m
					}
				}
				r := 0.5 * (a + b)
				y1, y2, _, okr := split(r)
				if okr {
					dst = append(dst, build(r, y1, y2))
					found = true
				}
			}
		}
		px, pg, pok = x, g, ok
		x *= ratio
	}
	if found {
		return dst, true
	}
	if math.IsNaN(bestX) {
		bestX = math.Sqrt(lo * hi)
	}
	y1, y2, _, _ := split(bestX)
	return append(dst, build(bestX, y1, y2)), false
}

// ID returns the stable identifier used in JSON: "sallen-key-lowpass", ...
func (t *Topology) ID() string { return t.id }

// Name returns the topology's name for people: "Sallen-Key low-pass".
func (t *Topology) Name() string { return t.name }

// Response returns LowPass or HighPass.
func (t *Topology) Response() Kind { return t.response }

// Poles returns the section's pole count: 1, 2 or 3.
func (t *Topology) Poles() int { return t.poles }

// Elements returns a copy of the element list.
func (t *Topology) Elements() []Element { return append([]Element(nil), t.elements...) }

// NumElements returns the number of elements.
func (t *Topology) NumElements() int { return len(t.elements) }

// Element returns element i. It panics for an index out of range.
func (t *Topology) Element(i int) Element { return t.elements[i] }

// Plus returns the node at the op-amp's + input.
func (t *Topology) Plus() string { return t.plus }

// Sketch returns a topology that has only a layout (elements and op-amp
// input nodes) and no analysis: for drawing code and its tests. Calling
// Coeffs, Solve or Normalised on it panics.
func Sketch(id, name, plus, minus string, els []Element) *Topology {
	return &Topology{id: id, name: name, plus: plus, minus: minus, elements: append([]Element(nil), els...)}
}

// Minus returns the node at the op-amp's - input: "out" for a follower.
func (t *Topology) Minus() string { return t.minus }

// Family returns the circuit family (RC, Sallen-Key, MFB).
func (t *Topology) Family() Family { return t.family }

// Inverting reports whether the passband gain is negative.
func (t *Topology) Inverting() bool { return t.inverting }

// GainFixed reports whether the passband gain is 1 whatever the values.
func (t *Topology) GainFixed() bool { return t.gainFixed }

// GainElements returns the indices of the elements whose ratio sets the
// passband gain, numerator first (nil for a fixed gain).
func (t *Topology) GainElements() []int { return append([]int(nil), t.gainElems...) }

// Chosen returns the indices of the elements the closed-form solver takes
// as given (a search picks them from stock); the solver computes the rest.
func (t *Topology) Chosen() []int { return append([]int(nil), t.chosen...) }

// Solved returns the indices of the elements the solver computes.
func (t *Topology) Solved() []int {
	var out []int
	for i := range t.elements {
		if !slices.Contains(t.chosen, i) {
			out = append(out, i)
		}
	}
	return out
}

// Symmetric returns pairs of elements the response cannot tell apart
// (swapping their values leaves H(s) unchanged).
func (t *Topology) Symmetric() [][2]int { return append([][2]int(nil), t.symmetric...) }

// Equations returns the design equations in plain text, for people.
func (t *Topology) Equations() []string { return append([]string(nil), t.equations...) }
