package synth

import (
	"math"
	"math/cmplx"
)

// A0 is the amplifier's DC gain in V/V: DCGain, or DefaultDCGain when 0.
func (op OpAmp) A0() float64 {
	if op.DCGain == 0 {
		return DefaultDCGain
	}
	return op.DCGain
}

// FollowerGain is A/(1+A) of the single-pole model at angular frequency w:
// the gain of the amplifier wired as a follower. A nil op is ideal (1).
func (op *OpAmp) FollowerGain(w float64) complex128 {
	if op == nil {
		return 1
	}
	a0 := op.A0()
	a := complex(a0, 0)
	if op.GBW > 0 {
		wa := 2 * math.Pi * op.GBW / a0
		a = complex(a0, 0) / complex(1, w/wa)
	}
	return a / (1 + a)
}

// InverseGain is 1/A of the single-pole model at angular frequency w (0 for
// a nil op, an ideal amplifier).
func (op *OpAmp) InverseGain(w float64) complex128 {
	if op == nil {
		return 0
	}
	a0 := op.A0()
	a := complex(a0, 0)
	if op.GBW > 0 {
		wa := 2 * math.Pi * op.GBW / a0
		a = complex(a0, 0) / complex(1, w/wa)
	}
	return 1 / a
}

// DCFollowerGain is the follower's gain at DC, A0/(1+A0) (1 for a nil op):
// the passband gain a unity-gain section reaches with this amplifier, and
// the reference its attenuations are measured from.
func (op *OpAmp) DCFollowerGain() float64 {
	if op == nil {
		return 1
	}
	a0 := op.A0()
	return a0 / (1 + a0)
}

// AmpResponse returns H(jω) of one section with element values v (SI
// units, in Elements order) at angular frequency w, its amplifier the
// single-pole model A(s) = A0/(1 + s/ωa), ωa = 2π·GBW/A0, wired as the
// topology's follower (the model Netlist writes: DCGain 0 means
// DefaultDCGain, GBW 0 a flat gain A0). A nil op is an ideal amplifier.
//
// Method: modified nodal analysis built from the topology's element list.
// The unknowns are the voltages of every node except the input (driven at
// 1 V) and ground; each node but the output gets Kirchhoff's current law,
// and the output row is the amplifier's equation Vout = A(V+ - V-),
// written Vout/A - V+ + V- = 0 so that an ideal amplifier is 1/A = 0 (the
// output is an ideal source, so the output node needs no current balance,
// and the inputs draw no current). A follower has V- = Vout, where the row
// is Vout - A/(1+A)·V+ = 0 scaled; a grounded + input drops its term.
// The system (at most seven unknowns) is solved by Gaussian elimination
// with partial pivoting. It panics if len(v) does not match the topology.
func AmpResponse(t *Topology, v []float64, op *OpAmp, w float64) complex128 {
	if len(v) != t.NumElements() {
		panic("synth: wrong number of element values for " + t.ID())
	}
	var idx [8]string
	n := 0
	index := func(name string) int {
		if name == "in" || name == "0" {
			return -1
		}
		for i := 0; i < n; i++ {
			if idx[i] == name {
				return i
			}
		}
		idx[n] = name
		n++
		return n - 1
	}
	out := index("out")
	plus := index(t.Plus())
	minus := index(t.Minus())
	type stamp struct {
		a, b     int
		aIn, bIn bool
		admitt   complex128
	}
	var st [8]stamp
	for k := 0; k < t.NumElements(); k++ {
		e := t.Element(k)
		y := complex(1/v[k], 0)
		if e.Kind == Capacitor {
			y = complex(0, w*v[k])
		}
		st[k] = stamp{a: index(e.From), b: index(e.To), aIn: e.From == "in", bIn: e.To == "in", admitt: y}
	}
	var m [8][9]complex128 // augmented matrix, column n is the right-hand side
	for k := range t.NumElements() {
		s := st[k]
		for _, side := range [2]struct {
			self, other int
			otherIn     bool
		}{{s.a, s.b, s.bIn}, {s.b, s.a, s.aIn}} {
			if side.self < 0 || side.self == out {
				continue
			}
			m[side.self][side.self] += s.admitt
			switch {
			case side.other >= 0:
				m[side.self][side.other] -= s.admitt
			case side.otherIn:
				m[side.self][n] += s.admitt // 1 V at the input
			}
		}
	}
	if minus == out {
		// Follower: Vout - A/(1+A)·V+ = 0, the form the unity-gain
		// sections have always used.
		m[out][out] = 1
		m[out][plus] -= op.FollowerGain(w)
	} else {
		m[out][out] = op.InverseGain(w)
		if plus >= 0 {
			m[out][plus] -= 1
		}
		m[out][minus] += 1
	}
	x := SolveComplex(&m, n)
	return x[out]
}

// SolveComplex solves the n×n augmented system m (column n is the
// right-hand side, n <= 8) by Gaussian elimination with partial pivoting;
// m is overwritten.
func SolveComplex(m *[8][9]complex128, n int) [8]complex128 {
	for c := 0; c < n; c++ {
		p := c
		for r := c + 1; r < n; r++ {
			if cmplx.Abs(m[r][c]) > cmplx.Abs(m[p][c]) {
				p = r
			}
		}
		m[c], m[p] = m[p], m[c]
		for r := c + 1; r < n; r++ {
			f := m[r][c] / m[c][c]
			if f == 0 {
				continue
			}
			for q := c; q <= n; q++ {
				m[r][q] -= f * m[c][q]
			}
		}
	}
	var x [8]complex128
	for r := n - 1; r >= 0; r-- {
		s := m[r][n]
		for q := r + 1; q < n; q++ {
			s -= m[r][q] * x[q]
		}
		x[r] = s / m[r][r]
	}
	return x
}

// SectionPolys returns the unity-gain section polynomials N(s), D(s) (s in
// rad/s, D[0] = 1) of a section with the given number of poles: a real
// pole at w0 (1 pole), a pair of natural frequency w0 and quality q (2
// poles), or that pair with a real pole at wr (3 poles); a low-pass when
// highPass is false.
func SectionPolys(highPass bool, poles int, w0, q, wr float64) (num, den Poly) {
	k := LowPass
	if highPass {
		k = HighPass
	}
	switch poles {
	case 1:
		return firstOrderPoly(k, w0)
	case 2:
		return pairPoly(k, w0, q)
	}
	n1, d1 := firstOrderPoly(k, wr)
	n2, d2 := pairPoly(k, w0, q)
	return mulPoly(n1, n2), mulPoly(d1, d2)
}
