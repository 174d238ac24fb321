package optimize

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sort"
	"strings"
	"sync/atomic"

	"drawerfit/fault"
	"drawerfit/stock"
	"drawerfit/synth"
)

// Options controls a fit. The zero value is not usable; start from
// DefaultOptions.
type Options struct {
	Combine    int     // 1: single parts only; 2: also pairs in series or parallel
	Boards     int     // every row used must cover this many boards
	MaxOrder   int     // highest order tried; 0 means the minimum order + 1
	Rank       Rank    // ordering of the list
	Top        int     // how many candidates to list
	GoodEnough float64 // dB; the balanced ranking's error threshold
	RMin, RMax float64 // ohms: the range of every resistor and combination
	CMin, CMax float64 // farads: the range of every capacitor and combination
	// AllowDielectric widens the capacitor dielectrics beyond C0G/NP0 and
	// film (names as in stock.NormalizeDielectric).
	AllowDielectric []string
	ShowFailing     bool // also list candidates that miss the specification
	// MinVoltage, when > 0, is the working voltage in volts: capacitor rows
	// rated below it are never used. Unrated rows are used (the result's
	// notes count them) unless RequireRating is set.
	MinVoltage    float64
	RequireRating bool
	// Odd restricts odd orders to one arrangement; nil tries both.
	Odd *synth.Odd
	// Shortlist is how many candidates per part count each section keeps
	// for the cross-section search.
	Shortlist int
	// NodeBudget bounds the cross-section search per design (0: default).
	NodeBudget int
	// SectionBudget bounds the assignments scored per section search
	// (0: default), shared among the workers. A search that reaches it
	// stops, and the result says the list is not proven exact.
	SectionBudget int
	Workers       int                   // goroutines; 0 means GOMAXPROCS
	Progress      func(done, total int) // optional, called as sections finish (total: sections of all designs)
	// Amp is the amplifier every section is scored with (the single-pole
	// model); nil means ideal amplifiers. See amp.go and doc.go.
	Amp *synth.OpAmp
}

// DefaultOptions returns the documented defaults: pairs on, one board, the
// minimum order and one more, balanced ranking, ten candidates, 0.05 dB good
// enough, resistors 1 kΩ–1 MΩ and capacitors 100 pF–10 µF (common practice,
// no source; docs/check-values.md, "Practical rules").
func DefaultOptions() Options {
	return Options{Combine: 2, Boards: 1, Rank: RankBalanced, Top: 10, GoodEnough: 0.05,
		RMin: synth.PracticalLimits.RMin, RMax: synth.PracticalLimits.RMax,
		CMin: synth.PracticalLimits.CMin, CMax: synth.PracticalLimits.CMax, Shortlist: 10}
}

// Result is the outcome of a fit.
type Result struct {
	Spec       synth.Spec
	Candidates []*Candidate // best first
	// Closest is the best candidate that misses the specification when no
	// candidate meets it (nil otherwise or when nothing could be built).
	Closest *Candidate
	// Limits says what limited the search, in sentences, when nothing met
	// the specification.
	Limits []string
	// Notes are remarks on the search (truncation, restrictions).
	Notes []string
	// Designs are the ideal designs that were searched.
	Designs []*synth.Design
	// Proven is true when the first candidate is proven optimal by its
	// ranking key over every assignment of stock values (doc.go,
	// "Exactness"); Notes then say nothing is unproven.
	Proven bool
	// Resistors and Capacitors count the realisable values searched.
	Resistors, Capacitors int
}

// Fit searches the stock items for the best buildable designs of spec.
//
// The search stops soon after ctx is done (every long loop polls it) and
// then returns an error that wraps ctx.Err(); no partial result is
// returned.
//
// Errors: fault.Invalid for bad options or specification; fault.Infeasible
// when the stock cannot even be searched (no usable resistors or
// capacitors). A search that finds nothing meeting the specification is not
// an error: the Result has no candidates, a closest miss and the limits.
func Fit(ctx context.Context, items []stock.Item, spec synth.Spec, o Options) (*Result, error) {
	if err := ctx.Err(); err != nil {
		return nil, interrupted(ctx)
	}
	stop, release := watch(ctx)
	defer release()
	if err := checkOptions(&o); err != nil {
		return nil, err
	}
	wantOrder := spec.Order
	if err := spec.Normalize(); err != nil {
		return nil, err
	}
	if wantOrder > 0 && o.MaxOrder > 0 {
		return nil, fault.Invalidf("--max-order goes with an automatic order: drop --order %d or --max-order %d", wantOrder, o.MaxOrder)
	}
	for _, d := range o.AllowDielectric {
		if !stock.KnownDielectric(d) && !stockHasDielectric(items, d) {
			return nil, fault.Invalidf("--allow-dielectric: %q is neither a known dielectric (X7R, X5R, Y5V, electrolytic, tantalum, ...) nor one in the stock", d)
		}
	}
	orders, err := ordersFor(spec, wantOrder, o)
	if err != nil {
		return nil, err
	}
	type job struct {
		n    int
		odd  synth.Odd
		base int // the design the variant was made from
	}
	base := 0
	var skipped []error
	var jobs []job
	var designs []*synth.Design
	for _, n := range orders {
		odds := []synth.Odd{synth.OddOnePole}
		if n%2 == 1 && n >= 3 {
			odds = nil
			for _, odd := range []synth.Odd{synth.OddOnePole, synth.OddThreePole} {
				if o.Odd == nil || *o.Odd == odd {
					odds = append(odds, odd)
				}
			}
		}
		for _, odd := range odds {
			s := spec
			s.Order, s.Odd = n, odd
			d, err := synth.NewDesign(s, n, odd)
			if err != nil {
				// An arrangement that cannot carry the gain or keep the
				// polarity (no 2-pole section, an odd number of inverting
				// ones) is skipped while another can.
				if fault.KindOf(err) == fault.Infeasible && (spec.GainDB > 0 || spec.Polarity == synth.PolarityKeep) {
					skipped = append(skipped, err)
					continue
				}
				return nil, err
			}
			// Every assignment of circuits the specification allows (the
			// 2-pole sections as Sallen-Key or multiple-feedback under
			// auto); sections shared by several are searched once.
			base++
			for _, v := range d.Variants() {
				for i, sec := range v.Sections {
					if searchMethod(sec.Topology) == "" {
						return nil, fault.Invalidf("section %d: the fit has no search for the %s", i+1, sec.Topology.Name())
					}
				}
				jobs = append(jobs, job{n, odd, base})
				designs = append(designs, v)
			}
		}
	}
	if len(designs) == 0 && len(skipped) > 0 {
		return nil, skipped[0]
	}
	rows, why, short := usableRows(items, o)
	res, err := buildValues(rows, synth.Resistor, o.Combine, o.Boards, o.RMin, o.RMax)
	if err != nil {
		return nil, err
	}
	caps, err := buildValues(rows, synth.Capacitor, o.Combine, o.Boards, o.CMin, o.CMax)
	if err != nil {
		return nil, err
	}
	if len(res.vals) == 0 || len(caps.vals) == 0 {
		what := "resistors"
		if len(res.vals) > 0 {
			what = "capacitors"
		} else if len(caps.vals) == 0 {
			what = "resistors or capacitors"
		}
		if short > 0 {
			// Parts exist but not enough for the boards asked: a result
			// that says so (and that purchase suggestions can work from).
			return &Result{Spec: spec, Resistors: len(res.vals), Capacitors: len(caps.vals), Designs: designs,
				Limits: []string{fmt.Sprintf("quantity for %d boards: the stock has no usable %s%s", o.Boards, what, why)}}, nil
		}
		return nil, fault.Infeasiblef("the stock has no usable %s%s", what, why)
	}
	r := &Result{Spec: spec, Resistors: len(res.vals), Capacitors: len(caps.vals), Designs: designs}
	for _, e := range skipped {
		r.Notes = append(r.Notes, "not searched: "+e.Error())
	}
	totalSections, doneSections := 0, 0
	for _, d := range designs {
		totalSections += len(d.Sections)
	}
	progress := func() {
		doneSections++
		if o.Progress != nil {
			o.Progress(min(doneSections, totalSections), totalSections)
		}
	}
	grid := gridFor(spec)
	passIdx, stopIdx := indexOf(grid.f, spec.Pass), -1
	if spec.Stop > 0 {
		stopIdx = indexOf(grid.f, spec.Stop)
	}
	top := &topList{k: o.Top}
	searched := map[sectionKey]searchedSection{}
	var closest *combo
	var lists [][][]sectionCand
	var diags [][]sectionDiag
	f := &fitRun{grid: &grid, res: res, caps: caps, rows: rows, o: o, spec: spec, passIdx: passIdx, stopIdx: stopIdx,
		top: top, stop: stop, progress: progress, searched: searched}
	// Phase 1: every design from its sections' shortlists, which gives an
	// incumbent quickly.
	for ji, jb := range jobs {
		d := designs[ji]
		secLists, secDiag, cb := f.searchDesign(d, o.Shortlist, ji, jb.base)
		if stop.Load() {
			return nil, interrupted(ctx)
		}
		for si, sd := range secDiag {
			if sd.truncated {
				r.Notes = append(r.Notes, fmt.Sprintf("order %d (%s), section %d: the search stopped after scoring %d assignments; the list is not proven exact",
					jb.n, arrangementName(d), si+1, sd.evals))
			}
		}
		if cb.truncated {
			r.Notes = append(r.Notes, fmt.Sprintf("order %d (%s): the cross-section search stopped after %d combinations; the list is not proven exact",
				jb.n, arrangementName(d), cb.nodes))
		}
		if cb.closest != nil && (closest == nil || cb.closest.err < closest.err) {
			closest = cb.closest
		}
		lists = append(lists, secLists)
		diags = append(diags, secDiag)
	}
	// Phase 2: the exact phase for every design, bounded by the incumbent.
	var unproven []string
	if _, _, ok := proofBound(top, o); !ok && (o.Rank == RankError || o.Rank == RankBalanced) {
		// Nothing listed meets the specification: every design within
		// the section ceiling is searched (its cascade error is at most
		// the ceiling times its sections).
		for ji, jb := range jobs {
			d := designs[ji]
			why := f.exactDesign(d, ji, sectionCeiling*float64(len(d.Sections)), 0, lists, &closest)
			if stop.Load() {
				return nil, interrupted(ctx)
			}
			if why != "" {
				unproven = append(unproven, fmt.Sprintf("order %d (%s): %s", jb.n, arrangementName(d), why))
			}
		}
	}
	if B, P, ok := proofBound(top, o); ok {
		unproven = nil
		for ji, jb := range jobs {
			d := designs[ji]
			why := f.exactDesign(d, ji, B, P, lists, &closest)
			if stop.Load() {
				return nil, interrupted(ctx)
			}
			if why != "" {
				unproven = append(unproven, fmt.Sprintf("order %d (%s): %s", jb.n, arrangementName(d), why))
			}
			if nb, np, ok := proofBound(top, o); ok && nb <= B {
				B, P = nb, np
			}
		}
	} else if len(top.list) > 0 {
		unproven = append(unproven, "the "+o.Rank.String()+" ranking has no error bound to prove the list against")
	}
	if len(unproven) > 0 {
		r.Notes = append(r.Notes, "not proven exact: "+strings.Join(unproven, "; "))
	}
	r.Proven = len(unproven) == 0 && len(top.list) > 0
	for _, c := range top.list {
		r.Candidates = append(r.Candidates, assemble(c, r.Designs[c.design], lists[c.design], rows, res, caps, o))
	}
	r.Notes = append(r.Notes, shopNotes(r.Candidates, items, o)...)
	markPareto(r.Candidates)
	for i, c := range r.Candidates {
		_ = i
		c.BoardsBuildable = boardsBuildable(c, rows)
	}
	if wantOrder > 0 && spec.Stop > 0 {
		if minN, err := synth.MinOrder(spec); err == nil && wantOrder < minN {
			msg := fmt.Sprintf("order %d is below the minimum order %d that meets the specification: even the ideal design gives %.2f dB at fs (%.2f needed)",
				wantOrder, minN, r.Designs[0].AttenuationAt(spec.Stop), spec.StopAtten)
			r.Notes = append(r.Notes, msg)
			if len(r.Candidates) == 0 {
				r.Limits = append(r.Limits, msg)
			}
		}
	}
	if len(r.Candidates) == 0 {
		if closest != nil {
			r.Closest = assemble(closest, r.Designs[closest.design], lists[closest.design], rows, res, caps, o)
			r.Closest.BoardsBuildable = boardsBuildable(r.Closest, rows)
		}
		r.Limits = append(r.Limits, explain(r, diags, rows, o)...)
	}
	return r, nil
}

// sectionKey identifies one section search: the variants of a design share
// the searches of their common sections.
type sectionKey struct {
	base, section int
	topology      string
	k             int
}

// searchedSection is a finished section search.
type searchedSection struct {
	list []sectionCand
	diag sectionDiag
}

// fitRun holds what every design's search of one fit shares.
type fitRun struct {
	grid             *scoreGrid
	res, caps        *valueSet
	rows             []Row
	o                Options
	spec             synth.Spec
	passIdx, stopIdx int
	top              *topList
	stop             *atomic.Bool
	progress         func()
	searched         map[sectionKey]searchedSection // section searches shared by the variants of a design
}

// searchDesign searches every section of design d with shortlists of k per
// part count and combines them into top.
func (f *fitRun) searchDesign(d *synth.Design, k, ji, base int) ([][]sectionCand, []sectionDiag, *combiner) {
	o := f.o
	secLists := make([][]sectionCand, len(d.Sections))
	secDiag := make([]sectionDiag, len(d.Sections))
	targets := make([]*target, len(d.Sections))
	ideals := make([]*target, len(d.Sections))
	unreachable := false
	for i := range d.Sections {
		t, ideal := ampTargets(&d.Sections[i], f.grid, o.Amp)
		t.setDomain(f.res, f.caps)
		targets[i], ideals[i] = t, ideal
		// Nothing in stock comes near this section: the design cannot be
		// built, so none of its sections is searched.
		if ok, why := t.reachable(sectionCeiling); !ok {
			secDiag[i].unreachable = why
			unreachable = true
		}
	}
	if unreachable {
		for range d.Sections {
			f.progress()
		}
		return secLists, secDiag, &combiner{}
	}
	for i := range d.Sections {
		t, ideal := targets[i], ideals[i]
		key := sectionKey{base: base, section: i, topology: t.topo.ID(), k: k}
		if r, ok := f.searched[key]; ok {
			secLists[i], secDiag[i] = r.list, r.diag
			f.progress()
			continue
		}
		ss := f.sectionSearch(t, k)
		secLists[i], secDiag[i] = ss.run(o.Workers)
		if f.stop.Load() {
			return secLists, secDiag, &combiner{}
		}
		rescoreWithAmp(secLists[i], ideal, o.Amp)
		sortForRank(secLists[i], o.Rank)
		f.searched[key] = searchedSection{secLists[i], secDiag[i]}
		f.progress()
	}
	cb := f.combine(d, secLists, ji)
	return secLists, secDiag, cb
}

func (f *fitRun) sectionSearch(t *target, k int) *sectionSearch {
	o := f.o
	return &sectionSearch{t: t, res: f.res, cap: f.caps, rows: f.rows, boards: o.Boards,
		k: k, ceiling: sectionCeiling, rmin: o.RMin, rmax: o.RMax, stop: f.stop,
		evalBudget: max(1, o.SectionBudget/o.Workers)}
}

// combine runs the cross-section search of design d over lists into the
// top list.
func (f *fitRun) combine(d *synth.Design, lists [][]sectionCand, ji int) *combiner {
	return f.combineCapped(d, lists, ji, nil)
}

// combineCapped is combine with the search limited as cap says (nil: not).
func (f *fitRun) combineCapped(d *synth.Design, lists [][]sectionCand, ji int, cap func(*combiner)) *combiner {
	o, spec, grid := f.o, f.spec, f.grid
	// The combiner's attenuations are relative to the passband gain.
	tdbTotal := make([]float64, len(grid.w))
	gainDB := d.GainDB()
	for i := range d.Sections {
		t := newTarget(&d.Sections[i], grid)
		for g, v := range t.tdb {
			tdbTotal[g] += v
		}
	}
	for g := range tdbTotal {
		tdbTotal[g] -= gainDB
	}
	cb := &combiner{lists: lists, rows: f.rows, boards: o.Boards, rank: o.Rank,
		goodEnough: o.GoodEnough, design: ji, passIdx: f.passIdx, stopIdx: f.stopIdx,
		tdbTotal: tdbTotal, ap: spec.PassAtten, as: spec.StopAtten, keepFail: o.ShowFailing, ripple: spec.Approx == synth.Chebyshev,
		out: f.top, budget: o.NodeBudget, stop: f.stop, rmid: math.Sqrt(o.RMin * o.RMax), minErr: math.Inf(1)}
	cb.passFrom, cb.passTo = 0, f.passIdx
	if spec.Kind == synth.HighPass {
		cb.passFrom, cb.passTo = f.passIdx, len(grid.w)-1
	}
	for i := range d.Sections {
		cb.resIdx = append(cb.resIdx, d.Sections[i].Topology.Indices(synth.Resistor))
	}
	if cap != nil {
		cap(cb)
	}
	cb.run()
	return cb
}

// sectionCeiling is the largest section error (dB) a shortlist keeps: a
// section further off than this cannot be part of a useful design.
const sectionCeiling = 6.0

// defaultSectionBudget is the number of assignments a section search
// scores at most: about a second on one core of this project's reference
// machine (a probe rejection costs about 0.2 µs).
const defaultSectionBudget = 5_000_000

func checkOptions(o *Options) error {
	switch {
	case o.Combine != 1 && o.Combine != 2:
		return fault.InvalidFieldf("Combine", "parts per position must be 1 (single parts) or 2 (pairs too), not %d", o.Combine)
	case o.Boards < 1:
		return fault.InvalidFieldf("Boards", "the number of boards must be at least 1, not %d", o.Boards)
	case o.Boards > stock.MaxQuantity:
		// Every board takes a part from some row, which holds at most
		// MaxQuantity; the bound also keeps parts-per-batch sums far from
		// integer overflow.
		return fault.InvalidFieldf("Boards", "the number of boards must be at most %d (the most a stock row can hold)", stock.MaxQuantity)
	case o.Top < 1:
		return fault.InvalidFieldf("Top", "the number of candidates to list must be at least 1, not %d", o.Top)
	case !(o.GoodEnough >= 0) || math.IsInf(o.GoodEnough, 0):
		return fault.InvalidFieldf("GoodEnough", "the good-enough response error must be a non-negative number of dB")
	case !(o.RMin > 0 && o.RMin < o.RMax) || math.IsInf(o.RMax, 0):
		return fault.Invalidf("the resistor range must satisfy 0 < min < max")
	case !(o.CMin > 0 && o.CMin < o.CMax) || math.IsInf(o.CMax, 0):
		return fault.Invalidf("the capacitor range must satisfy 0 < min < max")
	case o.MaxOrder < 0 || o.MaxOrder > synth.MaxOrder:
		return fault.InvalidFieldf("MaxOrder", "the highest order must be between 1 and %d", synth.MaxOrder)
	}
	if o.Shortlist <= 0 {
		o.Shortlist = 10
	}
	if math.IsNaN(o.MinVoltage) || o.MinVoltage < 0 || math.IsInf(o.MinVoltage, 0) {
		return fault.Invalidf("the minimum voltage must be a positive number of volts")
	}
	if o.RequireRating && o.MinVoltage == 0 {
		return fault.Invalidf("requiring a voltage rating needs a minimum voltage")
	}
	if o.Workers <= 0 {
		o.Workers = runtime.GOMAXPROCS(0)
	}
	if o.NodeBudget == 0 {
		o.NodeBudget = 20_000_000
	}
	if o.SectionBudget == 0 {
		o.SectionBudget = defaultSectionBudget
	}
	return nil
}

// usableRows turns stock items into search rows, dropping what the filters
// exclude, and says why in a phrase for the error when nothing is left.
func usableRows(items []stock.Item, o Options) ([]Row, string, int) {
	allowed := map[string]bool{}
	for _, d := range o.AllowDielectric {
		allowed[stock.NormalizeDielectric(d)] = true
	}
	var rows []Row
	var short, diel, rng, volt int
	var shortKind [2]int
	for _, it := range items {
		if !it.Kind.Passive() {
			continue // amplifiers are placed by the amplifier assignment, not as elements
		}
		k := synth.Resistor
		lo, hi := o.RMin, o.RMax
		if it.Kind == stock.Capacitor {
			k = synth.Capacitor
			lo, hi = o.CMin, o.CMax
			if !stock.SignalPathOK(it.Dielectric) && !allowed[stock.NormalizeDielectric(it.Dielectric)] {
				diel++
				continue
			}
			if !VoltageOK(it, o) {
				volt++
				continue
			}
		}
		if it.Quantity < o.Boards {
			short++
			shortKind[k]++
			continue
		}
		if it.Value < lo*(1-1e-12) || it.Value > hi*(1+1e-12) {
			rng++
			continue
		}
		rows = append(rows, Row{Kind: k, Quantity: it.Quantity, Price: it.Price, Part: Part{StockID: it.ID, Value: it.Value,
			Tolerance: it.Tolerance, Location: it.Location, Dielectric: it.Dielectric, Package: it.Package}})
	}
	var why []string
	if volt > 0 {
		why = append(why, fmt.Sprintf("%d capacitor rows rated below %s or not rated", volt, stock.FormatVoltage(o.MinVoltage)))
	}
	if rng > 0 {
		why = append(why, fmt.Sprintf("%d rows outside the value range", rng))
	}
	if diel > 0 {
		why = append(why, fmt.Sprintf("%d capacitor rows of a dielectric not allowed (see --allow-dielectric)", diel))
	}
	if short > 0 {
		why = append(why, fmt.Sprintf("%d resistor and %d capacitor rows with fewer than %d parts", shortKind[synth.Resistor], shortKind[synth.Capacitor], o.Boards))
	}
	if len(why) == 0 {
		return rows, "", short
	}
	return rows, " (excluded: " + strings.Join(why, "; ") + ")", short
}

// shopNotes are the notes about the listed candidates' parts: unrated
// capacitors used under a minimum voltage, and Caution-grade dielectrics.
func shopNotes(cs []*Candidate, items []stock.Item, o Options) []string {
	var out []string
	if o.MinVoltage > 0 && !o.RequireRating {
		unrated := map[int64]bool{}
		for _, it := range items {
			if it.Kind == stock.Capacitor && it.Voltage == 0 {
				unrated[it.ID] = true
			}
		}
		worst := 0
		for _, c := range cs {
			worst = max(worst, unratedUsed(c, unrated))
		}
		if worst > 0 {
			out = append(out, fmt.Sprintf("capacitor rows without a voltage rating were used (up to %d in a candidate): check that they are rated for %s, or require a rating",
				worst, stock.FormatVoltage(o.MinVoltage)))
		}
	}
	return append(out, cautionNotes(cs)...)
}

// cautionNotes explains, once per dielectric, that some listed candidates
// use a Caution-grade capacitor (each candidate's Cautions say which), so
// that a builder choosing between two of them sees it.
func cautionNotes(cs []*Candidate) []string {
	seen := map[string]bool{}
	var out []string
	for _, c := range cs {
		for _, d := range c.Cautions {
			if !seen[d] {
				seen[d] = true
				out = append(out, "some candidates use "+stock.CautionText(d))
			}
		}
	}
	return out
}

// VoltageOK reports whether the fit may use capacitor row it at the
// options' minimum voltage: always when no minimum is set; otherwise when
// the row is rated at least o.MinVoltage, or is not rated and
// o.RequireRating is false. Resistors always pass.
func VoltageOK(it stock.Item, o Options) bool {
	if it.Kind != stock.Capacitor || o.MinVoltage <= 0 {
		return true
	}
	if it.Voltage == 0 {
		return !o.RequireRating
	}
	return it.Voltage >= o.MinVoltage
}

// unratedUsed counts the capacitor rows without a rating among the rows a
// candidate uses (for the note that warns about them).
func unratedUsed(c *Candidate, unrated map[int64]bool) int {
	n := 0
	for _, u := range c.StockUse {
		if unrated[u.StockID] {
			n++
		}
	}
	return n
}

func stockHasDielectric(items []stock.Item, d string) bool {
	n := stock.NormalizeDielectric(d)
	for _, it := range items {
		if it.Kind == stock.Capacitor && stock.NormalizeDielectric(it.Dielectric) == n {
			return true
		}
	}
	return false
}

func ordersFor(spec synth.Spec, want int, o Options) ([]int, error) {
	if want > 0 {
		return []int{want}, nil
	}
	minN, err := synth.MinOrder(spec)
	if err != nil {
		return nil, err
	}
	maxN := o.MaxOrder
	if maxN == 0 {
		maxN = min(minN+1, synth.MaxOrder)
	}
	if maxN < minN {
		return nil, fault.Invalidf("--max-order %d is below the minimum order %d that meets the specification", maxN, minN)
	}
	var out []int
	for n := minN; n <= maxN; n++ {
		out = append(out, n)
	}
	return out, nil
}

func indexOf(f []float64, x float64) int {
	best := 0
	for i, v := range f {
		if math.Abs(v-x) < math.Abs(f[best]-x) {
			best = i
		}
	}
	return best
}

func sortForRank(l []sectionCand, r Rank) {
	sort.SliceStable(l, func(a, b int) bool {
		if r != RankError && l[a].parts != l[b].parts {
			return l[a].parts < l[b].parts
		}
		return l[a].less(&l[b])
	})
}

func arrangementName(d *synth.Design) string {
	if d.Order%2 == 0 || d.Order == 1 {
		return fmt.Sprintf("%d × 2-pole", d.Order/2) + map[bool]string{true: " + 1-pole", false: ""}[d.Order%2 == 1]
	}
	if d.Odd == synth.OddThreePole {
		if d.Order == 3 {
			return "3-pole"
		}
		return fmt.Sprintf("3-pole + %d × 2-pole", (d.Order-3)/2)
	}
	return fmt.Sprintf("1-pole + %d × 2-pole", d.Order/2)
}

// Arrangement names a candidate's section arrangement, e.g. "1-pole + 2 × 2-pole".
func (c *Candidate) Arrangement() string { return arrangementName(c.Design) }

// assemble turns a combo into a Candidate with designators, parts and the
// analysed figures.
func assemble(cb *combo, d *synth.Design, lists [][]sectionCand, rows []Row, res, caps *valueSet, o Options) *Candidate {
	c := &Candidate{Design: d, ResponseError: cb.err, PassAtten: cb.passAtten, StopAtten: cb.stopAtten,
		MeetsSpec: cb.meets, PartCount: cb.parts, UniqueParts: cb.unique}
	nr, nc := 0, 0
	use := map[int64]int{}
	for s, pick := range cb.picks {
		sc := &lists[s][pick]
		sec := d.Sections[s]
		sf := SectionFit{Target: sec}
		for i, el := range sec.Topology.Elements() {
			vs := res
			ref := ""
			if el.Kind == synth.Capacitor {
				vs = caps
				nc++
				ref = fmt.Sprintf("C%d", nc)
			} else {
				nr++
				ref = fmt.Sprintf("R%d", nr)
			}
			re := vs.reals[sc.reals[i]]
			comp := Component{Ref: ref, Symbol: el.Symbol, Kind: el.Kind, Value: re.value, Arrangement: re.arr}
			for j := 0; j < int(re.n); j++ {
				row := rows[re.rows[j]]
				comp.Parts = append(comp.Parts, row.Part)
				use[row.StockID]++
			}
			sf.Components = append(sf.Components, comp)
		}
		sf.F0, sf.Q, sf.RealF0 = realised(sec.Topology, sf.Values())
		c.Sections = append(c.Sections, sf)
	}
	for id, n := range use {
		c.StockUse = append(c.StockUse, StockUse{StockID: id, PerBoard: n})
	}
	sort.Slice(c.StockUse, func(a, b int) bool { return c.StockUse[a].StockID < c.StockUse[b].StockID })
	c.CostPerBoard = costPerBoard(c.StockUse, rows)
	c.Cautions = cautions(c)
	return c
}

// realised returns the natural frequency (Hz) and Q of a section's complex
// pair, or its real pole, from the element values.
func realised(t *synth.Topology, v []float64) (f0, q, realF0 float64) {
	_, den := t.Coeffs(v)
	switch t.Poles() {
	case 1:
		return 1 / (2 * math.Pi * den[1]), 0, 0
	case 2:
		w0 := 1 / math.Sqrt(den[2])
		return w0 / (2 * math.Pi), 1 / (w0 * den[1]), 0
	}
	w0, qq, wr := synth.SectionPoles(den, 3)
	return w0 / (2 * math.Pi), qq, wr / (2 * math.Pi)
}

// markPareto marks candidates that no other listed candidate dominates in
// (response error, part count, unique parts).
func markPareto(cs []*Candidate) {
	for _, a := range cs {
		a.Pareto = true
		for _, b := range cs {
			if a == b {
				continue
			}
			// Errors within 1e-9 dB are equal (float noise of equal circuits).
			le := b.ResponseError <= a.ResponseError+1e-9
			lt := b.ResponseError < a.ResponseError-1e-9
			if le && b.PartCount <= a.PartCount && b.UniqueParts <= a.UniqueParts &&
				(lt || b.PartCount < a.PartCount || b.UniqueParts < a.UniqueParts) {
				a.Pareto = false
				break
			}
		}
	}
}

func boardsBuildable(c *Candidate, rows []Row) int {
	qty := map[int64]int{}
	for _, r := range rows {
		qty[r.StockID] = r.Quantity
	}
	best := math.MaxInt32
	for _, u := range c.StockUse {
		best = min(best, qty[u.StockID]/u.PerBoard)
	}
	if best == math.MaxInt32 {
		return 0
	}
	return best
}

// explain says what limited a fit that found nothing meeting the spec.
func explain(r *Result, diags [][]sectionDiag, rows []Row, o Options) []string {
	var out []string
	for di, ds := range diags {
		d := r.Designs[di]
		for si, sd := range ds {
			sec := d.Sections[si]
			where := fmt.Sprintf("order %d (%s), section %d (%s, f0 %.4g Hz, Q %.3f)", d.Order, arrangementName(d), si+1, sec.Topology.Name(), sec.F0, sec.Q)
			switch {
			case sd.unreachable != "":
				out = append(out, fmt.Sprintf("%s: nothing in stock comes near: %s", where, sd.unreachable))
			case sd.capSets == 0:
				// Not searched: another section of the design is out of reach.
			case sd.ratioOK == 0 && sec.Topology == synth.SallenKeyLowPass():
				out = append(out, fmt.Sprintf("%s: no capacitor pair with the needed ratio Cf/Cg >= 4Q² = %.2f and resistors within %s–%s",
					where, 4*sec.Q*sec.Q, fmtOhm(o.RMin), fmtOhm(o.RMax)))
			case sd.ratioOK == 0:
				out = append(out, fmt.Sprintf("%s: no capacitor choice puts the resistors within %s–%s", where, fmtOhm(o.RMin), fmtOhm(o.RMax)))
			case sd.inRange == 0:
				out = append(out, fmt.Sprintf("%s: the resistors it needs are outside %s–%s or missing from stock", where, fmtOhm(o.RMin), fmtOhm(o.RMax)))
			case sd.accepted == 0 && sd.quantityFail > 0:
				out = append(out, fmt.Sprintf("%s: every close match needs more parts of a row than %d boards allow", where, o.Boards))
			case sd.accepted == 0:
				out = append(out, fmt.Sprintf("%s: nothing in stock comes within %.0f dB of the target", where, sectionCeiling))
			}
		}
	}
	if r.Closest != nil {
		out = append(out, fmt.Sprintf("closest miss: order %d (%s) with response error %.3f dB, attenuation %.2f dB at fp (limit %.2f)%s",
			r.Closest.Order(), r.Closest.Arrangement(), r.Closest.ResponseError, r.Closest.PassAtten, r.Spec.PassAtten, stopText(r)))
	}
	if len(out) == 0 {
		out = append(out, "the sections can be built one by one, but no combination of them meets the specification with the quantities on hand")
	}
	return out
}

func stopText(r *Result) string {
	if r.Spec.Stop <= 0 || r.Closest == nil {
		return ""
	}
	return fmt.Sprintf(" and %.2f dB at fs (needs %.2f)", r.Closest.StopAtten, r.Spec.StopAtten)
}

func fmtOhm(v float64) string { return stock.FormatValue(v, stock.Resistor) }

// watch returns a flag that becomes true once ctx is done, for the search
// loops to poll cheaply, and a function that releases the watcher.
func watch(ctx context.Context) (*atomic.Bool, func()) {
	stop := new(atomic.Bool)
	if ctx.Done() == nil {
		return stop, func() {}
	}
	release := context.AfterFunc(ctx, func() { stop.Store(true) })
	return stop, func() { release() }
}

// interrupted is the error of a search stopped by its context.
func interrupted(ctx context.Context) error {
	return fmt.Errorf("the search was interrupted: %w", ctx.Err())
}
