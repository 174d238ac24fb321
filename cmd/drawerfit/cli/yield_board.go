package cli

import (
	"context"
	"fmt"
	"strconv"
	"strings"

	"drawerfit/optimize"
	"drawerfit/synth"
	"drawerfit/tolerance"
)

// boardSource is a designSource that can also list the filters of a board
// design (saved from a plan), for the yield of the whole board.
type boardSource interface {
	// BoardFilters returns the filters of design id when it is a board of
	// several filters, and nil when it is a single filter.
	BoardFilters(ctx context.Context, id string) ([]boardFilter, error)
}

type boardFilter struct {
	Label     string
	Candidate *optimize.Candidate
	Spec      synth.Spec
}

// BoardFilters implements boardSource over the saved designs.
func (s *savedDesigns) BoardFilters(ctx context.Context, id string) ([]boardFilter, error) {
	if strings.Contains(id, "/") {
		return nil, nil
	}
	d, err := s.db.Design(ctx, strings.TrimSpace(id))
	if err != nil {
		return nil, err
	}
	if len(d.Filters) < 2 {
		return nil, nil
	}
	var out []boardFilter
	for _, f := range d.Filters {
		out = append(out, boardFilter{Label: f.Label, Candidate: f.Candidate, Spec: f.Spec})
	}
	return out, nil
}

type boardFilterYield struct {
	Filter int     `json:"filter"`
	Label  string  `json:"label"`
	Yield  float64 `json:"fraction"`
	CILow  float64 `json:"ci_low"`
	CIHigh float64 `json:"ci_high"`
	Trials int     `json:"trials"`
	Seed   uint64  `json:"seed"`
	// Blame is the filter's own blame list.
	Blame []tolerance.Blame `json:"blame"`
}

type boardYield struct {
	Design  string             `json:"design"`
	Yield   float64            `json:"fraction"`
	CILow   float64            `json:"ci_low"`
	CIHigh  float64            `json:"ci_high"`
	Method  string             `json:"method"`
	Filters []boardFilterYield `json:"filters"`
	Boards  *tolerance.Boards  `json:"forecast"`
	Caution string             `json:"caution"`
}

// boardYieldMethod says how the board figure is formed.
const boardYieldMethod = "a board passes when every filter passes; the filters' parts are drawn independently, so the board yield is the product of the filter yields, and the interval is formed from the filters' interval bounds (conservative)"

// runBoardYield estimates the yield of every filter of a board and of the
// board as a whole.
func runBoardYield(env *Env, o *yieldOptions, id string, filters []boardFilter) error {
	topt, err := o.tolOptions()
	if err != nil {
		return err
	}
	topt.Brief, topt.Boards = true, 0
	rep := &boardYield{Design: id, Yield: 1, CILow: 1, CIHigh: 1, Method: boardYieldMethod, Caution: tolerance.Caution}
	for i, f := range filters {
		r, err := tolerance.Run(env.Ctx, f.Candidate, f.Spec, topt)
		if err != nil {
			return fmt.Errorf("filter %d (%s): %w", i+1, f.Label, err)
		}
		rep.Filters = append(rep.Filters, boardFilterYield{Filter: i + 1, Label: f.Label, Yield: r.Yield,
			CILow: r.CILow, CIHigh: r.CIHigh, Trials: r.Trials, Seed: r.Seed, Blame: r.Blame})
		rep.Yield *= r.Yield
		rep.CILow *= r.CILow
		rep.CIHigh *= r.CIHigh
	}
	if o.boards > 0 {
		trials := rep.Filters[0].Trials
		b, err := tolerance.ForecastBoards(int(rep.Yield*float64(trials)+0.5), trials, o.boards)
		if err != nil {
			return err
		}
		rep.Boards = &b
	}
	if o.json {
		return writeJSON(env.Out, rep)
	}
	w := env.Out
	fmt.Fprintf(w, "design %s (a board of %d filters): %s of boards pass (interval %s to %s)\n",
		id, len(filters), yieldPct(rep.Yield), yieldPct(rep.CILow), yieldPct(rep.CIHigh))
	fmt.Fprintf(w, "%s\n", boardYieldMethod)
	if rep.Boards != nil {
		fmt.Fprintf(w, "of %s built, expect about %.0f to pass (95%% range %d to %d)\n", plural(o.boards, "board"), rep.Boards.Expected, rep.Boards.Low, rep.Boards.High)
	}
	fmt.Fprintln(w)
	g := newGrid("filter", "label", "yield", "95% interval", "most failures from")
	g.right(0, 2).wrap(10, 1).wrap(20, 4).optional(dropFirst, 3)
	for _, f := range rep.Filters {
		top := "-"
		if len(f.Blame) > 0 {
			top = fmt.Sprintf("%s %s", f.Blame[0].Ref, yieldPct(f.Blame[0].Share))
		}
		g.add(strconv.Itoa(f.Filter), f.Label, yieldPct(f.Yield), yieldPct(f.CILow)+" to "+yieldPct(f.CIHigh), top)
	}
	g.render(env, w)
	fmt.Fprintf(w, "\nFor one filter in full (corners, advice, op-amp): drawerfit yield %s/N\n", id)
	fmt.Fprintln(w, "\n"+tolerance.Caution)
	return nil
}
