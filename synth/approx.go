package synth

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// Prototype returns the poles of the normalised low-pass prototype of order
// n (1..MaxOrder), one per complex pair (the one with positive imaginary
// part) and the real pole of an odd order, in no particular order:
//
//   - Butterworth: -3 dB at 1 rad/s, poles -sin θk + j cos θk, θk = (2k-1)π/(2n).
//   - Chebyshev type I with the given ripple (dB): ripple-band edge at 1 rad/s,
//     poles -sinh(a) sin θk + j cosh(a) cos θk, a = asinh(1/ε)/n.
//   - Bessel: the roots of the reverse Bessel polynomial (unit group delay at
//     DC) from the eigenvalues of its companion matrix; with BesselMag they
//     are scaled so that the -3 dB point is at 1 rad/s.
//
// It panics for an order outside 1..MaxOrder or a non-positive Chebyshev
// ripple (programmer errors: Spec.Normalize rejects both).
func Prototype(a Approx, n int, ripple float64, norm BesselNorm) []complex128 {
	if n < 1 || n > MaxOrder {
		panic(fmt.Sprintf("synth: prototype order %d outside 1..%d", n, MaxOrder))
	}
	var poles []complex128
	switch a {
	case Butterworth:
		for k := 1; k <= (n+1)/2; k++ {
			th := float64(2*k-1) * math.Pi / float64(2*n)
			poles = append(poles, complex(-math.Sin(th), math.Cos(th)))
		}
	case Chebyshev:
		if !(ripple > 0) {
			panic("synth: Chebyshev prototype needs a positive ripple")
		}
		eps := math.Sqrt(math.Pow(10, ripple/10) - 1)
		sh := math.Asinh(1/eps) / float64(n)
		for k := 1; k <= (n+1)/2; k++ {
			th := float64(2*k-1) * math.Pi / float64(2*n)
			poles = append(poles, complex(-math.Sinh(sh)*math.Sin(th), math.Cosh(sh)*math.Cos(th)))
		}
	case Bessel:
		poles = besselDelayPoles(n)
		if norm == BesselMag {
			w := attenCrossing(poles, HalfPowerDB)
			for i := range poles {
				poles[i] /= complex(w, 0)
			}
		}
	default:
		panic("synth: unknown approximation")
	}
	// Exact zeros (cos θ at θ = π/2) and tiny rounding residues both mean a
	// real pole.
	for i, p := range poles {
		if math.Abs(imag(p)) < 1e-12*cmplx.Abs(p) {
			poles[i] = complex(real(p), 0)
		}
	}
	return poles
}

// ReverseBessel returns the coefficients, in ascending powers, of the reverse
// Bessel polynomial θn(s) = Σ (2n-k)! / (2^(n-k) k! (n-k)!) s^k.
func ReverseBessel(n int) []float64 {
	c := make([]float64, n+1)
	// Ratio of consecutive terms avoids factorial overflow:
	// c[k]/c[k+1] = (2n-k)(k+1) / (2 (n-k)) ... built from c[n] = 1 down.
	c[n] = 1
	for k := n - 1; k >= 0; k-- {
		c[k] = c[k+1] * float64(2*n-k) * float64(k+1) / (2 * float64(n-k))
	}
	return c
}

// besselDelayPoles returns the upper-half-plane and real roots of the reverse
// Bessel polynomial of order n, from the eigenvalues of its companion matrix
// (gonum's mat.Eigen), each polished by Newton steps on the polynomial.
func besselDelayPoles(n int) []complex128 {
	c := ReverseBessel(n)
	comp := mat.NewDense(n, n, nil)
	// Companion matrix of the monic polynomial s^n + c[n-1] s^(n-1) + ... + c[0].
	for j := 0; j < n; j++ {
		comp.Set(0, j, -c[n-1-j])
	}
	for i := 1; i < n; i++ {
		comp.Set(i, i-1, 1)
	}
	var eig mat.Eigen
	if !eig.Factorize(comp, mat.EigenNone) {
		panic("synth: eigenvalues of the Bessel companion matrix did not converge")
	}
	var out []complex128
	for _, z := range eig.Values(nil) {
		if imag(z) < -1e-9*cmplx.Abs(z) {
			continue // keep one of each pair
		}
		z = polishRoot(c, z)
		if math.Abs(imag(z)) < 1e-12*cmplx.Abs(z) {
			z = complex(real(z), 0)
		}
		out = append(out, z)
	}
	sort.Slice(out, func(i, j int) bool { return imag(out[i]) < imag(out[j]) })
	return out
}

// polishRoot improves a root z of the polynomial c (ascending powers) by a few
// Newton steps, stopping when a step no longer helps.
func polishRoot(c []float64, z complex128) complex128 {
	eval := func(z complex128) (p, dp complex128) {
		for i := len(c) - 1; i >= 0; i-- {
			dp = dp*z + p
			p = p*z + complex(c[i], 0)
		}
		return p, dp
	}
	p, _ := eval(z)
	for it := 0; it < 8; it++ {
		_, dp := eval(z)
		if dp == 0 {
			break
		}
		nz := z - p/dp
		np, _ := eval(nz)
		if cmplx.Abs(np) >= cmplx.Abs(p) {
			break
		}
		z, p = nz, np
	}
	return z
}

// poleAtten returns the attenuation in dB, at angular frequency w, of the
// all-pole low-pass with unity DC gain whose poles are the given pairs (upper
// pole listed) and real poles: Σ 10 log10(|jw - p|² / |p|²) over all poles.
func poleAtten(poles []complex128, w float64) float64 {
	var a float64
	for _, p := range poles {
		m2 := real(p)*real(p) + imag(p)*imag(p)
		d := real(p)*real(p) + (w-imag(p))*(w-imag(p))
		a += 10 * math.Log10(d/m2)
		if imag(p) != 0 {
			d2 := real(p)*real(p) + (w+imag(p))*(w+imag(p))
			a += 10 * math.Log10(d2/m2)
		}
	}
	return a
}

// attenCrossing returns the angular frequency at which a monotonic all-pole
// low-pass first reaches the attenuation target (dB), by bisection.
func attenCrossing(poles []complex128, target float64) float64 {
	lo, hi := 0.0, 1.0
	for poleAtten(poles, hi) < target {
		lo, hi = hi, hi*2
	}
	for it := 0; it < 200 && hi-lo > 1e-16*hi; it++ {
		m := 0.5 * (lo + hi)
		if poleAtten(poles, m) < target {
			lo = m
		} else {
			hi = m
		}
	}
	return 0.5 * (lo + hi)
}

// PairF0Q returns the normalised natural frequency and Q of the complex pole
// pair p, p*: w0 = |p|, Q = |p| / (2|Re p|) (docs/check-values.md, "Section Q and w0").
func PairF0Q(p complex128) (w0, q float64) {
	w0 = cmplx.Abs(p)
	return w0, w0 / (2 * math.Abs(real(p)))
}

// SectionPoles returns the natural frequency (rad/s) and Q of a section's
// complex pair, and for a 3-pole section the real pole's frequency, from
// D(s) = 1 + a1 s + a2 s² (+ a3 s³). A 1-pole section returns its pole
// frequency as w0 and q = 0. It is the one extraction of poles from a
// denominator: the fit, the Monte Carlo and the sensitivities use it.
func SectionPoles(den Poly, poles int) (w0, q, wr float64) {
	switch poles {
	case 1:
		return 1 / den[1], 0, 0
	case 2:
		return 1 / math.Sqrt(den[2]), math.Sqrt(den[2]) / den[1], 0
	}
	// Cubic a3 s³ + a2 s² + a1 s + 1: it is positive at s = 0 and tends to
	// -∞ as s -> -∞, so it has a negative real root; bracket and bisect it,
	// then polish by Newton and deflate to the pair's quadratic.
	a1, a2, a3 := den[1], den[2], den[3]
	p := func(s float64) float64 { return ((a3*s+a2)*s+a1)*s + 1 }
	hi := 0.0
	lo := -1 / a1
	for p(lo) > 0 {
		hi = lo
		lo *= 2
	}
	for it := 0; it < 200 && hi-lo > 1e-15*math.Abs(lo); it++ {
		m := 0.5 * (lo + hi)
		if p(m) > 0 {
			hi = m
		} else {
			lo = m
		}
	}
	r := 0.5 * (lo + hi)
	for it := 0; it < 3; it++ {
		d := (3*a3*r+2*a2)*r + a1
		if d == 0 {
			break
		}
		r -= p(r) / d
	}
	// (s - r)(a3 s² + b1 s + b0) with b1 = a2 + a3 r, b0 = a1 + b1 r.
	b1 := a2 + a3*r
	b0 := a1 + b1*r
	w0 = math.Sqrt(b0 / a3)
	q = math.Sqrt(b0*a3) / b1
	return w0, q, -r
}
