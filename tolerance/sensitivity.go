package tolerance

import (
	"fmt"
	"math"
	"math/bits"
)

// ComponentSensitivity holds the normalised sensitivities of a section's
// pole data to one component: S = ∂ln y / ∂ln x, so that a 1 % change of
// the component changes y by about S %.
type ComponentSensitivity struct {
	Ref    string  `json:"ref"`
	Symbol string  `json:"symbol"`
	F0     float64 `json:"f0"`
	Q      float64 `json:"q"`
	// RealF0 is the sensitivity of a 3-pole section's real pole (0 otherwise).
	RealF0 float64 `json:"real_f0"`
}

// SectionSensitivity lists the sensitivities of one section.
type SectionSensitivity struct {
	Section    int                    `json:"section"` // 1-based
	Topology   string                 `json:"topology"`
	F0         float64                `json:"f0_hz"` // nominal, of the pair (or the 1-pole section's pole)
	Q          float64                `json:"q"`
	RealF0     float64                `json:"real_f0_hz"`
	Components []ComponentSensitivity `json:"components"`
}

// sensStep is the relative step of the central differences on ln x: small
// enough that the truncation error (about step², 1e-12) is negligible and
// large enough that rounding (about 1e-16/step) is too.
const sensStep = 1e-6

// sensitivities computes the normalised sensitivities of every section's f0,
// Q (and real pole) to each of its components by a central difference of
// the exact closed-form coefficients.
func sensitivities(b *board) []SectionSensitivity {
	ws := b.newWorkspace()
	nom := b.nominalParts()
	ws.load(nom)
	out := make([]SectionSensitivity, len(b.sections))
	for si, s := range b.sections {
		t := s.topo
		w0, q, wr := sectionPoles(ws.coeffs[si].den, t.Poles())
		ss := SectionSensitivity{Section: si + 1, Topology: t.ID(), F0: w0 / (2 * math.Pi), Q: q, RealF0: wr / (2 * math.Pi)}
		v := append([]float64(nil), ws.vals[si]...)
		for k, ci := range s.comps {
			x := v[k]
			v[k] = x * math.Exp(sensStep)
			_, dp := t.Coeffs(v)
			w0p, qp, wrp := sectionPoles(dp, t.Poles())
			v[k] = x * math.Exp(-sensStep)
			_, dm := t.Coeffs(v)
			w0m, qm, wrm := sectionPoles(dm, t.Poles())
			v[k] = x
			cs := ComponentSensitivity{Ref: b.comps[ci].ref, Symbol: b.comps[ci].symbol,
				F0: math.Log(w0p/w0m) / (2 * sensStep)}
			if t.Poles() >= 2 {
				cs.Q = math.Log(qp/qm) / (2 * sensStep)
			}
			if t.Poles() == 3 {
				cs.RealF0 = math.Log(wrp/wrm) / (2 * sensStep)
			}
			ss.Components = append(ss.Components, cs)
		}
		out[si] = ss
	}
	return out
}

// WorstCase is the corner analysis: every part at a limit of its
// tolerance. With at most MaxExactCorners parts every one of the 2^n
// corners is evaluated exactly and the figures are the true extremes over
// the corners (Exact); with more parts each figure's corner is chosen from
// the signs of the sensitivities, which is a sensitivity estimate and not a
// bound.
type WorstCase struct {
	// PassAtten is the largest passband attenuation (Chebyshev: ripple) found (dB) and
	// PassOK whether it is within the acceptance window.
	PassAtten float64 `json:"pass_atten_db"`
	PassOK    bool    `json:"pass_ok"`
	// StopAtten is the smallest attenuation at fs (dB) and StopOK whether it
	// is within the acceptance window; absent without a stopband.
	StopAtten *float64 `json:"stop_atten_db"`
	StopOK    bool     `json:"stop_ok"`
	// EdgeLow and EdgeHigh are the lowest and highest edge frequencies (Hz):
	// the -3 dB point, or the ripple-band edge for Chebyshev.
	EdgeLow  float64 `json:"edge_low_hz"`
	EdgeHigh float64 `json:"edge_high_hz"`
	// Exact is true when every corner was evaluated; Corners is how many
	// corners were evaluated.
	Exact   bool `json:"exact"`
	Corners int  `json:"corners"`
	// Method says in words how the figures were found.
	Method string `json:"method"`
}

// MaxExactCorners is the largest number of parts whose 2^n corners are all
// evaluated (65,536 corners, well under a second); above it the corners
// are a sensitivity estimate.
const MaxExactCorners = 16

// corners finds the worst-case corners: all of them when there are few
// parts, else the sensitivity estimate.
func corners(b *board, j *judge, tol []float64, opt *Options) *WorstCase {
	if len(b.parts) <= MaxExactCorners {
		return allCorners(b, j, tol, opt)
	}
	return sensitivityCorners(b, j, tol, opt)
}

// allCorners evaluates every corner, visiting them in Gray-code order so
// that each step moves one part and re-analyses only its section.
func allCorners(b *board, j *judge, tol []float64, opt *Options) *WorstCase {
	n := len(b.parts)
	ws := b.newWorkspace()
	nom := b.nominalParts()
	parts := make([]float64, n)
	for i := range parts {
		parts[i] = nom[i] * (1 - tol[i])
	}
	ws.load(parts)
	wc := &WorstCase{Exact: true, Corners: 1 << n, Method: fmt.Sprintf("all %d corners", 1<<n)}
	wc.PassAtten = math.Inf(-1)
	stop := math.Inf(1)
	wc.EdgeLow, wc.EdgeHigh = math.Inf(1), math.Inf(-1)
	high := make([]bool, n)
	visit := func() {
		m := j.measure(ws, true)
		wc.PassAtten = math.Max(wc.PassAtten, m.passAtt)
		if j.hasStop {
			stop = math.Min(stop, m.stopAtt)
		}
		if !math.IsNaN(m.edge) {
			wc.EdgeLow, wc.EdgeHigh = math.Min(wc.EdgeLow, m.edge), math.Max(wc.EdgeHigh, m.edge)
		}
	}
	visit()
	for i := 1; i < 1<<n; i++ {
		if i&1023 == 0 && opt.cancelled() {
			return nil
		}
		k := bits.TrailingZeros(uint(i))
		high[k] = !high[k]
		if high[k] {
			parts[k] = nom[k] * (1 + tol[k])
		} else {
			parts[k] = nom[k] * (1 - tol[k])
		}
		ws.loadSection(b.comps[b.parts[k].comp].section, parts)
		visit()
	}
	wc.PassOK = wc.PassAtten-j.ap <= opt.PassMargin+judgeSlack
	wc.StopOK = true
	if j.hasStop {
		wc.StopAtten = &stop
		wc.StopOK = j.as-stop <= opt.StopMargin+judgeSlack
	}
	if math.IsInf(wc.EdgeLow, 0) || math.IsInf(wc.EdgeHigh, 0) {
		wc.EdgeLow, wc.EdgeHigh = 0, 0
	}
	return wc
}

// sensitivityCorners chooses one corner per figure. The direction of each
// part comes from the sign of a central difference (relative step 1e-4,
// large enough to stand clear of the root-search resolution) of the figure
// with respect to the part's value. Interactions between parts can make
// another corner worse, so the result is an estimate, not a bound.
func sensitivityCorners(b *board, j *judge, tol []float64, opt *Options) *WorstCase {
	const h = 1e-4
	ws := b.newWorkspace()
	nom := b.nominalParts()
	parts := append([]float64(nil), nom...)
	n := len(b.parts)
	dPass, dStop, dEdge := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range b.parts {
		if tol[i] == 0 {
			continue
		}
		si := b.comps[b.parts[i].comp].section
		parts[i] = nom[i] * (1 + h)
		ws.load(parts)
		mp := j.measure(ws, true)
		parts[i] = nom[i] * (1 - h)
		ws.loadSection(si, parts)
		mm := j.measure(ws, true)
		parts[i] = nom[i]
		dPass[i] = mp.passAtt - mm.passAtt
		dStop[i] = mp.stopAtt - mm.stopAtt
		dEdge[i] = mp.edge - mm.edge
	}
	corner := func(d []float64, sign float64) metrics {
		for i := range parts {
			s := 0.0
			switch {
			case d[i]*sign > 0:
				s = 1
			case d[i]*sign < 0:
				s = -1
			}
			parts[i] = nom[i] * (1 + s*tol[i])
		}
		ws.load(parts)
		m := j.measure(ws, true)
		copy(parts, nom)
		return m
	}
	wc := &WorstCase{Corners: 4, Method: fmt.Sprintf("sensitivity estimate (%d parts: more than %d, so not every corner is tried; not a bound)", n, MaxExactCorners)}
	mp := corner(dPass, 1)
	wc.PassAtten = mp.passAtt
	wc.PassOK = j.passExcess(mp) <= opt.PassMargin+judgeSlack
	if j.hasStop {
		ms := corner(dStop, -1)
		a := ms.stopAtt
		wc.StopAtten = &a
		wc.StopOK = j.stopExcess(ms) <= opt.StopMargin+judgeSlack
	} else {
		wc.StopOK = true
	}
	lo, hi := corner(dEdge, -1).edge, corner(dEdge, 1).edge
	wc.EdgeLow, wc.EdgeHigh = math.Min(lo, hi), math.Max(lo, hi)
	if math.IsNaN(lo) || math.IsNaN(hi) {
		wc.EdgeLow, wc.EdgeHigh = 0, 0
	}
	return wc
}
