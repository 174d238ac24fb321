package optimize

// MarkPareto sets every candidate's Pareto mark within cs: true when no
// other candidate of cs is at least as good in response error, part count
// and unique parts and better in one. A layer that re-orders or re-selects
// the search's candidates (the ranking by yield) calls it on its list.
func MarkPareto(cs []*Candidate) { markPareto(cs) }
