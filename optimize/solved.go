package optimize

import (
	"math"
	"slices"
	"sort"

	"drawerfit/synth"
)

// searchMethod names how a topology's section is searched: by one of the
// hand-written searches that walk the (ln w0, ln Q) boxes, or generically
// from the topology's description (its chosen elements and closed-form
// solver). It is "" for a topology the fit cannot search.
func searchMethod(t *synth.Topology) string {
	switch t {
	case synth.FirstOrderLowPass(), synth.FirstOrderHighPass(), synth.SallenKeyLowPass(), synth.SallenKeyHighPass():
		return "boxes"
	case synth.ThreePoleLowPass(), synth.ThreePoleHighPass():
		return "three-pole"
	}
	if len(t.Chosen()) > 0 && len(t.Solved()) > 0 {
		return "solved"
	}
	return ""
}

// solvedSmall is the largest number of realisable values of a kind for
// which the generic search tries every value in every position of that
// kind (an exhaustive search); above it, the neighbours of the solution.
const solvedSmall = threePoleFull

// dividerRatios is how many distinct gain-divider pairs from stock the
// generic search tries per section (those whose gain is nearest the
// target's, from either side).
const dividerRatios = 4

// searchSolved searches a section from its topology's description alone:
// every assignment of the chosen elements (capacitors: single parts, or
// every realisation when the stock has at most solvedSmall; a divider's
// resistor: the dividerRatios stock pairs nearest the section's gain), the
// other elements computed exactly by the closed form for that assignment
// and gain, then the realisable values nearest each computed value, or
// every value when the stock is small. With small stocks the search is
// exhaustive; otherwise it is exact only in the chosen elements.
func (w *worker) searchSolved(part, of int) {
	s := w.s
	t := s.t
	topo := t.topo
	n := topo.NumElements()
	chosen := topo.Chosen()
	solved := topo.Solved()
	den := t.sec.Den
	gain := t.sec.Gain
	if gain == 0 {
		gain = 1
	}
	// A divider: one gain element chosen, its partner solved.
	divC, divP := -1, -1
	if ge := topo.GainElements(); len(ge) == 2 {
		switch {
		case slices.Contains(chosen, ge[1]) && !slices.Contains(chosen, ge[0]):
			divC, divP = ge[1], ge[0]
		case slices.Contains(chosen, ge[0]) && !slices.Contains(chosen, ge[1]):
			divC, divP = ge[0], ge[1]
		}
	}
	smallR := len(s.res.vals) <= solvedSmall
	smallC := len(s.cap.vals) <= solvedSmall
	// Candidate values per chosen position.
	options := make([][]int32, len(chosen))
	for k, i := range chosen {
		set := s.res
		if topo.Element(i).Kind == synth.Capacitor {
			set = s.cap
		}
		small := smallR
		if set == s.cap {
			small = smallC
		}
		switch {
		case i == divC && !small:
			options[k] = w.dividerChoices(divC, divP, gain)
		case small:
			for g := range set.reals {
				options[k] = append(options[k], int32(g))
			}
		default:
			options[k] = append(options[k], set.sub[1].global...)
		}
	}
	// Enumerate the chosen assignments (mixed radix), split over workers
	// by the first position.
	idx := make([]int, len(chosen))
	if len(options) == 0 || len(options[0]) == 0 {
		return
	}
	for first := part; first < len(options[0]); first += of {
		idx[0] = first
		for k := 1; k < len(idx); k++ {
			idx[k] = 0
		}
		for {
			if w.halted() {
				return
			}
			w.diag.capSets++
			for k, i := range chosen {
				g := options[k][idx[k]]
				w.r[i] = g
				w.v[i] = w.valueOf(i, g)
			}
			w.solveAndOffer(n, solved, den, gain, divC, divP, smallR, smallC)
			// Next assignment of positions 1..; position 0 is this worker's.
			k := len(idx) - 1
			for k >= 1 {
				idx[k]++
				if idx[k] < len(options[k]) {
					break
				}
				idx[k] = 0
				k--
			}
			if k < 1 {
				break
			}
		}
	}
}

// valueOf returns the value of realisation g for element i.
func (w *worker) valueOf(i int, g int32) float64 {
	if w.s.t.topo.Element(i).Kind == synth.Capacitor {
		return w.s.cap.vals[g]
	}
	return w.s.res.vals[g]
}

// dividerChoices returns realisations for the divider's chosen resistor
// divC: for every single-part value, the stock value nearest its partner's
// exact value gives a gain; the dividerRatios values whose gains come
// nearest the target (distinct gains) are kept.
func (w *worker) dividerChoices(divC, divP int, gain float64) []int32 {
	s := w.s
	topo := s.t.topo
	single := s.res.sub[1]
	type choice struct {
		g   int32
		err float64
	}
	var cs []choice
	v := make([]float64, topo.NumElements())
	for i := range v {
		v[i] = 1
	}
	for _, g := range single.global {
		rc := s.res.vals[g]
		// The partner's exact value: the ratio the gain needs.
		v[divC] = rc
		v[divP] = 1
		g1 := math.Abs(topo.PassbandGain(v))
		v[divP] = 2
		g2 := math.Abs(topo.PassbandGain(v))
		// The gain is affine in the partner's value for a divider.
		slope := g2 - g1
		if slope == 0 {
			continue
		}
		want := 1 + (gain-g1)/slope
		at := sort.SearchFloat64s(s.res.vals, want)
		for _, j := range []int{at - 1, at} {
			if j < 0 || j >= len(s.res.vals) {
				continue
			}
			v[divP] = s.res.vals[j]
			got := math.Abs(topo.PassbandGain(v))
			cs = append(cs, choice{g, math.Abs(math.Log(got / gain))})
		}
	}
	sort.Slice(cs, func(a, b int) bool {
		if cs[a].err != cs[b].err {
			return cs[a].err < cs[b].err
		}
		return cs[a].g < cs[b].g
	})
	var out []int32
	var errs []float64
	for _, c := range cs {
		if len(out) == dividerRatios {
			break
		}
		if slices.Contains(out, c.g) || slices.ContainsFunc(errs, func(e float64) bool { return math.Abs(e-c.err) < 1e-12 }) {
			continue
		}
		out = append(out, c.g)
		errs = append(errs, c.err)
	}
	return out
}

// solveAndOffer solves the topology for the chosen values in w.v and offers
// the realisable values around each solution.
func (w *worker) solveAndOffer(n int, solved []int, den synth.Poly, gain float64, divC, divP int, smallR, smallC bool) {
	s := w.s
	topo := s.t.topo
	if w.allSmall(solved, smallR, smallC) {
		// Every value in every solved position: no solution is needed,
		// and assignments near a solution that does not exist are kept.
		w.diag.ratioOK++
		w.offerAround(nil, solved, -1, smallR, smallC)
		return
	}
	var partners []int32
	if divC >= 0 {
		// Fix the divider's partner to the stock values around its exact
		// value first, then solve the rest for the gain that pair gives.
		sols := topo.SolveGainExactAppend(w.v[:n], den, gain, w.sols[:0])
		w.sols = sols
		if len(sols) == 0 {
			return
		}
		if smallR {
			for g := range s.res.reals {
				partners = append(partners, int32(g))
			}
		} else {
			lo, hi := w.window(s.res, sols[0][divP])
			for g := lo; g < hi; g++ {
				partners = append(partners, int32(g))
			}
		}
	}
	try := func(g float64) {
		sols := topo.SolveGainExactAppend(w.v[:n], den, g, w.sols[:0])
		w.sols = sols
		if len(sols) == 0 {
			return
		}
		w.diag.ratioOK++
		for _, sol := range sols {
			w.offerAround(sol, solved, divP, smallR, smallC)
		}
	}
	if divC < 0 {
		try(gain)
		return
	}
	for _, g := range partners {
		w.v[divP], w.r[divP] = s.res.vals[g], g
		// The gain this pair gives, from the description.
		got := math.Abs(topo.PassbandGain(w.probeVector(n)))
		if !topo.CanGain(got) {
			continue
		}
		try(got)
	}
}

// allSmall reports whether every solved position's kind has a small stock
// (so that the search tries all its values).
func (w *worker) allSmall(solved []int, smallR, smallC bool) bool {
	for _, i := range solved {
		if w.s.t.topo.Element(i).Kind == synth.Capacitor && !smallC || w.s.t.topo.Element(i).Kind == synth.Resistor && !smallR {
			return false
		}
	}
	return true
}

// probeVector returns w.v with every zero entry set to 1, so that the
// passband gain (which depends only on the gain elements) can be read
// before the other elements are known.
func (w *worker) probeVector(n int) []float64 {
	v := make([]float64, n)
	for i := 0; i < n; i++ {
		v[i] = w.v[i]
		if !(v[i] > 0) {
			v[i] = 1
		}
	}
	return v
}

// window returns the index range of the realisable values nearest v.
func (w *worker) window(set *valueSet, v float64) (int, int) {
	at := sort.SearchFloat64s(set.vals, v)
	win := threePoleWindow
	if len(set.vals) >= threePoleDense {
		win = 1
	}
	return max(0, at-win), min(len(set.vals), at+win)
}

// offerAround offers every combination of realisable values near the
// solved values of sol (every value of a kind when the stock is small),
// keeping the divider partner fixed.
func (w *worker) offerAround(sol []float64, solved []int, divP int, smallR, smallC bool) {
	s := w.s
	topo := s.t.topo
	var pos []int
	var lo, hi []int
	for _, i := range solved {
		if i == divP {
			continue
		}
		set, small := s.res, smallR
		if topo.Element(i).Kind == synth.Capacitor {
			set, small = s.cap, smallC
		}
		a, b := 0, len(set.vals)
		if !small && sol != nil {
			if sol[i] < s.rmin || sol[i] > s.rmax {
				if set == s.res {
					return
				}
			}
			a, b = w.window(set, sol[i])
		}
		if a >= b {
			return
		}
		pos, lo, hi = append(pos, i), append(lo, a), append(hi, b)
	}
	w.diag.inRange++
	cur := append([]int(nil), lo...)
	for {
		for k, i := range pos {
			g := int32(cur[k])
			w.r[i] = g
			w.v[i] = w.valueOf(i, g)
		}
		w.offer()
		k := len(cur) - 1
		for k >= 0 {
			cur[k]++
			if cur[k] < hi[k] {
				break
			}
			cur[k] = lo[k]
			k--
		}
		if k < 0 {
			return
		}
	}
}
