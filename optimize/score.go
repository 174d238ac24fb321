package optimize

import (
	"math"
	"sync"

	"drawerfit/synth"
)

// scoreGrid is the logarithmic frequency grid on which response error is
// measured.
type scoreGrid struct {
	f []float64 // Hz
	w []float64 // rad/s
}

// pointsPerDecade is the density of the scoring grid; the issue asks for at
// least 100 points per decade.
const pointsPerDecade = 100

// newScoreGrid spans [lo, hi] Hz with pointsPerDecade points per decade and
// includes every frequency in must exactly (fp and fs), so that the error at
// the specification's edges is always measured.
func newScoreGrid(lo, hi float64, must ...float64) scoreGrid {
	dec := math.Log10(hi / lo)
	n := int(math.Ceil(dec*pointsPerDecade)) + 1
	f := make([]float64, 0, n+len(must))
	for i := 0; i < n; i++ {
		f = append(f, lo*math.Pow(10, dec*float64(i)/float64(n-1)))
	}
	for _, m := range must {
		if m <= 0 {
			continue
		}
		// Insert in order unless already present.
		at := len(f)
		for i, x := range f {
			if x >= m {
				at = i
				break
			}
		}
		if at < len(f) && math.Abs(f[at]-m) <= 1e-12*m {
			f[at] = m
			continue
		}
		f = append(f, 0)
		copy(f[at+1:], f[at:])
		f[at] = m
	}
	g := scoreGrid{f: f, w: make([]float64, len(f))}
	for i, x := range f {
		g.w[i] = 2 * math.Pi * x
	}
	return g
}

// gridFor returns the scoring grid of the issue: fp/10 to fs for a low-pass,
// fs to 10·fp for a high-pass; without fs up to 3·fp (down to fp/3).
func gridFor(s synth.Spec) scoreGrid {
	fp, fs := s.Pass, s.Stop
	if s.Kind == synth.LowPass {
		hi := 3 * fp
		if fs > 0 {
			hi = fs
		}
		return newScoreGrid(fp/10, hi, fp, fs)
	}
	lo := fp / 3
	if fs > 0 {
		lo = fs
	}
	return newScoreGrid(lo, 10*fp, fp, fs)
}

// target is one ideal section prepared for scoring.
type target struct {
	sec   *synth.Section
	topo  *synth.Topology
	grid  *scoreGrid
	tdb   []float64 // target gain in dB at each grid point
	tg2   []float64 // target |H|² at each grid point
	probe []int     // grid indices tried first: a cheap lower bound
	w0    float64   // rad/s
	q     float64

	mu    sync.Mutex
	boxes map[int]box

	// dom is the rectangle of (x, y) the stock can realise (see reach);
	// with hasDom the boxes are proven enclosures inside it.
	dom    box
	hasDom bool
	sh     shape
}

// setDomain bounds the section's parameters by what the values res and
// caps can realise, so that every box is a proven enclosure inside it.
func (t *target) setDomain(res, caps *valueSet) {
	sh, ok := shapeOf(t.topo)
	if !ok {
		return
	}
	dom, ok := reach(t, res, caps)
	if !ok {
		return
	}
	t.dom, t.hasDom, t.sh = dom, true, sh
}

// reachable reports whether any realisable section can come within the
// error level B, and otherwise why not.
func (t *target) reachable(B float64) (bool, string) {
	if !t.hasDom {
		return true, ""
	}
	if b := t.boxAt(levelOf(B)); !b.empty() {
		return true, ""
	}
	return false, reachText(t, t.dom)
}

func newTarget(sec *synth.Section, g *scoreGrid) *target {
	t := &target{sec: sec, topo: sec.Topology, grid: g, tdb: make([]float64, len(g.w)),
		w0: 2 * math.Pi * sec.F0, q: sec.Q, boxes: map[int]box{}}
	n := sec.Topology.Poles()
	t.tg2 = make([]float64, len(g.w))
	for i, w := range g.w {
		t.tg2[i] = synth.Gain2(sec.Num, sec.Den, n, w)
		t.tdb[i] = 10 * math.Log10(t.tg2[i])
	}
	// Probes: both grid ends, the point nearest the section's natural
	// frequency, and a few spread points; any subset of the grid gives a
	// lower bound on the maximum over the grid.
	near := 0
	for i, w := range g.w {
		if math.Abs(math.Log(w/t.w0)) < math.Abs(math.Log(g.w[near]/t.w0)) {
			near = i
		}
	}
	last := len(g.w) - 1
	t.probe = uniqueInts(last, near, 0, last/2, last/4, 3*last/4, (near+last)/2)
	return t
}

func uniqueInts(xs ...int) []int {
	var out []int
	seen := map[int]bool{}
	for _, x := range xs {
		if !seen[x] {
			seen[x] = true
			out = append(out, x)
		}
	}
	return out
}

// probeErr returns the largest |deviation| in dB at the probe points.
// Gains are compared as ratios so that only one logarithm is taken.
func (t *target) probeErr(num, den synth.Poly) float64 {
	n := t.topo.Poles()
	hi, lo := 1.0, 1.0
	for _, i := range t.probe {
		r := synth.Gain2(num, den, n, t.grid.w[i]) / t.tg2[i]
		hi, lo = math.Max(hi, r), math.Min(lo, r)
	}
	return 10 * math.Log10(math.Max(hi, 1/lo))
}

// fullErr returns the largest |deviation| over the grid and, when dev is
// not nil, writes the signed deviation (candidate - target, dB) into it.
func (t *target) fullErr(num, den synth.Poly, dev []float64) float64 {
	n := t.topo.Poles()
	if dev == nil {
		hi, lo := 1.0, 1.0
		for i, w := range t.grid.w {
			r := synth.Gain2(num, den, n, w) / t.tg2[i]
			hi, lo = math.Max(hi, r), math.Min(lo, r)
		}
		return 10 * math.Log10(math.Max(hi, 1/lo))
	}
	var e float64
	for i, w := range t.grid.w {
		d := 10*math.Log10(synth.Gain2(num, den, n, w)) - t.tdb[i]
		dev[i] = d
		e = math.Max(e, math.Abs(d))
	}
	return e
}

// errFor scores element values: a probe bound first, the full grid only
// when the probes do not already exceed limit. ok is false when rejected.
func (t *target) errFor(v []float64, limit float64) (float64, bool) {
	num, den := t.topo.Coeffs(v)
	if pe := t.probeErr(num, den); pe > limit {
		return pe, false
	}
	e := t.fullErr(num, den, nil)
	return e, e <= limit
}

// coarse is the subset of the grid that the error regions are traced on:
// about 40 evenly spaced points and the probes (any subset gives a lower
// bound of the error, so a region traced on it contains the true one).
func (t *target) coarse() []int {
	var idx []int
	step := max(len(t.grid.w)/40, 1)
	for i := 0; i < len(t.grid.w); i += step {
		idx = append(idx, i)
	}
	return append(idx, t.probe...)
}

// box is a rectangle in (x, y) = (ln(w0/w0t), ln(Q/Qt)) that contains every
// 2-pole response whose error is below a level; for a 1-pole section only x
// is used.
type box struct {
	xlo, xhi, ylo, yhi float64
	// Precomputed exponentials used by the searches.
	e2xhi, e2xlo float64 // e^{-2 xhi}, e^{-2 xlo}
	eyhi, eylo   float64 // e^{yhi}, e^{ylo}
	exhi, exlo   float64 // e^{-xhi}, e^{-xlo}
}

// levelOf returns the smallest box level whose error bound is >= e. Levels
// are 1e-7 dB · √2^k.
// empty reports whether the box holds no point (nothing reaches its level).
func (b *box) empty() bool { return b.xlo > b.xhi || b.ylo > b.yhi }

func levelOf(e float64) int {
	if e <= 1e-7 {
		return 0
	}
	k := int(math.Ceil(2 * math.Log2(e/1e-7)))
	if k > 80 {
		k = 80
	}
	return k
}

func levelValue(k int) float64 { return 1e-7 * math.Pow(math.Sqrt2, float64(k)) }

// shapeErr is the error of an ideal section of this target's kind with
// natural frequency w0t·e^x and Q = Qt·e^y, over a coarse subset of the grid
// (a lower bound of the full-grid error, so the region it bounds is a
// superset of the true one).
func (t *target) shapeErr(x, y float64, coarse []int) float64 {
	w0 := t.w0 * math.Exp(x)
	var num, den synth.Poly
	if t.topo.Poles() == 1 {
		den = synth.Poly{1, 1 / w0}
		if t.topo.Response() == synth.LowPass {
			num = synth.Poly{1}
		} else {
			num = synth.Poly{0, 1 / w0}
		}
	} else {
		q := t.q * math.Exp(y)
		den = synth.Poly{1, 1 / (w0 * q), 1 / (w0 * w0)}
		if t.topo.Response() == synth.LowPass {
			num = synth.Poly{1}
		} else {
			num = synth.Poly{0, 0, 1 / (w0 * w0)}
		}
	}
	n := t.topo.Poles()
	var e float64
	for _, i := range coarse {
		d := math.Abs(10*math.Log10(synth.Gain2(num, den, n, t.grid.w[i])) - t.tdb[i])
		if d > e {
			e = d
		}
	}
	return e
}

// boxAt returns the box for error level k (cached). The region {error < B}
// is traced along rays from the target by bisection on a coarse grid subset,
// and the rectangle around it is widened by 20 % and a small absolute margin.
func (t *target) boxAt(k int) box {
	t.mu.Lock()
	defer t.mu.Unlock()
	return t.boxAtLocked(k)
}

// linearLevel is the box level (about 1e-3 dB) below which boxes are the
// linearLevel box scaled in proportion to the error level, with a 10 %
// margin. Near the target E(x, y) is a norm of (x, y) to first order; the
// second-order terms at these deviations (|x|, |y| below about 1e-4) change
// the boundary by far less than the margin.
const linearLevel = 27

func (t *target) boxAtLocked(k int) box {
	if b, ok := t.boxes[k]; ok {
		return b
	}
	if t.hasDom {
		b, ok := t.enclose(t.sh, t.dom, levelValue(k), t.coarse())
		if !ok {
			b = box{xlo: 1, xhi: -1, ylo: 1, yhi: -1}
		}
		if t.topo.Poles() == 1 {
			b.ylo, b.yhi = math.Inf(-1), math.Inf(1)
		}
		b.e2xhi, b.e2xlo = math.Exp(-2*b.xhi), math.Exp(-2*b.xlo)
		b.eyhi, b.eylo = math.Exp(b.yhi), math.Exp(b.ylo)
		b.exhi, b.exlo = math.Exp(-b.xhi), math.Exp(-b.xlo)
		t.boxes[k] = b
		return b
	}
	if k < linearLevel {
		base := t.boxAtLocked(linearLevel)
		f := 1.1 * levelValue(k) / levelValue(linearLevel)
		b := box{xlo: base.xlo * f, xhi: base.xhi * f, ylo: base.ylo * f, yhi: base.yhi * f}
		if t.topo.Poles() == 1 {
			b.ylo, b.yhi = math.Inf(-1), math.Inf(1)
		}
		b.e2xhi, b.e2xlo = math.Exp(-2*b.xhi), math.Exp(-2*b.xlo)
		b.eyhi, b.eylo = math.Exp(b.yhi), math.Exp(b.ylo)
		b.exhi, b.exlo = math.Exp(-b.xhi), math.Exp(-b.xlo)
		t.boxes[k] = b
		return b
	}
	B := levelValue(k)
	coarse := t.coarse()
	rays := 48
	if t.topo.Poles() == 1 {
		rays = 2
	}
	var b box
	const rmax = 6.0 // e^6 ≈ 400: beyond any useful deviation
	for r := 0; r < rays; r++ {
		th := 2 * math.Pi * float64(r) / float64(rays)
		if t.topo.Poles() == 1 {
			th = float64(r) * math.Pi
		}
		cx, cy := math.Cos(th), math.Sin(th)
		lo, hi := 0.0, 1e-9
		for hi < rmax && t.shapeErr(hi*cx, hi*cy, coarse) < B {
			lo, hi = hi, hi*2
		}
		if hi > rmax {
			hi = rmax
		}
		for it := 0; it < 40; it++ {
			m := 0.5 * (lo + hi)
			if t.shapeErr(m*cx, m*cy, coarse) < B {
				lo = m
			} else {
				hi = m
			}
		}
		x, y := hi*cx, hi*cy
		b.xlo, b.xhi = math.Min(b.xlo, x), math.Max(b.xhi, x)
		b.ylo, b.yhi = math.Min(b.ylo, y), math.Max(b.yhi, y)
	}
	const widen, margin = 1.2, 1e-9
	b = box{xlo: b.xlo*widen - margin, xhi: b.xhi*widen + margin, ylo: b.ylo*widen - margin, yhi: b.yhi*widen + margin}
	if t.topo.Poles() == 1 {
		b.ylo, b.yhi = math.Inf(-1), math.Inf(1)
	}
	b.e2xhi, b.e2xlo = math.Exp(-2*b.xhi), math.Exp(-2*b.xlo)
	b.eyhi, b.eylo = math.Exp(b.yhi), math.Exp(b.ylo)
	b.exhi, b.exlo = math.Exp(-b.xhi), math.Exp(-b.xlo)
	t.boxes[k] = b
	return b
}

// passFigure is a cascade's passband figure judged against Ap, from its
// gain in dB at the passband's grid points (indices lo..hi, fp at passIdx)
// and its unity gain at DC (infinite frequency for a high-pass): the
// attenuation at fp, or with ripple set (Chebyshev, whose fp is the end of
// the ripple band and Ap the ripple) the largest minus the smallest gain
// there, as the yield analysis judges it. gain(i) is the cascade's gain in
// dB at grid point i.
func passFigure(ripple bool, passIdx, from, to int, gain func(i int) float64) float64 {
	if !ripple {
		return -gain(passIdx)
	}
	hi, lo := 0.0, 0.0 // DC
	for i := from; i <= to; i++ {
		g := gain(i)
		hi, lo = math.Max(hi, g), math.Min(lo, g)
	}
	return hi - lo
}
