package production

import (
	"drawerfit/optimize"
)

// score is what a ranking compares: a filter or a whole board.
type score struct {
	meets  bool
	err    float64 // dB; the worst filter's for a board
	parts  int
	unique int
}

// errEpsilon is the response-error difference (dB) below which two
// results count as equally good: far below anything a bench measurement
// resolves (common practice, no source).
const errEpsilon = 1e-6

// ranker orders scores as optimize orders a fit's candidates, so that a
// board list reads like a fit's list: passing before failing; then, for
// RankBalanced, results within the good-enough error first (fewest parts,
// fewest unique parts, lowest error) and the rest by error; the other
// rankings sort by their one objective with the others as tie-breaks.
type ranker struct {
	rank       optimize.Rank
	goodEnough float64
}

// cmp returns -1 when a ranks before b, +1 after, 0 for a tie.
func (r ranker) cmp(a, b score) int {
	if a.meets != b.meets {
		if a.meets {
			return -1
		}
		return 1
	}
	errCmp := func() int {
		switch {
		case a.err < b.err-errEpsilon:
			return -1
		case a.err > b.err+errEpsilon:
			return 1
		}
		return 0
	}
	intCmp := func(x, y int) int {
		switch {
		case x < y:
			return -1
		case x > y:
			return 1
		}
		return 0
	}
	chain := func(cs ...func() int) int {
		for _, c := range cs {
			if v := c(); v != 0 {
				return v
			}
		}
		return 0
	}
	parts := func() int { return intCmp(a.parts, b.parts) }
	unique := func() int { return intCmp(a.unique, b.unique) }
	switch r.rank {
	case optimize.RankError:
		return chain(errCmp, parts, unique)
	case optimize.RankParts:
		return chain(parts, unique, errCmp)
	case optimize.RankUnique:
		return chain(unique, parts, errCmp)
	}
	ga, gb := a.err <= r.goodEnough, b.err <= r.goodEnough
	if ga != gb {
		if ga {
			return -1
		}
		return 1
	}
	if ga {
		return chain(parts, unique, errCmp)
	}
	return chain(errCmp, parts, unique)
}

// dominates reports whether a is at least as good as b in error, parts
// and unique parts and better in one (the Pareto relation).
func dominates(a, b score) bool {
	if a.err > b.err+errEpsilon || a.parts > b.parts || a.unique > b.unique {
		return false
	}
	return a.err < b.err-errEpsilon || a.parts < b.parts || a.unique < b.unique
}
