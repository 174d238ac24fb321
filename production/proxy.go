package production

import (
	"math"
	"math/cmplx"
	"sort"

	"drawerfit/optimize"
	"drawerfit/synth"
)

// screen estimates, cheaply, how good a candidate could get with one
// value added to the stock: it puts the value into one position at a
// time and measures the response error on a grid like the fit's. It only
// orders the additions worth a full search; the figures a suggestion
// reports come from that search.
type screen struct {
	c      *optimize.Candidate
	w      []float64      // rad/s
	target []float64      // dB
	secs   [][]complex128 // per section, its response on the grid
	resVal []float64      // usable resistor values, for snapping re-solved resistors
}

// pairAccuracy is how close (relative) a single new value must come to
// the exact value for the screen to try it in place of a pair: half the
// step of the E96 series, ln(10)/96/2 (IEC 60063 E96).
const pairAccuracy = 2.302585092994046 / 96 / 2

// screenPointsPerDecade matches the fit's scoring grid density (the issue
// asks for at least 100 points per decade).
const screenPointsPerDecade = 100

func newScreen(c *optimize.Candidate, resistors []float64) *screen {
	sp := c.Design.Spec
	lo, hi := sp.Pass/10, 3*sp.Pass
	if sp.Kind == synth.LowPass {
		if sp.Stop > 0 {
			hi = sp.Stop
		}
	} else {
		lo, hi = sp.Pass/3, 10*sp.Pass
		if sp.Stop > 0 {
			lo = sp.Stop
		}
	}
	n := int(math.Ceil(math.Log10(hi/lo)*screenPointsPerDecade)) + 1
	s := &screen{c: c, resVal: resistors}
	for i := 0; i < n; i++ {
		f := lo * math.Pow(hi/lo, float64(i)/float64(n-1))
		w := 2 * math.Pi * f
		s.w = append(s.w, w)
		s.target = append(s.target, gainDB(c.Design.Target(w)))
	}
	for i := range c.Sections {
		s.secs = append(s.secs, s.sectionResponse(c.Sections[i].Target.Topology, c.Sections[i].Values()))
	}
	return s
}

func gainDB(h complex128) float64 { return 20 * math.Log10(cmplx.Abs(h)) }

func (s *screen) sectionResponse(t *synth.Topology, v []float64) []complex128 {
	out := make([]complex128, len(s.w))
	for i, w := range s.w {
		out[i] = t.Eval(v, w)
	}
	return out
}

// errWith is the response error with some sections' responses replaced.
func (s *screen) errWith(repl map[int][]complex128) float64 {
	worst := 0.0
	for i := range s.w {
		h := complex(1, 0)
		for j, r := range s.secs {
			if x, ok := repl[j]; ok {
				h *= x[i]
			} else {
				h *= r[i]
			}
		}
		worst = math.Max(worst, math.Abs(gainDB(h)-s.target[i]))
	}
	return worst
}

// estimate returns the screen's guess of the candidate's figures with
// value v of kind k in stock. A resistor goes into every resistor position
// whose exact value (solved for its section's capacitors, see needed) it
// is closer to than the part there now; a capacitor goes into the one
// position where it does best, its section's resistors solved again and
// put on the nearest usable values. The guess counts unique parts as the
// rows left in use plus the new one.
func (s *screen) estimate(k synth.PartKind, v float64, exact [][]float64) score {
	if k == synth.Resistor {
		return s.estimateResistor(v, exact)
	}
	best := score{meets: true, err: math.Inf(1), parts: s.c.PartCount, unique: s.c.UniqueParts + 1}
	for si := range s.c.Sections {
		sec := &s.c.Sections[si]
		t := sec.Target.Topology
		for _, p := range t.Indices(synth.Capacitor) {
			vals := sec.Values()
			vals[p] = v
			sols, ok := t.Solve(vals, sec.Target.Den)
			if !ok || len(sols) == 0 {
				continue
			}
			vals = nearestSolution(sols, vals, t)
			for _, r := range t.Indices(synth.Resistor) {
				vals[r] = nearestValue(s.resVal, vals[r])
			}
			if e := s.errWith(map[int][]complex128{si: s.sectionResponse(t, vals)}); e < best.err {
				best.err = e
			}
		}
	}
	return best
}

func (s *screen) estimateResistor(v float64, exact [][]float64) score {
	repl := map[int][]complex128{}
	freed := map[int64]int{}
	parts := s.c.PartCount
	for si := range s.c.Sections {
		sec := &s.c.Sections[si]
		t := sec.Target.Topology
		vals := sec.Values()
		changed := false
		for _, p := range t.Indices(synth.Resistor) {
			ideal := exact[si][p]
			comp := sec.Components[p]
			// Closer than the part there now, or a single part where a
			// pair is now within pairAccuracy of the exact value.
			closer := math.Abs(math.Log(v/ideal)) < math.Abs(math.Log(vals[p]/ideal))
			if closer || (len(comp.Parts) > 1 && math.Abs(math.Log(v/ideal)) < pairAccuracy) {
				vals[p] = v
				changed = true
				parts -= len(comp.Parts) - 1
				for _, part := range comp.Parts {
					freed[part.StockID]++
				}
			}
		}
		if changed {
			repl[si] = s.sectionResponse(t, vals)
		}
	}
	if len(repl) == 0 {
		return score{meets: true, err: math.Inf(1)}
	}
	unique := s.c.UniqueParts + 1
	for _, u := range s.c.StockUse {
		if freed[u.StockID] == u.PerBoard {
			unique--
		}
	}
	return score{meets: true, err: s.errWith(repl), parts: parts, unique: unique}
}

// nearestSolution picks the solved element vector whose resistors are
// closest (log distance) to the current ones.
func nearestSolution(sols [][]float64, cur []float64, t *synth.Topology) []float64 {
	best, bestD := sols[0], math.Inf(1)
	for _, sol := range sols {
		d := 0.0
		for _, r := range t.Indices(synth.Resistor) {
			d += math.Abs(math.Log(sol[r] / cur[r]))
		}
		if d < bestD {
			best, bestD = sol, d
		}
	}
	return append([]float64(nil), best...)
}

// nearestValue returns the value of vs (ascending) closest to v on a log
// scale, or v when vs is empty.
func nearestValue(vs []float64, v float64) float64 {
	i := sort.SearchFloat64s(vs, v)
	best, bestD := v, math.Inf(1)
	for _, j := range []int{i - 1, i} {
		if j >= 0 && j < len(vs) {
			if d := math.Abs(math.Log(vs[j] / v)); d < bestD {
				best, bestD = vs[j], d
			}
		}
	}
	return best
}

// realisable returns the resistor values the fit can make from the
// usable values: each alone and, with pairs on, every pair in series and
// in parallel, within the range; ascending.
func realisable(vals []float64, o optimize.Options) []float64 {
	out := append([]float64(nil), vals...)
	if o.Combine >= 2 {
		for i, a := range vals {
			for _, b := range vals[i:] {
				for _, v := range []float64{a + b, a * b / (a + b)} {
					if v >= o.RMin && v <= o.RMax {
						out = append(out, v)
					}
				}
			}
		}
	}
	sort.Float64s(out)
	return out
}

// needed returns the exact values the candidate's sections ask for: the
// resistors solved for its capacitors, and its capacitor values (the fit
// chooses capacitors freely, so their neighbours in the series are what
// is near). exact holds every section's element vector with the solved
// resistors.
func needed(c *optimize.Candidate) (res, caps []float64, exact [][]float64) {
	for si := range c.Sections {
		sec := &c.Sections[si]
		t := sec.Target.Topology
		vals := sec.Values()
		sol := vals
		if sols, ok := t.Solve(vals, sec.Target.Den); ok && len(sols) > 0 {
			sol = nearestSolution(sols, vals, t)
		}
		exact = append(exact, sol)
		for _, r := range t.Indices(synth.Resistor) {
			res = append(res, sol[r])
		}
		for _, ci := range t.Indices(synth.Capacitor) {
			caps = append(caps, vals[ci])
		}
	}
	return res, caps, exact
}
