package optimize

import (
	"math"
	"math/cmplx"

	"drawerfit/synth"
)

// This file scores sections with a finite amplifier (Options.Amp): the
// search is aimed at a predistorted target, and its shortlists are scored
// again with the single-pole model against the ideal target. doc.go says
// what is exact and what is approximate.

// ampTargets returns the target the section search aims at and the ideal
// target the shortlists are scored against. Without an amplifier both are
// the ideal section.
func ampTargets(sec *synth.Section, g *scoreGrid, op *synth.OpAmp) (search, ideal *target) {
	ideal = newTarget(sec, g)
	if op == nil || sec.Topology.Minus() != "out" {
		// The predistortion models a follower; a section with gain or an
		// inverting section is searched against its ideal target and
		// re-scored with the amplifier afterwards.
		return ideal, ideal
	}
	pd, _ := Predistort(sec, op, g.w)
	return newTarget(&pd, g), ideal
}

// rescoreWithAmp replaces each shortlisted candidate's deviation and error
// by those of its element values with the amplifier op, measured against
// the ideal target and from the follower's DC gain A0/(1+A0).
func rescoreWithAmp(list []sectionCand, ideal *target, op *synth.OpAmp) {
	if op == nil {
		return
	}
	ref := 20 * math.Log10(op.DCFollowerGain())
	n := ideal.topo.NumElements()
	for i := range list {
		c := &list[i]
		if len(c.dev) != len(ideal.grid.w) {
			c.dev = make([]float64, len(ideal.grid.w))
		}
		c.err = 0
		for g, w := range ideal.grid.w {
			h := synth.AmpResponse(ideal.topo, c.vals[:n], op, w)
			d := 20*math.Log10(absC(h)) - ref - ideal.tdb[g]
			c.dev[g] = d
			c.err = math.Max(c.err, math.Abs(d))
		}
	}
}

func absC(h complex128) float64 { return cmplx.Abs(h) }

// SectionAmpError is the largest deviation (dB) on the angular frequencies
// ws of the section realised with element values v and amplifier op (nil:
// ideal) from the ideal target sec, measured from the follower's DC gain.
func SectionAmpError(sec *synth.Section, v []float64, op *synth.OpAmp, ws []float64) float64 {
	ref := 20 * math.Log10(op.DCFollowerGain())
	e := 0.0
	for _, w := range ws {
		h := synth.AmpResponse(sec.Topology, v, op, w)
		t := sec.Eval(w)
		e = math.Max(e, math.Abs(20*math.Log10(absC(h))-ref-20*math.Log10(absC(t))))
	}
	return e
}

// poleParams are a section's pole figures in rad/s: w0 of the pair (or the
// real pole of a 1-pole section), its Q, and a 3-pole section's real pole.
type poleParams [3]float64

func paramsOf(sec *synth.Section) poleParams {
	return poleParams{2 * math.Pi * sec.F0, sec.Q, 2 * math.Pi * sec.RealF0}
}

// withParams is sec with its poles moved to p (response kind and topology
// kept; unity passband gain).
func withParams(sec *synth.Section, p poleParams) synth.Section {
	out := *sec
	out.F0, out.Q, out.RealF0 = p[0]/(2*math.Pi), p[1], p[2]/(2*math.Pi)
	out.Num, out.Den = synth.SectionPolys(sec.Num[0] == 0, sec.Topology.Poles(), p[0], p[1], p[2])
	return out
}

// handbookValues are element values (SI) that realise sec with an ideal
// amplifier: the topology's normalised solution scaled to the section's
// frequency. ok is false when the topology cannot realise it.
func handbookValues(sec *synth.Section) ([]float64, bool) {
	wref := 2 * math.Pi * sec.F0
	den := sec.Den
	k := 1.0
	for i := range den {
		den[i] *= k
		k *= wref
	}
	v, ok := sec.Topology.Normalised(den)
	if !ok {
		return nil, false
	}
	for i, e := range sec.Topology.Elements() {
		if e.Kind == synth.Capacitor {
			v[i] /= wref
		}
	}
	return v, true
}

// Predistort returns the section to aim the search at so that, built with
// the amplifier op, the section comes near the ideal sec: its pole figures
// (w0, Q and a 3-pole section's real pole) are moved, with a simplex
// search in their logarithms, to minimise the largest deviation on the
// angular frequencies ws of the handbook realisation with op from sec. It
// also returns that deviation (dB) at the result. A nil op returns sec.
//
// Exact in the limit: as the gain-bandwidth grows the result tends to sec.
// Approximate otherwise: the amplifier's effect depends on the element
// ratios, and the handbook's ratios stand in for those the search will
// pick; the shortlists are therefore scored again with the full model.
func Predistort(sec *synth.Section, op *synth.OpAmp, ws []float64) (synth.Section, float64) {
	if op == nil {
		return *sec, 0
	}
	// A thinned grid keeps the simplex cheap; the result is re-scored on
	// the full grid by the caller.
	var pts []float64
	step := max(1, len(ws)/60)
	for i := 0; i < len(ws); i += step {
		pts = append(pts, ws[i])
	}
	p0 := paramsOf(sec)
	dims := 1
	switch sec.Topology.Poles() {
	case 2:
		dims = 2
	case 3:
		dims = 3
	}
	cost := func(x []float64) float64 {
		var p poleParams
		for i := 0; i < 3; i++ {
			p[i] = p0[i]
		}
		for i := 0; i < dims; i++ {
			p[i] = p0[i] * math.Exp(x[i])
		}
		s := withParams(sec, p)
		v, ok := handbookValues(&s)
		if !ok {
			return math.Inf(1)
		}
		return SectionAmpError(sec, v, op, pts)
	}
	start := make([]float64, dims)
	e0 := cost(start)
	if !(e0 > 1e-9) {
		return *sec, e0 // the amplifier changes nothing measurable
	}
	best, e := nelderMead(cost, start, 0.05, 300)
	if !(e < e0) {
		return *sec, e0
	}
	var p poleParams
	copy(p[:], p0[:])
	for i := 0; i < dims; i++ {
		p[i] = p0[i] * math.Exp(best[i])
	}
	return withParams(sec, p), e
}

// nelderMead minimises f from x0 with an initial simplex of size step,
// for at most iters iterations (the textbook method: reflection, expansion,
// contraction, shrink; Nelder and Mead 1965). It returns the best point and
// its value.
func nelderMead(f func([]float64) float64, x0 []float64, step float64, iters int) ([]float64, float64) {
	n := len(x0)
	pts := make([][]float64, n+1)
	vals := make([]float64, n+1)
	for i := range pts {
		pts[i] = append([]float64(nil), x0...)
		if i > 0 {
			pts[i][i-1] += step
		}
		vals[i] = f(pts[i])
	}
	order := func() {
		for i := 1; i < len(pts); i++ {
			for j := i; j > 0 && vals[j] < vals[j-1]; j-- {
				pts[j], pts[j-1] = pts[j-1], pts[j]
				vals[j], vals[j-1] = vals[j-1], vals[j]
			}
		}
	}
	at := func(c []float64, t float64, w []float64) []float64 {
		out := make([]float64, n)
		for i := range out {
			out[i] = c[i] + t*(w[i]-c[i])
		}
		return out
	}
	for it := 0; it < iters; it++ {
		order()
		if vals[n]-vals[0] <= 1e-9*math.Max(1e-9, math.Abs(vals[0])) {
			break
		}
		c := make([]float64, n)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				c[j] += pts[i][j] / float64(n)
			}
		}
		xr := at(c, -1, pts[n])
		fr := f(xr)
		switch {
		case fr < vals[0]:
			xe := at(c, -2, pts[n])
			if fe := f(xe); fe < fr {
				pts[n], vals[n] = xe, fe
			} else {
				pts[n], vals[n] = xr, fr
			}
		case fr < vals[n-1]:
			pts[n], vals[n] = xr, fr
		default:
			xc := at(c, 0.5, pts[n])
			if fc := f(xc); fc < vals[n] {
				pts[n], vals[n] = xc, fc
			} else {
				for i := 1; i <= n; i++ {
					pts[i] = at(pts[0], 0.5, pts[i])
					vals[i] = f(pts[i])
				}
			}
		}
	}
	order()
	return pts[0], vals[0]
}
