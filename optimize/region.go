package optimize

import (
	"fmt"
	"math"

	"drawerfit/synth"
)

// This file encloses the region of a 1-pole or 2-pole section's own
// parameters, x = ln(w0/w0t) and y = ln(Q/Qt), in which its error against
// the target section can be at most a level B. The enclosure is proven,
// not traced: the parameter plane (bounded by what the stock can realise)
// is cut into cells, an interval evaluation of the ideal section's gain
// over each cell gives a lower bound of its error anywhere in the cell,
// and only cells whose bound is at most B are kept and refined. Every
// point with error <= B lies in a kept cell at every refinement, so the
// rectangle around the kept cells contains the whole region.

// shape is an ideal unity-gain section of one of the two families the
// enclosure knows: |H|² = 1/((1-u²)² + u²/Q²) for a 2-pole and 1/(1+u²)
// for a 1-pole, with u = w/w0 for a low-pass and u = w0/w for a high-pass.
type shape struct {
	poles   int
	inverse bool // high-pass: u = w0/w
}

func shapeOf(t *synth.Topology) (shape, bool) {
	if t.Poles() != 1 && t.Poles() != 2 {
		return shape{}, false
	}
	return shape{poles: t.Poles(), inverse: t.Response() == synth.HighPass}, true
}

// reach is the rectangle of (x, y) the stock's values can realise for a
// section, from the extreme realisable values (the natural frequency is
// bounded by the extreme R·C products, the Q by the available ratios).
// ok is false when the topology is not one the bound knows.
func reach(t *target, res, caps *valueSet) (b box, ok bool) {
	rlo, rhi := res.vals[0], res.vals[len(res.vals)-1]
	clo, chi := caps.vals[0], caps.vals[len(caps.vals)-1]
	b.xlo = math.Log(1 / (rhi * chi * t.w0))
	b.xhi = math.Log(1 / (rlo * clo * t.w0))
	b.ylo, b.yhi = math.Inf(-1), math.Inf(1)
	switch t.topo {
	case synth.FirstOrderLowPass(), synth.FirstOrderHighPass():
	case synth.SallenKeyLowPass():
		// Q = √(Cf/Cg)·√(R1R2)/(R1+R2): at most ½√(Cmax/Cmin), at least
		// √(Cmin/Cmax)·√ρ/(1+ρ) with ρ = Rmax/Rmin.
		rho := rhi / rlo
		b.yhi = math.Log(0.5 * math.Sqrt(chi/clo) / t.q)
		b.ylo = math.Log(math.Sqrt(clo/chi) * math.Sqrt(rho) / (1 + rho) / t.q)
	case synth.SallenKeyHighPass():
		// Q = √(Rg/Rf)·√(C1C2)/(C1+C2): the same with the kinds swapped.
		kappa := chi / clo
		b.yhi = math.Log(0.5 * math.Sqrt(rhi/rlo) / t.q)
		b.ylo = math.Log(math.Sqrt(rlo/rhi) * math.Sqrt(kappa) / (1 + kappa) / t.q)
	default:
		return b, false
	}
	// A relative margin far above rounding: the bounds are attained only
	// at the extremes.
	const m = 1e-9
	b.xlo, b.xhi = b.xlo-m, b.xhi+m
	if t.topo.Poles() == 2 {
		b.ylo, b.yhi = b.ylo-m, b.yhi+m
	}
	return b, true
}

// cellBound is a lower bound of the section error (dB, over the grid
// points idx) of every ideal section with x in [x0, x1] and y in [y0, y1].
func (t *target) cellBound(sh shape, x0, x1, y0, y1 float64, idx []int) float64 {
	w0lo, w0hi := t.w0*math.Exp(x0), t.w0*math.Exp(x1)
	var iqlo, iqhi float64 // 1/Q²
	if sh.poles == 2 {
		iqlo = math.Exp(-2*y1) / (t.q * t.q)
		iqhi = math.Exp(-2*y0) / (t.q * t.q)
	}
	var lb float64
	for _, g := range idx {
		w := t.grid.w[g]
		ulo, uhi := w/w0hi, w/w0lo
		if sh.inverse {
			ulo, uhi = w0lo/w, w0hi/w
		}
		u2lo, u2hi := ulo*ulo, uhi*uhi
		var dlo, dhi float64 // the denominator |1/H|²
		if sh.poles == 1 {
			dlo, dhi = 1+u2lo, 1+u2hi
		} else {
			alo, ahi := (1-u2lo)*(1-u2lo), (1-u2hi)*(1-u2hi)
			if alo > ahi {
				alo, ahi = ahi, alo
			}
			if u2lo <= 1 && 1 <= u2hi {
				alo = 0
			}
			dlo, dhi = alo+u2lo*iqlo, ahi+u2hi*iqhi
		}
		// Gain in dB lies in [-10 lg dhi, -10 lg dlo]; its distance from
		// the target's gain bounds the deviation at this point.
		td := t.tdb[g]
		if v := -10*math.Log10(dhi) - td; v > lb {
			lb = v
		}
		if v := td + 10*math.Log10(dlo); v > lb {
			lb = v
		}
	}
	return lb
}

type cell struct{ x0, x1, y0, y1 float64 }

// Refinement limits of the enclosure: cells are split until each is at
// most 1/regionRes of the kept region's extent in each direction, or the
// kept cells would exceed regionCells (the rectangle is then a little
// looser, never smaller than the region).
const (
	regionRes   = 32
	regionCells = 4096
	regionDepth = 64
)

// enclose returns the rectangle around every (x, y) in dom whose error
// can be at most B, and false when there is none. Its sides are on cell
// edges that the interval bound proves, so it is never smaller than the
// region (on the grid points idx, a subset of the scoring grid, which can
// only enlarge the region).
func (t *target) enclose(sh shape, dom box, B float64, idx []int) (box, bool) {
	// Keep cells whose bound is within B, with a margin far above the
	// rounding of the bound.
	lim := B*(1+1e-9) + 1e-12
	n := 8
	var cells []cell
	if sh.poles == 1 {
		for i := 0; i < n; i++ {
			cells = append(cells, cell{x0: lerp(dom.xlo, dom.xhi, i, n), x1: lerp(dom.xlo, dom.xhi, i+1, n)})
		}
	} else {
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				cells = append(cells, cell{lerp(dom.xlo, dom.xhi, i, n), lerp(dom.xlo, dom.xhi, i+1, n),
					lerp(dom.ylo, dom.yhi, j, n), lerp(dom.ylo, dom.yhi, j+1, n)})
			}
		}
	}
	var kept []cell
	for depth := 0; ; depth++ {
		kept = kept[:0]
		for _, c := range cells {
			if t.cellBound(sh, c.x0, c.x1, c.y0, c.y1, idx) <= lim {
				kept = append(kept, c)
			}
		}
		if len(kept) == 0 {
			return box{}, false
		}
		bb := bboxOf(kept)
		wx, wy := (bb.xhi-bb.xlo)/regionRes, (bb.yhi-bb.ylo)/regionRes
		var next []cell
		split := false
		for _, c := range kept {
			sx := c.x1-c.x0 > wx && c.x1-c.x0 > 1e-13*(1+math.Abs(c.x0))
			sy := sh.poles == 2 && c.y1-c.y0 > wy && c.y1-c.y0 > 1e-13*(1+math.Abs(c.y0))
			switch {
			case sx && sy:
				xm, ym := 0.5*(c.x0+c.x1), 0.5*(c.y0+c.y1)
				next = append(next, cell{c.x0, xm, c.y0, ym}, cell{xm, c.x1, c.y0, ym}, cell{c.x0, xm, ym, c.y1}, cell{xm, c.x1, ym, c.y1})
				split = true
			case sx:
				xm := 0.5 * (c.x0 + c.x1)
				next = append(next, cell{c.x0, xm, c.y0, c.y1}, cell{xm, c.x1, c.y0, c.y1})
				split = true
			case sy:
				ym := 0.5 * (c.y0 + c.y1)
				next = append(next, cell{c.x0, c.x1, c.y0, ym}, cell{c.x0, c.x1, ym, c.y1})
				split = true
			default:
				next = append(next, c)
			}
		}
		if !split || len(next) > regionCells || depth >= regionDepth {
			return bb, true
		}
		cells = next
	}
}

func lerp(a, b float64, i, n int) float64 {
	if i == n {
		return b
	}
	return a + (b-a)*float64(i)/float64(n)
}

func bboxOf(cs []cell) box {
	b := box{xlo: math.Inf(1), xhi: math.Inf(-1), ylo: math.Inf(1), yhi: math.Inf(-1)}
	for _, c := range cs {
		b.xlo, b.xhi = math.Min(b.xlo, c.x0), math.Max(b.xhi, c.x1)
		b.ylo, b.yhi = math.Min(b.ylo, c.y0), math.Max(b.yhi, c.y1)
	}
	return b
}

// reachText describes what the stock can realise for a section, for the
// "nothing in stock comes near" explanation.
func reachText(t *target, dom box) string {
	f := func(x float64) string { return fmt.Sprintf("%.3g Hz", t.w0*math.Exp(x)/(2*math.Pi)) }
	s := fmt.Sprintf("the stock's values give f0 from %s to %s", f(dom.xlo), f(dom.xhi))
	if t.topo.Poles() == 2 {
		s += fmt.Sprintf(" and Q from %.3g to %.3g", t.q*math.Exp(dom.ylo), t.q*math.Exp(dom.yhi))
	}
	return s
}
