package tolerance

import (
	"fmt"
	"math"
	"sort"

	"drawerfit/synth"
)

// Blame is one component's share of the failing trials.
type Blame struct {
	Ref     string `json:"ref"`
	Symbol  string `json:"symbol"`
	Section int    `json:"section"` // 1-based, cascade order
	// Share is the fraction of the failing trials attributed to the
	// component (see the package documentation for the method); the shares
	// of all components and Result.Unattributed add up to 1.
	Share float64 `json:"share"`
	// Tolerance is the component's effective tolerance (fraction).
	Tolerance float64 `json:"tolerance"`
}

// blamer attributes failing trials to components by resetting each
// component, alone, to its nominal value.
type blamer struct {
	b       *board
	j       *judge
	opt     *Options
	scratch []float64
	nominal []float64
}

func newBlamer(b *board, j *judge, opt *Options) *blamer {
	return &blamer{b: b, j: j, opt: opt, scratch: make([]float64, len(b.parts)), nominal: b.nominalParts()}
}

// violation is how far a trial lies outside the acceptance window (dB; > 0
// fails).
func (bl *blamer) violation(pe, se float64) float64 {
	return math.Max(pe-bl.opt.PassMargin, se-bl.opt.StopMargin)
}

// assign returns the weights of a failing trial (the board loaded in ws from
// parts): one in total, split equally among the components whose reset to
// nominal alone makes the trial pass; if there are none, split in
// proportion to how much each reset reduces the violation; all zero when no
// single reset helps. ws is left as it was.
func (bl *blamer) assign(ws *workspace, parts []float64, pe, se float64) []float64 {
	v0 := bl.violation(pe, se)
	w := make([]float64, len(bl.b.comps))
	copy(bl.scratch, parts)
	decisive := 0
	for ci := range bl.b.comps {
		c := &bl.b.comps[ci]
		copy(bl.scratch[c.lo:c.hi], bl.nominal[c.lo:c.hi])
		ws.loadSection(c.section, bl.scratch)
		m := bl.j.measure(ws, false)
		v := bl.violation(bl.j.passExcess(m), bl.j.stopExcess(m))
		copy(bl.scratch[c.lo:c.hi], parts[c.lo:c.hi])
		ws.loadSection(c.section, parts)
		if v <= judgeSlack {
			// Mark decisive components with -1 until counted.
			w[ci] = -1
			decisive++
		} else if r := v0 - v; r > 0 {
			w[ci] = r
		}
	}
	if decisive > 0 {
		for ci := range w {
			if w[ci] < 0 {
				w[ci] = 1 / float64(decisive)
			} else {
				w[ci] = 0
			}
		}
		return w
	}
	var sum float64
	for _, x := range w {
		sum += x
	}
	if sum > 0 {
		for ci := range w {
			w[ci] /= sum
		}
	}
	return w
}

// blameTable sums the weights of the failing trials into shares, largest
// first, and returns the unattributed rest.
func blameTable(b *board, ts *trialSet) ([]Blame, float64) {
	fails, sums := ts.blameFails, ts.blameSum
	if fails == 0 {
		return nil, 0
	}
	var out []Blame
	total := 0.0
	for ci, s := range sums {
		if s <= 0 {
			continue
		}
		c := &b.comps[ci]
		sh := s / float64(fails)
		total += sh
		out = append(out, Blame{Ref: c.ref, Symbol: c.symbol, Section: c.section + 1, Share: sh, Tolerance: compTolerance(b, ci)})
	}
	sort.SliceStable(out, func(a, c int) bool { return out[a].Share > out[c].Share })
	return out, math.Max(0, 1-total)
}

// compTolerance is the effective tolerance of component ci: the parts'
// tolerances weighted by their share of the value (docs/check-values.md, "Real parts").
func compTolerance(b *board, ci int) float64 {
	c := &b.comps[ci]
	if c.hi-c.lo == 1 {
		return b.parts[c.lo].tol
	}
	add := (c.arr == synth.Series) == (c.kind == synth.Resistor)
	var t float64
	for _, p := range b.parts[c.lo:c.hi] {
		sh := p.nominal / c.nominal
		if !add {
			sh = c.nominal / p.nominal
		}
		t += p.tol * sh
	}
	return t
}

// toleranceSteps are the standard tolerances of IEC 60062 (letters K, J, G,
// F, D, C, B) tried, tightest last, when advising a better part.
var toleranceSteps = []float64{0.10, 0.05, 0.02, 0.01, 0.005, 0.0025, 0.001}

// Remedy is a computed effect of tightening one component's tolerance.
type Remedy struct {
	Ref     string  `json:"ref"`
	Section int     `json:"section"`
	From    float64 `json:"from_tolerance"`
	To      float64 `json:"to_tolerance"`
	Yield   float64 `json:"fraction"`
	CILow   float64 `json:"ci_low"`
	CIHigh  float64 `json:"ci_high"`
	// Reaches says whether the target yield is reached.
	Reaches bool `json:"reaches_target"`
}

// remedies re-runs the Monte Carlo (same seed, so common random numbers)
// with the most blamed components' parts tightened step by step through the
// standard tolerances until the target yield is reached, and reports the
// first step that reaches it (or the tightest tried).
func remedies(b *board, j *judge, opt *Options, blame []Blame, baseTol []float64) []Remedy {
	var out []Remedy
	for _, bl := range blame {
		if len(out) == 2 || bl.Share < 0.1 {
			// The two largest shares, and only shares that matter (10 % of
			// the failures): enough to say what to change.
			break
		}
		ci := -1
		for k := range b.comps {
			if b.comps[k].ref == bl.Ref && b.comps[k].section+1 == bl.Section {
				ci = k
			}
		}
		if ci < 0 {
			continue
		}
		c := &b.comps[ci]
		var best *Remedy
		for _, step := range toleranceSteps {
			if step >= bl.Tolerance*(1-1e-9) {
				continue
			}
			tol := append([]float64(nil), baseTol...)
			for k := c.lo; k < c.hi; k++ {
				tol[k] = math.Min(tol[k], step)
			}
			ts := simulate(b, j, tol, opt, false, false)
			k := ts.passed()
			lo, hi := Wilson(k, opt.Trials, z95)
			r := Remedy{Ref: bl.Ref, Section: bl.Section, From: bl.Tolerance, To: step,
				Yield: float64(k) / float64(opt.Trials), CILow: lo, CIHigh: hi,
				Reaches: float64(k) >= opt.TargetYield*float64(opt.Trials)-1e-9}
			best = &r
			if r.Reaches {
				break
			}
		}
		if best != nil {
			out = append(out, *best)
		}
	}
	return out
}

// pct formats a fraction as a percentage.
func pct(x float64) string { return Percent(x) }

// Percent writes a fraction in [0, 1] as a percentage with one decimal. A
// fraction just short of 1 is written 99.9%, never rounded up to 100.0%;
// one within 1e-9 of 1 (the Wilson bound of an all-pass run, less its
// rounding error) is 100.0%.
func Percent(x float64) string {
	if x > 1-1e-9 {
		x = 1
	}
	s := fmt.Sprintf("%.1f", 100*x)
	if s == "100.0" && x < 1 {
		s = "99.9"
	}
	return s + "%"
}

// tolString formats a tolerance fraction: 0.02 -> "2%", 0.0025 -> "0.25%".
func tolString(t float64) string {
	return fmt.Sprintf("%.4g%%", 100*t)
}
