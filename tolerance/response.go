package tolerance

import (
	"math"

	"drawerfit/synth"
)

// judge measures a board's response against a specification. It works on a
// normalised frequency x: f = x·fp for a low-pass and f = fp/x for a
// high-pass, so that the passband is always 0 <= x <= 1 (x = 0 is DC for a
// low-pass and infinite frequency for a high-pass, where every section's
// gain is exactly 1) and the stopband edge is x = xs > 1.
type judge struct {
	hp      bool
	fp, fs  float64 // Hz
	ap, as  float64 // dB
	hasStop bool
	cheb    bool
	xs      float64
	// grid are the passband points x in (0, 1], denser towards the edge
	// where Chebyshev ripples crowd together.
	grid []float64
	// stopScan are extra stopband points beyond xs, used only when a
	// section's natural frequency lies in the stopband (then the stopband
	// minimum of attenuation need not be at fs).
	stopScan []float64
	// edgeLevel is the |H|² that defines the edge for Butterworth and
	// Bessel (one half: the -3 dB point); Chebyshev edges are found relative
	// to the passband maximum instead.
	edgeLevel float64
}

// newJudge prepares the measurement of b against spec (already
// normalised). The grid has 8 points per pole (at least 16): with the
// sine spacing used the step near the edge is far below the spacing of
// Chebyshev extrema, cos(kπ/n).
func newJudge(spec synth.Spec, b *board, order int) *judge {
	j := &judge{
		hp: spec.Kind == synth.HighPass, fp: spec.Pass, fs: spec.Stop,
		ap: spec.PassAtten, as: spec.StopAtten, hasStop: spec.Stop > 0,
		cheb: spec.Approx == synth.Chebyshev, edgeLevel: 0.5,
	}
	if j.hasStop {
		j.xs = j.toX(spec.Stop)
	}
	k := max(16, 8*order)
	j.grid = make([]float64, k)
	for i := 1; i <= k; i++ {
		j.grid[i-1] = math.Sin(math.Pi / 2 * float64(i) / float64(k))
	}
	j.grid[k-1] = 1
	if j.hasStop && b != nil {
		// Beyond every section's natural frequency each section's gain falls
		// monotonically, so attenuation in the stopband has its minimum at
		// fs unless a natural frequency lies above fs (in x). 1.3 covers the
		// spread of any sensible tolerance (at most about 20 %).
		xpk := 0.0
		ws := b.newWorkspace()
		ws.load(b.nominalParts())
		for i, s := range b.sections {
			w0, _, _ := sectionPoles(ws.coeffs[i].den, s.topo.Poles())
			xpk = math.Max(xpk, j.toX(w0/(2*math.Pi)))
		}
		xpk *= 1.3
		if xpk > j.xs {
			const n = 24
			for i := 1; i <= n; i++ {
				j.stopScan = append(j.stopScan, j.xs*math.Pow(xpk/j.xs, float64(i)/n))
			}
		}
	}
	return j
}

// toX maps a frequency in Hz to the normalised axis.
func (j *judge) toX(f float64) float64 {
	if j.hp {
		return j.fp / f
	}
	return f / j.fp
}

// toHz maps the normalised axis back to Hz.
func (j *judge) toHz(x float64) float64 {
	if j.hp {
		return j.fp / x
	}
	return j.fp * x
}

// gainer is a response to measure: the board with drawn parts (workspace)
// or a board with a real op-amp model.
type gainer interface {
	// gain2 returns |H(jω)|² of the cascade at angular frequency omega.
	gain2(omega float64) float64
}

// g2 is the cascade |H|² at normalised frequency x > 0.
func (j *judge) g2(w gainer, x float64) float64 {
	return w.gain2(2 * math.Pi * j.toHz(x))
}

// metrics are the figures of one analysed board.
type metrics struct {
	// passAtt is the passband figure judged against Ap, dB: the largest
	// attenuation for 0 <= x <= 1 relative to the passband gain (which is
	// exactly 1 at x = 0), or for Chebyshev the ripple, the largest minus the
	// smallest gain there.
	passAtt float64
	gmax    float64 // |H|² maximum in the passband (>= 1)
	stopAtt float64 // dB: least attenuation in the stopband relative to the passband gain
	edge    float64 // Hz: -3 dB frequency, or ripple-band edge for Chebyshev; NaN if not found
}

// passExcess is how far the passband figure exceeds Ap (dB; <= 0 passes
// the spec itself).
func (j *judge) passExcess(m metrics) float64 { return m.passAtt - j.ap }

// stopExcess is how far the stopband attenuation falls short of As (dB; <= 0
// passes). Without a stopband it is -Inf.
func (j *judge) stopExcess(m metrics) float64 {
	if !j.hasStop {
		return math.Inf(-1)
	}
	return j.as - m.stopAtt
}

// measure analyses the board loaded in w. The edge is computed only when
// needEdge is set (it costs a root search).
func (j *judge) measure(w gainer, needEdge bool) metrics {
	var m metrics
	gmax, gmin := 1.0, 1.0 // x = 0: unity passband gain, exactly
	imax, imin := -1, -1
	for i, x := range j.grid {
		g := j.g2(w, x)
		if g > gmax {
			gmax, imax = g, i
		}
		if g < gmin {
			gmin, imin = g, i
		}
	}
	if imax >= 0 && imax < len(j.grid)-1 {
		gmax = math.Max(gmax, j.golden(w, j.xAt(imax-1), j.grid[imax+1], true))
	}
	if imin >= 0 && imin < len(j.grid)-1 {
		gmin = math.Min(gmin, j.golden(w, j.xAt(imin-1), j.grid[imin+1], false))
	}
	m.gmax = gmax
	if j.cheb {
		m.passAtt = 10 * math.Log10(gmax/gmin)
	} else {
		m.passAtt = -10 * math.Log10(gmin)
	}
	if j.hasStop {
		g := j.g2(w, j.xs)
		for _, x := range j.stopScan {
			g = math.Max(g, j.g2(w, x))
		}
		m.stopAtt = -10 * math.Log10(g)
	}
	m.edge = math.NaN()
	if needEdge {
		level := j.edgeLevel
		if j.cheb {
			level = gmax * math.Pow(10, -j.ap/10)
		}
		if x, ok := j.edgeX(w, level); ok {
			m.edge = j.toHz(x)
		}
	}
	return m
}

// xAt returns grid point i, or 0 before the first.
func (j *judge) xAt(i int) float64 {
	if i < 0 {
		return 0
	}
	return j.grid[i]
}

// golden returns the largest (or smallest) |H|² on [a, b] by golden-section
// search; the bracket comes from the grid, so the extremum is interior.
func (j *judge) golden(w gainer, a, b float64, maximise bool) float64 {
	const invPhi = 0.6180339887498949 // (sqrt(5)-1)/2
	f := func(x float64) float64 {
		if x <= 0 {
			return 1
		}
		g := j.g2(w, x)
		if maximise {
			return -g
		}
		return g
	}
	c := b - invPhi*(b-a)
	d := a + invPhi*(b-a)
	fc, fd := f(c), f(d)
	// 40 steps shrink the bracket by 0.618^40 ≈ 4e-9: the extremum value is
	// then exact to far below 1e-9 dB.
	for it := 0; it < 40; it++ {
		if fc < fd {
			b, d, fd = d, c, fc
			c = b - invPhi*(b-a)
			fc = f(c)
		} else {
			a, c, fc = c, d, fd
			d = a + invPhi*(b-a)
			fd = f(d)
		}
	}
	v := math.Min(fc, fd)
	if maximise {
		return -v
	}
	return v
}

// edgeX finds the highest x where |H|² >= level (the edge seen from the
// stopband side).
func (j *judge) edgeX(w gainer, level float64) (float64, bool) {
	lo, hi := 1.0, 1.0
	if j.g2(w, hi) >= level {
		for it := 0; j.g2(w, hi) >= level; it++ {
			if it > 200 {
				return 0, false
			}
			lo = hi
			hi *= 1.1
		}
	} else {
		for it := 0; j.g2(w, lo) < level; it++ {
			if it > 400 {
				return 0, false
			}
			hi = lo
			lo /= 1.02
		}
	}
	for it := 0; it < 60 && hi-lo > 1e-12*hi; it++ {
		m := math.Sqrt(lo * hi)
		if j.g2(w, m) >= level {
			lo = m
		} else {
			hi = m
		}
	}
	return math.Sqrt(lo * hi), true
}

// sectionPoles is synth.SectionPoles (the one pole extraction).
func sectionPoles(den synth.Poly, poles int) (w0, q, wr float64) {
	return synth.SectionPoles(den, poles)
}
