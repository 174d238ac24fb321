package tolerance

import (
	"context"
	"strings"

	"drawerfit/fault"
	"drawerfit/stock"

	"drawerfit/optimize"
	"drawerfit/synth"
)

// noSlack says why moving the edge is not possible; it is advice, not a
// failure.
type noSlack string

func (n noSlack) Error() string { return string(n) }

// refit fits the same order and arrangement again with the target placed
// inside the specification (synth.PlaceInside, the placement a fit uses by
// default) through opt.Refit, and analyses the new candidate against the
// original spec. It is advice for a design placed on the edge (saved
// before, or fitted with the classical placement).
func refit(c *optimize.Candidate, spec synth.Spec, opt Options) (*Refit, error) {
	if c.Design.Placing.Used == synth.PlaceInside {
		return nil, noSlack("its target is already placed inside the specification")
	}
	nspec := spec
	nspec.Order, nspec.Odd, nspec.Placement = c.Design.Order, c.Design.Odd, synth.PlaceInside
	d, err := synth.NewDesign(nspec, nspec.Order, nspec.Odd)
	if err != nil {
		return nil, err
	}
	p := d.Placing
	if p.Used != synth.PlaceInside {
		return nil, noSlack(strings.TrimPrefix(p.Why, "target on the edge (classical placement): "))
	}
	rf := &Refit{Spec: nspec, Pass: p.Edge, PassMargin: p.PassMargin, StopMargin: p.StopMargin}
	if spec.Approx == synth.Chebyshev {
		rf.Ripple = p.Ripple
	}
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

// Refitter returns the RefitFunc of a design c fitted from items with fo:
// the default fit (FitByYield with ro) of the modified specification at
// c's order and odd arrangement, whose best listed candidate of c's
// arrangement it returns. It stops with ctx.
func Refitter(ctx context.Context, items []stock.Item, fo optimize.Options, ro RankOptions, c *optimize.Candidate) RefitFunc {
	return func(spec synth.Spec) (*optimize.Candidate, error) {
		o := fo
		odd := c.Design.Odd
		spec.Order, spec.Odd = c.Design.Order, odd
		// The order is fixed by the specification, so no order range.
		o.Odd, o.MaxOrder, o.Top, o.Progress, o.ShowFailing = &odd, 0, 3, nil, false
		res, _, err := FitByYield(ctx, items, spec, o, ro)
		if err != nil {
			return nil, err
		}
		for _, nc := range res.Candidates {
			if nc.Arrangement() == c.Arrangement() && nc.MeetsSpec {
				return nc, nil
			}
		}
		return nil, fault.Infeasiblef("the stock has no order-%d %s design with the target placed inside the specification", c.Design.Order, c.Arrangement())
	}
}
