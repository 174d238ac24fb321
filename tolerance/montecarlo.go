package tolerance

import (
	"context"
	"math"
	"math/rand/v2"
	"runtime"
	"sort"
	"strings"
	"sync"

	"gonum.org/v1/gonum/stat/distuv"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/synth"
)

// Dist is the distribution of a part's value within its tolerance.
type Dist string

const (
	// Uniform draws every value with equal probability anywhere within
	// nominal·(1 ± tolerance): the cautious default when the maker's
	// distribution is unknown (parts may have been sorted out of a batch).
	Uniform Dist = "uniform"
	// Normal draws from a normal distribution centred on the nominal value
	// with the tolerance as three standard deviations; about 0.27 % of the
	// draws then lie outside the tolerance, as real batches sometimes do.
	Normal Dist = "normal"
)

// ParseDist reads "uniform" or "normal" (case ignored; empty means
// uniform). Anything else is a fault.Invalid error.
func ParseDist(s string) (Dist, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "uniform":
		return Uniform, nil
	case "normal":
		return Normal, nil
	}
	return "", fault.Invalidf("unknown distribution %q: use uniform or normal", s)
}

// DefaultTrials is the number of Monte Carlo trials when Options.Trials is 0.
const DefaultTrials = 2000

// DefaultTargetYield is the yield the margin advice aims for when
// Options.TargetYield is 0 (the default).
const DefaultTargetYield = 0.95

// MaxTrials bounds Options.Trials so that a typing slip cannot occupy the
// machine for hours.
const MaxTrials = 10_000_000

// RefitFunc designs and fits a candidate for a modified specification (the
// same order, arrangement and stock); Run calls it to try the design with
// its edge moved inside the specification. The fit package supplies it.
type RefitFunc func(spec synth.Spec) (*optimize.Candidate, error)

// Options control a yield analysis. The zero value is usable: 2,000 trials,
// seed 0, uniform distributions, the specification itself as acceptance
// window, a 95 % target and one worker per available CPU.
type Options struct {
	// Trials is the number of simulated boards (0: DefaultTrials).
	Trials int
	// Seed selects the random stream. Trial i always draws the same
	// deviations for the same seed, whatever the number of workers.
	Seed uint64
	// Dist is the distribution of part values ("" means Uniform).
	Dist Dist
	// PassMargin and StopMargin widen the acceptance window in dB: a board
	// passes if its passband attenuation (for Chebyshev its ripple) is at most Ap + PassMargin and its
	// attenuation at fs at least As - StopMargin. Zero: the spec itself.
	PassMargin, StopMargin float64
	// TargetYield is the yield the margin and tolerance advice aims for
	// (0: DefaultTargetYield).
	TargetYield float64
	// Workers is the number of goroutines (0: runtime.GOMAXPROCS).
	Workers int
	// Boards, when positive, asks for a forecast of how many of that many
	// built boards pass (Result.Boards).
	Boards int
	// Brief skips the advice (which re-runs the Monte Carlo), the worst-case
	// corners and the refit; for ranking many candidates quickly.
	Brief bool
	// Refit, when set, is used to fit the design with its edge moved inside
	// the specification when the yield misses the target and the order has
	// slack; the result is analysed with the same options.
	Refit RefitFunc

	ctx context.Context // set by Run: the simulation stops once it is done
}

// cancelled reports whether the analysis's context is done.
func (o *Options) cancelled() bool { return o.ctx != nil && o.ctx.Err() != nil }

func (o *Options) normalize() error {
	if o.Trials == 0 {
		o.Trials = DefaultTrials
	}
	if o.Trials < 1 || o.Trials > MaxTrials {
		return fault.Invalidf("the number of trials must be between 1 and %d, got %d", MaxTrials, o.Trials)
	}
	if o.Dist == "" {
		o.Dist = Uniform
	}
	if o.Dist != Uniform && o.Dist != Normal {
		return fault.Invalidf("unknown distribution %q: use uniform or normal", string(o.Dist))
	}
	if o.TargetYield == 0 {
		o.TargetYield = DefaultTargetYield
	}
	if !(o.TargetYield > 0 && o.TargetYield < 1) {
		return fault.Invalidf("the target yield must be a fraction between 0 and 1 (e.g. 0.95), got %g", o.TargetYield)
	}
	for _, m := range []float64{o.PassMargin, o.StopMargin} {
		if math.IsNaN(m) || math.IsInf(m, 0) {
			return fault.Invalidf("acceptance margins must be finite numbers of dB, got %g", m)
		}
	}
	if o.Boards < 0 || o.Boards > 1_000_000 {
		return fault.Invalidf("the number of boards must be between 1 and 1000000, got %d", o.Boards)
	}
	if o.Workers <= 0 {
		o.Workers = runtime.GOMAXPROCS(0)
	}
	return nil
}

// splitmix is the SplitMix64 finaliser (Steele, Lea and Flood, "Fast
// splittable pseudorandom number generators", OOPSLA 2014).
func splitmix(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// sampler draws relative deviations d, so that a part's value is
// nominal·(1 + tolerance·d): d uniform on [-1, 1], or normal with standard
// deviation 1/3 (the tolerance is 3 sigma).
type sampler struct {
	src  *rand.PCG
	uni  distuv.Uniform
	norm distuv.Normal
	dist Dist
}

func newSampler(dist Dist) *sampler {
	s := &sampler{src: rand.NewPCG(0, 0), dist: dist}
	s.uni = distuv.Uniform{Min: -1, Max: 1, Src: s.src}
	s.norm = distuv.Normal{Mu: 0, Sigma: 1.0 / 3, Src: s.src}
	return s
}

// reset points the sampler at trial i's stream: a PCG generator keyed by
// the seed and the trial index (each mixed by SplitMix64 so that
// neighbouring indices give unrelated streams). Each trial owning its stream
// makes the results independent of how trials are split among workers, and
// gives common random numbers across runs that change only tolerances.
func (s *sampler) reset(seed uint64, i int) {
	s.src.Seed(splitmix(seed), splitmix(uint64(i)^0x6a09e667f3bcc908))
}

func (s *sampler) draw() float64 {
	if s.dist == Normal {
		return s.norm.Rand()
	}
	return s.uni.Rand()
}

// drawParts fills parts with trial values from the deviations dev and the
// tolerances tol.
func drawParts(b *board, tol, dev, parts []float64) {
	for i := range b.parts {
		f := 1 + tol[i]*dev[i]
		// A normal draw beyond -1/tol (15 sigma for a 20 % part) would
		// make a value negative; keep it physical.
		if f < 1e-3 {
			f = 1e-3
		}
		parts[i] = b.parts[i].nominal * f
	}
}

// trialSet is the outcome of a Monte Carlo run, one entry per trial.
type trialSet struct {
	passEx, stopEx []float64 // dB excess over the spec limits (<= margin passes)
	stopAtt        []float64 // dB at fs
	passAtt        []float64 // dB
	edge           []float64 // Hz (NaN if not found)
	pass           []bool
	// blameSum is, per component, the sum of the blame weights of the
	// failing trials that were analysed, blameFails their number. Summed
	// per worker as the trials run, so that memory does not grow with a
	// slice per failing trial.
	blameSum   []float64
	blameFails int
	// f0 and q are per section, per trial: the natural frequency (Hz) and
	// Q of the section's pair (of the pole for a 1-pole section).
	f0, q [][]float64
}

// blameScale turns a blame weight (0 to 1) into a whole number: integer
// sums do not depend on how the trials were split among workers, as float
// sums would in their last bits. 2^32 keeps 10^7 trials far from int64
// overflow (10^7 * 2^32 is about 4e16) and resolves a weight to 2e-10.
const blameScale = 1 << 32

// MaxSimBytes is the memory a full analysis (Run) may hold for its
// per-trial figures: the spreads and margins are exact order statistics,
// so every trial's figures are kept until the end.
const MaxSimBytes = 1 << 30

// trialBytes is what Run holds per trial: five float64 figures and a bool,
// f0 and Q per section, and up to two float64 copies while quantiles and
// margins are sorted; doubled for the garbage collector's headroom (Go's
// default GOGC=100 lets the heap reach twice the live data).
func trialBytes(sections int) int { return 2 * (5*8 + 1 + 2*8*sections + 2*8) }

// fitsMemory refuses a trial count whose figures would exceed MaxSimBytes,
// saying how many trials fit.
func fitsMemory(trials, sections int) error {
	per := trialBytes(sections)
	if most := MaxSimBytes / per; trials > most {
		return fault.Invalidf("%d trials of this design (%d sections) would hold about %d MB; the analysis keeps every trial's figures and allows itself %d MB, so at most %d trials fit",
			trials, sections, int64(trials)*int64(per)>>20, MaxSimBytes>>20, most)
	}
	return nil
}

// judgeSlack absorbs rounding when a board meets a limit exactly (dB; the
// same figure as synth's order search uses, far below anything measurable).
const judgeSlack = 1e-9

// accept says whether excesses over the spec limits are inside the window.
func accept(pe, se float64, opt *Options) bool {
	return pe <= opt.PassMargin+judgeSlack && se <= opt.StopMargin+judgeSlack
}

// simulate runs trials 0..n-1 over opt.Workers goroutines. Each worker
// takes a contiguous block of trial indices; every trial draws from its own
// stream, so the outcome does not depend on the split. With withBlame set,
// every failing trial is analysed for the components responsible.
func simulate(b *board, j *judge, tol []float64, opt *Options, needEdge, withBlame bool) *trialSet {
	n := opt.Trials
	ts := &trialSet{
		passEx: make([]float64, n), stopEx: make([]float64, n),
		stopAtt: make([]float64, n), passAtt: make([]float64, n),
		edge: make([]float64, n), pass: make([]bool, n),
	}
	workers := min(opt.Workers, n)
	var sums [][]int64
	fails := make([]int, workers)
	if withBlame {
		sums = make([][]int64, workers)
	}
	if needEdge {
		ts.f0, ts.q = make([][]float64, len(b.sections)), make([][]float64, len(b.sections))
		for si := range b.sections {
			ts.f0[si], ts.q[si] = make([]float64, n), make([]float64, n)
		}
	}
	var wg sync.WaitGroup
	for wk := 0; wk < workers; wk++ {
		lo, hi := wk*n/workers, (wk+1)*n/workers
		wg.Add(1)
		go func() {
			defer wg.Done()
			ws := b.newWorkspace()
			smp := newSampler(opt.Dist)
			dev := make([]float64, len(b.parts))
			parts := make([]float64, len(b.parts))
			var bl *blamer
			if withBlame {
				bl = newBlamer(b, j, opt)
				sums[wk] = make([]int64, len(b.comps))
			}
			for i := lo; i < hi; i++ {
				if i&255 == 0 && opt.cancelled() {
					return
				}
				smp.reset(opt.Seed, i)
				for k := range dev {
					dev[k] = smp.draw()
				}
				drawParts(b, tol, dev, parts)
				ws.load(parts)
				m := j.measure(ws, needEdge)
				pe, se := j.passExcess(m), j.stopExcess(m)
				ts.passEx[i], ts.stopEx[i] = pe, se
				ts.stopAtt[i], ts.passAtt[i], ts.edge[i] = m.stopAtt, m.passAtt, m.edge
				ts.pass[i] = accept(pe, se, opt)
				if needEdge {
					for si := range b.sections {
						w0, q, _ := sectionPoles(ws.coeffs[si].den, ws.coeffs[si].poles)
						ts.f0[si][i], ts.q[si][i] = w0/(2*math.Pi), q
					}
				}
				if withBlame && !ts.pass[i] {
					if w := bl.assign(ws, parts, pe, se); w != nil {
						for ci, x := range w {
							sums[wk][ci] += int64(math.Round(x * blameScale))
						}
						fails[wk]++
					}
				}
			}
		}()
	}
	wg.Wait()
	if withBlame {
		total := make([]int64, len(b.comps))
		for wk := range sums {
			for ci, x := range sums[wk] {
				total[ci] += x
			}
			ts.blameFails += fails[wk]
		}
		ts.blameSum = make([]float64, len(b.comps))
		for ci, x := range total {
			ts.blameSum[ci] = float64(x) / blameScale
		}
	}
	return ts
}

// passed counts the passing trials.
func (ts *trialSet) passed() int {
	k := 0
	for _, p := range ts.pass {
		if p {
			k++
		}
	}
	return k
}

// Wilson returns the Wilson score interval for k successes in n trials at
// the normal quantile z (1.959964 for 95 %; E. B. Wilson, "Probable
// inference, the law of succession, and statistical inference", JASA 22,
// 1927). It panics if n < 1.
func Wilson(k, n int, z float64) (lo, hi float64) {
	if n < 1 {
		panic("tolerance: Wilson interval of no trials")
	}
	p := float64(k) / float64(n)
	nn := float64(n)
	z2 := z * z
	den := 1 + z2/nn
	centre := (p + z2/(2*nn)) / den
	half := z / den * math.Sqrt(p*(1-p)/nn+z2/(4*nn*nn))
	return math.Max(0, centre-half), math.Min(1, centre+half)
}

// z95 is the two-sided 95 % quantile of the standard normal distribution.
var z95 = distuv.UnitNormal.Quantile(0.975)

// Percentiles summarise the spread of one quantity over the trials.
type Percentiles struct {
	Min float64 `json:"min"`
	P1  float64 `json:"p1"`
	P5  float64 `json:"p5"`
	P50 float64 `json:"p50"`
	P95 float64 `json:"p95"`
	P99 float64 `json:"p99"`
	Max float64 `json:"max"`
	// N is the number of trials the figures are taken from.
	N int `json:"n"`
}

// percentiles returns the spread of the finite values of x (nil if none).
// Quantiles interpolate linearly between order statistics (type 7 of
// Hyndman and Fan, the default of R and NumPy).
func percentiles(x []float64) *Percentiles {
	v := make([]float64, 0, len(x))
	for _, a := range x {
		if !math.IsNaN(a) && !math.IsInf(a, 0) {
			v = append(v, a)
		}
	}
	if len(v) == 0 {
		return nil
	}
	sort.Float64s(v)
	return &Percentiles{
		Min: v[0], P1: Quantile(v, 0.01), P5: Quantile(v, 0.05), P50: Quantile(v, 0.5),
		P95: Quantile(v, 0.95), P99: Quantile(v, 0.99), Max: v[len(v)-1], N: len(v),
	}
}

// Quantile is the type-7 quantile (linear interpolation between order
// statistics, R's default) of data sorted in ascending order, for p in
// [0, 1]; NaN for no data. It is the one quantile of the project: the
// yield's percentiles and the plotted Monte Carlo band use it.
func Quantile(sorted []float64, p float64) float64 {
	if len(sorted) == 0 {
		return math.NaN()
	}
	h := p * float64(len(sorted)-1)
	i := int(math.Floor(h))
	if i >= len(sorted)-1 {
		return sorted[len(sorted)-1]
	}
	return sorted[i] + (h-float64(i))*(sorted[i+1]-sorted[i])
}
