package tolerance

import (
	"fmt"
	"math"

	"drawerfit/optimize"
	"drawerfit/synth"
)

// noSlack says why moving the edge is not possible; it is advice, not a
// failure.
type noSlack string

func (n noSlack) Error() string { return string(n) }

// refit moves the design's edge inside the specification so that its
// nominal passband and stopband margins are equal, fits it again through
// opt.Refit and analyses the new candidate against the original spec.
//
// Butterworth and Bessel keep their shape when the edge moves, so the new
// edge comes from the candidate's own response scaled in frequency: the
// scale k where Ap - A(fp/k) = A(fs/k) - As (low-pass; a high-pass mirrors
// it). A Chebyshev response keeps its ripple wherever its edge is, so it
// gets a smaller ripple r instead, chosen from the closed form
// A(f) = 10 log10(1 + ε² T_n²(f/fp)), ε² = 10^(r/10) - 1, so that
// Ap - r = A(fs) - As (measured from the DC gain, the ripple minimum, for
// an even order).
func refit(b *board, c *optimize.Candidate, spec synth.Spec, opt Options) (*Refit, error) {
	if !(spec.Stop > 0) {
		return nil, noSlack("there is no stopband to take margin from")
	}
	nspec := spec
	nspec.Order = c.Design.Order
	nspec.Odd = c.Design.Odd
	rf := &Refit{}
	if spec.Approx == synth.Chebyshev {
		n := float64(c.Design.Order)
		xs := spec.Stop / spec.Pass
		if spec.Kind == synth.HighPass {
			xs = spec.Pass / spec.Stop
		}
		t := math.Cosh(n * math.Acosh(xs))
		stopAt := func(r float64) float64 {
			a := 10 * math.Log10(1+(math.Pow(10, r/10)-1)*t*t)
			if c.Design.Order%2 == 0 {
				a -= r
			}
			return a
		}
		bal := func(r float64) float64 { return (spec.PassAtten - r) - (stopAt(r) - spec.StopAtten) }
		if bal(spec.PassAtten) >= 0 {
			return nil, noSlack(fmt.Sprintf("order %d has no stopband slack to trade for passband margin; one order more would have", c.Design.Order))
		}
		lo, hi := spec.PassAtten*1e-6, spec.PassAtten
		if bal(lo) <= 0 {
			return nil, noSlack(fmt.Sprintf("order %d cannot balance its margins", c.Design.Order))
		}
		for it := 0; it < 100; it++ {
			m := 0.5 * (lo + hi)
			if bal(m) > 0 {
				lo = m
			} else {
				hi = m
			}
		}
		r := 0.5 * (lo + hi)
		nspec.Ripple, nspec.PassAtten = r, r
		rf.Ripple = r
		rf.Margin = spec.PassAtten - r
		rf.Pass = spec.Pass
	} else {
		ws := b.newWorkspace()
		ws.load(b.nominalParts())
		order := c.Design.Order
		// Margins of the nominal response moved by the factor k (k > 1 moves
		// the edge into the stopband's direction... for a low-pass upwards).
		margins := func(k float64) (pm, sm float64) {
			s := spec
			if s.Kind == synth.LowPass {
				s.Pass, s.Stop = spec.Pass/k, spec.Stop/k
			} else {
				s.Pass, s.Stop = spec.Pass*k, spec.Stop*k
			}
			jj := newJudge(s, nil, order)
			m := jj.measure(ws, false)
			return spec.PassAtten - m.passAtt, m.stopAtt - spec.StopAtten
		}
		pm, sm := margins(1)
		if sm <= pm {
			return nil, noSlack(fmt.Sprintf("order %d has no stopband slack to trade for passband margin; one order more would have", order))
		}
		lo, hi := 0.0, math.Log(spec.Stop/spec.Pass)
		if spec.Kind == synth.HighPass {
			hi = math.Log(spec.Pass / spec.Stop)
		}
		for it := 0; it < 100; it++ {
			m := 0.5 * (lo + hi)
			pm, sm := margins(math.Exp(m))
			if pm < sm {
				lo = m
			} else {
				hi = m
			}
		}
		k := math.Exp(0.5 * (lo + hi))
		pm, _ = margins(k)
		rf.Margin = pm
		if spec.Kind == synth.LowPass {
			nspec.Pass = spec.Pass * k
		} else {
			nspec.Pass = spec.Pass / k
		}
		rf.Pass = nspec.Pass
	}
	rf.Spec = nspec
	nc, err := opt.Refit(nspec)
	if err != nil {
		return nil, err
	}
	sub := opt
	sub.Brief, sub.Refit = true, nil
	res, err := Run(opt.ctx, nc, spec, sub)
	if err != nil {
		return nil, err
	}
	rf.Candidate = nc
	rf.Yield, rf.CILow, rf.CIHigh = res.Yield, res.CILow, res.CIHigh
	return rf, nil
}
