package tolerance

import (
	"context"
	"encoding/json"
	"math"
	"sort"
	"strings"
	"testing"

	"drawerfit/fault"
	"drawerfit/internal/testkit"
	"drawerfit/optimize"
	"drawerfit/synth"
)

// exactLogF0CDF returns the CDF of y = ln(f0/f0nom) for a section whose
// f0 ∝ (R1 R2 C1 C2)^(-1/2) and whose parts are independently uniform
// within relative tolerances tol: y = Σ -½ ln(1 + t U), U uniform on
// [-1, 1]. Each term has the CDF F(y) = (1 + t - e^(-2y)) / (2t) on its
// support (from P(1 + tU >= e^(-2y))); the sum's distribution is the
// numeric convolution of the terms' bin masses on a grid of step h. This is
// computed here, independently of the package's Monte Carlo.
func exactLogF0CDF(tol []float64, h float64) (ys, cdf []float64) {
	mass := []float64{1}
	offset := 0 // grid index of mass[0]
	for _, t := range tol {
		lo := int(math.Floor(-0.5 * math.Log1p(t) / h))
		hi := int(math.Ceil(-0.5 * math.Log1p(-t) / h))
		F := func(y float64) float64 {
			return math.Min(1, math.Max(0, (1+t-math.Exp(-2*y))/(2*t)))
		}
		term := make([]float64, hi-lo)
		for k := lo; k < hi; k++ {
			term[k-lo] = F(float64(k+1)*h) - F(float64(k)*h)
		}
		conv := make([]float64, len(mass)+len(term)-1)
		for a, ma := range mass {
			if ma == 0 {
				continue
			}
			for b, mb := range term {
				conv[a+b] += ma * mb
			}
		}
		mass = conv
		offset += lo
	}
	// Bin k of every term is centred at (k+½)h, so the sum's point K sits at
	// (K + n/2)h.
	n := float64(len(tol))
	ys = make([]float64, len(mass))
	cdf = make([]float64, len(mass))
	acc := 0.0
	for i, m := range mass {
		acc += m
		ys[i] = (float64(offset+i) + n/2) * h
		cdf[i] = acc
	}
	return ys, cdf
}

// evalCDF interpolates the tabulated CDF at y.
func evalCDF(ys, cdf []float64, y float64) float64 {
	i := sort.SearchFloat64s(ys, y)
	switch {
	case i == 0:
		return 0
	case i >= len(ys):
		return 1
	}
	f := (y - ys[i-1]) / (ys[i] - ys[i-1])
	return cdf[i-1] + f*(cdf[i]-cdf[i-1])
}

func TestF0DistributionAgainstExactConvolution(t *testing.T) {
	t.Parallel()
	// Invented section: 10 kΩ, 12 kΩ, 22 nF, 8.2 nF with 1 %, 2 %, 5 %, 10 %
	// parts, so the four terms of ln f0 all differ.
	tol := [4]float64{0.01, 0.02, 0.05, 0.10}
	c := sallenKey(10e3, 12e3, 22e-9, 8.2e-9, tol)
	f0nom := 1 / (2 * math.Pi * math.Sqrt(10e3*12e3*22e-9*8.2e-9))
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: f0nom, Order: 2}
	if err := spec.Normalize(); err != nil {
		t.Fatal(err)
	}
	trials := 200_000
	if testing.Short() {
		trials = 20_000
	}
	b, err := newBoard(c)
	if err != nil {
		t.Fatal(err)
	}
	j := newJudge(spec, b, 2)
	opt := Options{Trials: trials, Seed: 11, PassMargin: 100}
	if err := opt.normalize(); err != nil {
		t.Fatal(err)
	}
	ts := simulate(b, j, tol[:], &opt, true, false)
	ys, cdf := exactLogF0CDF(tol[:], 1e-5)

	y := make([]float64, trials)
	for i, f := range ts.f0[0] {
		y[i] = math.Log(f / f0nom)
	}
	sort.Float64s(y)
	d := 0.0
	for i, v := range y {
		F := evalCDF(ys, cdf, v)
		d = math.Max(d, math.Max(math.Abs(F-float64(i)/float64(trials)), math.Abs(F-float64(i+1)/float64(trials))))
	}
	// Kolmogorov-Smirnov: the 99.9 % point of the limiting distribution of
	// sqrt(N)·D is 1.949 (Kolmogorov's distribution, standard tables).
	crit := 1.949 / math.Sqrt(float64(trials))
	if d > crit {
		t.Errorf("KS distance %.5f between the Monte Carlo f0 and the exact distribution exceeds %.5f", d, crit)
	}
	// The spread a uniform draw must give: the exact distribution is wider
	// than the 10 % capacitor alone and narrower than all tolerances added.
	if ys[len(ys)-1]-ys[0] < 0.05 {
		t.Fatalf("convolution support %.4f implausibly narrow", ys[len(ys)-1]-ys[0])
	}

	// The reported percentiles of the section's f0 sit where the exact CDF
	// says, within 4 binomial standard errors.
	r, err := Run(context.Background(), c, spec, Options{Trials: trials / 4, Seed: 5, PassMargin: 100, Brief: true})
	if err != nil {
		t.Fatal(err)
	}
	p := r.Sections[0].F0
	n := float64(trials / 4)
	for _, q := range []struct {
		name string
		p, v float64
	}{{"p1", 0.01, p.P1}, {"p5", 0.05, p.P5}, {"p50", 0.5, p.P50}, {"p95", 0.95, p.P95}, {"p99", 0.99, p.P99}} {
		t.Run(q.name, func(t *testing.T) {
			got := evalCDF(ys, cdf, math.Log(q.v/f0nom))
			se := math.Sqrt(q.p * (1 - q.p) / n)
			if !testkit.Abs(4*se).Equal(got, q.p) {
				t.Errorf("exact CDF at the reported %s = %.5f, want %.3f ± %.5f", q.name, got, q.p, 4*se)
			}
		})
	}
}

func TestNormalDistributionIsThreeSigma(t *testing.T) {
	t.Parallel()
	// One resistor carries all the tolerance (5 %): with the normal model the
	// section's f0 = 1/(2π sqrt(R1 R2 C1 C2)) has ln f0 ≈ -½ ln(1 + 0.05 Z/3),
	// so the 5th-95th percentile span is about 2·1.645·0.05/3/2 in ln f0
	// (1.645: the standard normal 95 % point).
	c := sallenKey(10e3, 10e3, 20e-9, 5e-9, [4]float64{0.05, exactTol, exactTol, exactTol})
	f0nom := 1 / (2 * math.Pi * math.Sqrt(10e3*10e3*20e-9*5e-9))
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: f0nom, Order: 2}
	r, err := Run(context.Background(), c, spec, Options{Trials: 40_000, Seed: 3, Dist: Normal, PassMargin: 100, Brief: true})
	if err != nil {
		t.Fatal(err)
	}
	p := r.Sections[0].F0
	span := math.Log(p.P95 / p.P5)
	want := 1.6448536 * 0.05 / 3 // -½ · 2 · 1.645 σ, σ = 0.05/3
	if math.Abs(span-want)/want > 0.03 {
		t.Errorf("normal: ln(P95/P5) of f0 = %.5f, want %.5f within 3 %%", span, want)
	}
	ru, err := Run(context.Background(), c, spec, Options{Trials: 40_000, Seed: 3, PassMargin: 100, Brief: true})
	if err != nil {
		t.Fatal(err)
	}
	// Uniform on ±5 %: the 5th-95th span of ln f0 is ½(ln(1.045) - ln(0.955)).
	pu := ru.Sections[0].F0
	wantU := 0.5 * (math.Log(1.045) - math.Log(0.955))
	if got := math.Log(pu.P95 / pu.P5); math.Abs(got-wantU)/wantU > 0.03 {
		t.Errorf("uniform: ln(P95/P5) of f0 = %.5f, want %.5f within 3 %%", got, wantU)
	}
}

// exactTol stands for an exact part: a tolerance of 0 means "not given in
// stock" and is simulated with DefaultTolerance.
const exactTol = 1e-15

func TestZeroToleranceGivesFullYield(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name  string
		spec  synth.Spec
		order int
		odd   synth.Odd
	}{
		{"butterworth 8 lowpass", butterworthLP(1e3, 2e3, 40), 8, synth.OddOnePole},
		{"chebyshev 5 lowpass 3-pole", synth.Spec{Kind: synth.LowPass, Approx: synth.Chebyshev, Ripple: 0.5, Pass: 1e3, Stop: 2e3, StopAtten: 40}, 5, synth.OddThreePole},
		{"bessel 4 highpass", synth.Spec{Kind: synth.HighPass, Approx: synth.Bessel, Pass: 1e3, Stop: 200, StopAtten: 20}, 4, synth.OddOnePole},
		{"butterworth 5 highpass", synth.Spec{Kind: synth.HighPass, Approx: synth.Butterworth, Pass: 5e3, Stop: 1e3, StopAtten: 50}, 5, synth.OddThreePole},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := designCandidate(t, tc.spec, tc.order, tc.odd, tols{exactTol, exactTol})
			r, err := Run(context.Background(), c, tc.spec, Options{Trials: 500, Seed: 1})
			if err != nil {
				t.Fatal(err)
			}
			if r.Yield != 1 || r.Passed != 500 || r.FailPassband != 0 || r.FailStopband != 0 {
				t.Fatalf("zero tolerance: yield %v (%d passed, %d/%d failures), want 1", r.Yield, r.Passed, r.FailPassband, r.FailStopband)
			}
			if !testkit.Rel(1e-9).Equal(r.Edge.Max, r.Edge.Min) {
				t.Errorf("zero tolerance: edge spread %g..%g, want one value", r.Edge.Min, r.Edge.Max)
			}
			if len(r.Blame) != 0 {
				t.Errorf("zero tolerance: blame %v, want none", r.Blame)
			}
		})
	}
}

// paired runs the Monte Carlo with two tolerance vectors on the same
// trial streams and counts the trials that change outcome.
func paired(t *testing.T, c *optimize.Candidate, spec synth.Spec, opt Options, tolA, tolB []float64) (yA, yB float64, gained, lost int) {
	t.Helper()
	if err := spec.Normalize(); err != nil {
		t.Fatal(err)
	}
	if err := opt.normalize(); err != nil {
		t.Fatal(err)
	}
	b, err := newBoard(c)
	if err != nil {
		t.Fatal(err)
	}
	j := newJudge(spec, b, c.Design.Order)
	a := simulate(b, j, tolA, &opt, false, false)
	w := simulate(b, j, tolB, &opt, false, false)
	for i := range a.pass {
		switch {
		case !a.pass[i] && w.pass[i]:
			gained++
		case a.pass[i] && !w.pass[i]:
			lost++
		}
	}
	n := float64(opt.Trials)
	return float64(a.passed()) / n, float64(w.passed()) / n, gained, lost
}

func TestWideningToleranceNeverRaisesYield(t *testing.T) {
	t.Parallel()
	// Property: with common random numbers (same seed), widening any one
	// part's tolerance, or all of them, must not raise the yield beyond the
	// sampling noise of the paired difference (McNemar: the changed trials
	// have standard deviation sqrt(gained + lost)). It holds when the
	// nominal board sits inside the acceptance window (for a window that is
	// convex and symmetric about nominal it is Anderson's theorem: T. W.
	// Anderson, "The integral of a symmetric unimodal function over a
	// symmetric convex set", Proc. AMS 6, 1955). It does not hold for a
	// nominal on a curved limit, where wider draws can land inside more
	// often: see the package documentation.
	spec := butterworthLP(1e3, 2.2e3, 40)
	inside := spec
	inside.Pass = 1.04e3 // edge moved inside: about 0.35 dB passband margin
	fixtures := []struct {
		name       string
		c          *optimize.Candidate
		pass, stop float64
	}{
		{"window widened", designCandidate(t, spec, 7, synth.OddOnePole, tols{0.01, 0.05}), 0.3, 1},
		{"edge inside", designCandidate(t, inside, 7, synth.OddOnePole, tols{0.01, 0.05}), 0, 0},
	}
	for _, fx := range fixtures {
		b, err := newBoard(fx.c)
		if err != nil {
			t.Fatal(err)
		}
		base := make([]float64, len(b.parts))
		for i, p := range b.parts {
			base[i] = p.tol
		}
		type widen struct {
			name  string
			parts []int
			to    func(old float64) float64
		}
		var cases []widen
		for i := range b.parts {
			cases = append(cases, widen{b.comps[b.parts[i].comp].ref + " to 10%", []int{i}, func(float64) float64 { return 0.10 }})
		}
		all := make([]int, len(b.parts))
		for i := range all {
			all[i] = i
		}
		cases = append(cases, widen{"all doubled", all, func(o float64) float64 { return 2 * o }})
		for _, w := range cases {
			t.Run(fx.name+"/"+w.name, func(t *testing.T) {
				tol := append([]float64(nil), base...)
				for _, i := range w.parts {
					tol[i] = w.to(tol[i])
				}
				opt := Options{Trials: 3000, Seed: 77, PassMargin: fx.pass, StopMargin: fx.stop}
				yA, yB, gained, lost := paired(t, fx.c, spec, opt, base, tol)
				noise := 3 * math.Sqrt(float64(gained+lost)) / 3000
				if yB > yA+noise {
					t.Errorf("widening raised the yield from %.4f to %.4f (gained %d, lost %d trials)", yA, yB, gained, lost)
				}
			})
		}
	}
}

func TestSeedReproducibleAndWorkerIndependent(t *testing.T) {
	t.Parallel()
	spec := butterworthLP(1e3, 2.5e3, 35)
	c := designCandidate(t, spec, 6, synth.OddOnePole, tols{0.01, 0.05})
	run := func(seed uint64, workers int) string {
		r, err := Run(context.Background(), c, spec, Options{Trials: 1500, Seed: seed, Workers: workers})
		if err != nil {
			t.Fatal(err)
		}
		b, err := json.Marshal(r)
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	ref := run(42, 2)
	for _, w := range []int{1, 2, 3, 7} {
		t.Run("workers "+string(rune('0'+w)), func(t *testing.T) {
			if got := run(42, w); got != ref {
				t.Errorf("seed 42 with %d workers differs from 2 workers", w)
			}
		})
	}
	if run(43, 2) == ref {
		t.Error("seeds 42 and 43 gave identical results")
	}
}

func TestJSONFields(t *testing.T) {
	t.Parallel()
	spec := butterworthLP(1e3, 2e3, 40)
	c := designCandidate(t, spec, 8, synth.OddOnePole, tols{0.01, 0.05})
	r, err := Run(context.Background(), c, spec, Options{Trials: 400, Seed: 9})
	if err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(r)
	if err != nil {
		t.Fatalf("marshal: %v", err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"fraction", "ci_low", "ci_high", "trials", "seed", "blame"} {
		if _, ok := m[k]; !ok {
			t.Errorf("JSON lacks %q", k)
		}
	}
	bl, _ := m["blame"].([]any)
	if len(bl) == 0 {
		t.Fatal("no blame entries for a design that loses boards")
	}
	first := bl[0].(map[string]any)
	if _, ok := first["ref"]; !ok {
		t.Error("blame entry lacks ref")
	}
	prev := math.Inf(1)
	for _, e := range bl {
		s := e.(map[string]any)["share"].(float64)
		if s > prev {
			t.Errorf("blame not sorted by share: %v after %v", s, prev)
		}
		prev = s
	}
}

func TestWilsonInterval(t *testing.T) {
	t.Parallel()
	// R. G. Newcombe, "Two-sided confidence intervals for the single
	// proportion: comparison of seven methods", Statistics in Medicine 17
	// (1998), table II, Wilson score method without continuity correction
	// (values from memory, to 4 decimals).
	cases := []struct {
		k, n   int
		lo, hi float64
	}{
		{81, 263, 0.2553, 0.3662},
		{15, 148, 0.0624, 0.1605},
		{0, 20, 0, 0.1611},
		{1, 29, 0.0061, 0.1718},
	}
	for _, c := range cases {
		t.Run("", func(t *testing.T) {
			lo, hi := Wilson(c.k, c.n, z95)
			if !testkit.Abs(6e-5).Equal(lo, c.lo) || !testkit.Abs(6e-5).Equal(hi, c.hi) {
				t.Errorf("Wilson(%d/%d) = %.4f..%.4f, want %.4f..%.4f", c.k, c.n, lo, hi, c.lo, c.hi)
			}
		})
	}
}

func TestBlameSingleCulprit(t *testing.T) {
	t.Parallel()
	// Only Cg has a tolerance: every failure is its doing.
	f0 := 1 / (2 * math.Pi * math.Sqrt(10e3*10e3*20e-9*10e-9))
	c := sallenKey(10e3, 10e3, 20e-9, 10e-9, [4]float64{exactTol, exactTol, exactTol, 0.05})
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: f0 * 0.99, Stop: f0 * 3, StopAtten: 15}
	r, err := Run(context.Background(), c, spec, Options{Trials: 2000, Seed: 4})
	if err != nil {
		t.Fatal(err)
	}
	if r.Yield == 1 || r.Yield == 0 {
		t.Fatalf("fixture should lose some boards, yield %v", r.Yield)
	}
	if len(r.Blame) != 1 || r.Blame[0].Ref != "C2" || !testkit.Abs(1e-12).Equal(r.Blame[0].Share, 1) || r.Unattributed > 1e-12 {
		t.Errorf("blame %+v (unattributed %v), want all on C2", r.Blame, r.Unattributed)
	}
}

func TestAdviceIsComputed(t *testing.T) {
	t.Parallel()
	spec := butterworthLP(1e3, 2e3, 40)
	c := designCandidate(t, spec, 8, synth.OddOnePole, tols{0.01, 0.01})
	// The high-Q section's Cg (C8) is a 10 % part.
	setTol(c, "C8", 0.10)
	opt := Options{Trials: 2000, Seed: 21, PassMargin: 0.5, StopMargin: 0.5}
	r, err := Run(context.Background(), c, spec, opt)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Blame) == 0 || r.Blame[0].Ref != "C8" {
		t.Fatalf("blame %+v, want C8 first", r.Blame)
	}
	if len(r.Remedies) == 0 || r.Remedies[0].Ref != "C8" {
		t.Fatalf("remedies %+v, want one for C8", r.Remedies)
	}
	rm := r.Remedies[0]
	if rm.Yield <= r.Yield {
		t.Errorf("a tighter C8 (%v) gives %v, not above %v", rm.To, rm.Yield, r.Yield)
	}
	// The remedy's yield is what a separate run with that part gives.
	c2 := cloneCandidate(c)
	setTol(c2, "C8", rm.To)
	o2 := opt
	o2.Brief = true
	r2, err := Run(context.Background(), c2, spec, o2)
	if err != nil {
		t.Fatal(err)
	}
	if r2.Yield != rm.Yield {
		t.Errorf("remedy says %v, a run with C8 at %v gives %v", rm.Yield, rm.To, r2.Yield)
	}
	joined := strings.Join(r.Advice, " ")
	if !strings.Contains(joined, "C8") || !strings.Contains(joined, tolString(rm.To)) {
		t.Errorf("advice %q does not name C8 and %s", joined, tolString(rm.To))
	}
}

func TestNeededMarginReachesTarget(t *testing.T) {
	t.Parallel()
	spec := butterworthLP(1e3, 2e3, 40)
	c := designCandidate(t, spec, 8, synth.OddOnePole, tols{0.01, 0.05})
	opt := Options{Trials: 2000, Seed: 8, Brief: true}
	r, err := Run(context.Background(), c, spec, opt)
	if err != nil {
		t.Fatal(err)
	}
	if r.Needed == nil {
		t.Fatalf("yield %v below target but no needed margin", r.Yield)
	}
	check := func(name string, pm, sm float64) {
		t.Run(name, func(t *testing.T) {
			o := opt
			o.PassMargin, o.StopMargin = pm, sm
			r2, err := Run(context.Background(), c, spec, o)
			if err != nil {
				t.Fatal(err)
			}
			if r2.Yield < DefaultTargetYield-1e-12 {
				t.Errorf("margins %.3f/%.3f dB give %v, below the target", pm, sm, r2.Yield)
			}
			// A slightly narrower window must miss the target (the margin
			// is the smallest that works).
			o.PassMargin, o.StopMargin = math.Max(0, pm-0.02), math.Max(0, sm-0.02)
			if pm == 0 {
				o.PassMargin = 0
			}
			if sm == 0 {
				o.StopMargin = 0
			}
			r3, err := Run(context.Background(), c, spec, o)
			if err != nil {
				t.Fatal(err)
			}
			if r3.Yield >= 0.95 && (pm > 0.02 || sm > 0.02) {
				t.Errorf("margins 0.02 dB narrower still give %v", r3.Yield)
			}
		})
	}
	m := r.Needed
	check("balanced", m.Balanced, m.Balanced)
	if m.PassOnly != nil {
		check("pass only", *m.PassOnly, 0)
	}
	if m.StopOnly != nil {
		check("stop only", 0, *m.StopOnly)
	}
}

func TestNominalOnLimitLosesHalf(t *testing.T) {
	t.Parallel()
	// A Butterworth edge placed at fp sits on Ap by construction; with
	// symmetric tolerances about half the boards fall on each side (the
	// issue's statement; symmetry of the uniform draw about nominal).
	spec := butterworthLP(1e3, 3e3, 30) // order 4 has 15 dB of stopband slack
	c := designCandidate(t, spec, 4, synth.OddOnePole, tols{0.01, 0.05})
	r, err := Run(context.Background(), c, spec, Options{Trials: 4000, Seed: 2})
	if err != nil {
		t.Fatal(err)
	}
	frac := float64(r.FailPassband) / 4000
	if frac < 0.4 || frac > 0.6 {
		t.Errorf("%.3f of the boards fail the passband, want about half", frac)
	}
	found := false
	for _, w := range r.Warnings {
		if strings.Contains(w, "sits on the passband limit") {
			found = true
		}
	}
	if !found {
		t.Errorf("no on-the-limit warning in %q", r.Warnings)
	}
	if r.FailStopband != 0 {
		t.Errorf("%d boards fail a stopband with 15 dB slack", r.FailStopband)
	}
}

func TestRefitMovesEdgeInside(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		spec synth.Spec
		n    int
	}{
		{"butterworth lowpass", butterworthLP(1e3, 3e3, 30), 4},
		{"butterworth highpass", synth.Spec{Kind: synth.HighPass, Approx: synth.Butterworth, Pass: 1e3, Stop: 300, StopAtten: 30}, 4},
		{"chebyshev lowpass", synth.Spec{Kind: synth.LowPass, Approx: synth.Chebyshev, Ripple: 1, Pass: 1e3, Stop: 2.5e3, StopAtten: 30}, 4},
		{"bessel lowpass", synth.Spec{Kind: synth.LowPass, Approx: synth.Bessel, Pass: 1e3, Stop: 4e3, StopAtten: 15}, 5},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := designCandidate(t, tc.spec, tc.n, synth.OddOnePole, tols{0.01, 0.05})
			var asked []synth.Spec
			refit := func(s synth.Spec) (*optimize.Candidate, error) {
				asked = append(asked, s)
				return designCandidate(t, s, s.Order, s.Odd, tols{0.01, 0.05}), nil
			}
			r, err := Run(context.Background(), c, tc.spec, Options{Trials: 2000, Seed: 6, Refit: refit})
			if err != nil {
				t.Fatal(err)
			}
			if len(asked) != 1 || r.Refit == nil {
				t.Fatalf("refit asked %d times, result %+v (warnings %q)", len(asked), r.Refit, r.Warnings)
			}
			s := asked[0]
			if s.Order != tc.n {
				t.Errorf("refit order %d, want %d", s.Order, tc.n)
			}
			// The refit is the fit's default path: the same specification
			// with the target placed inside it, whose design margins it
			// reports.
			if s.Placement != synth.PlaceInside {
				t.Errorf("refit placement %v, want inside", s.Placement)
			}
			d, err := synth.NewDesign(s, s.Order, s.Odd)
			if err != nil {
				t.Fatal(err)
			}
			p := d.Placing
			if p.Used != synth.PlaceInside || !(p.PassMargin > 0 && p.StopMargin > 0) {
				t.Errorf("refit design placing %+v, want inside with positive margins", p)
			}
			if r.Refit.PassMargin != p.PassMargin || r.Refit.StopMargin != p.StopMargin || r.Refit.Pass != p.Edge {
				t.Errorf("refit reports margins %.4f/%.4f dB and edge %g Hz, the design %.4f/%.4f dB and %g Hz",
					r.Refit.PassMargin, r.Refit.StopMargin, r.Refit.Pass, p.PassMargin, p.StopMargin, p.Edge)
			}
			if r.Refit.Yield <= r.Yield {
				t.Errorf("refit yield %v not above %v", r.Refit.Yield, r.Yield)
			}
		})
	}
}

func TestOptionsErrors(t *testing.T) {
	t.Parallel()
	spec := butterworthLP(1e3, 2e3, 40)
	c := designCandidate(t, spec, 8, synth.OddOnePole, tols{0.01, 0.05})
	for _, o := range []Options{{Trials: -1}, {TargetYield: 1.5}, {Dist: "triangular"}, {PassMargin: math.NaN()}} {
		if _, err := Run(context.Background(), c, spec, o); fault.KindOf(err) != fault.Invalid {
			t.Errorf("options %+v: error %v, want invalid", o, err)
		}
	}
	bad := cloneCandidate(c)
	bad.Sections[0].Components[0].Parts[0].Tolerance = 1.5
	if _, err := Run(context.Background(), bad, spec, Options{}); fault.KindOf(err) != fault.Invalid {
		t.Errorf("tolerance 150%%: error %v, want invalid", err)
	}
	if _, err := ParseDist("normal"); err != nil {
		t.Error(err)
	}
}

// TestUnknownToleranceWarned: a part whose stock row gives no tolerance is
// simulated with the stated default (5 % for a capacitor, common practice,
// no source), exactly as if the stock gave 5 %; the result says so and
// names the position.
func TestUnknownToleranceWarned(t *testing.T) {
	t.Parallel()
	// Invented values: a 1 kHz Butterworth section.
	c := sallenKey(22.5e3, 22.5e3, 10e-9, 5e-9, [4]float64{0.01, 0.01, 0.05, 0})
	given := sallenKey(22.5e3, 22.5e3, 10e-9, 5e-9, [4]float64{0.01, 0.01, 0.05, DefaultCapacitorTolerance})
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: 2}
	r, err := Run(context.Background(), c, spec, Options{Trials: 400, Seed: 1, Brief: true})
	if err != nil {
		t.Fatal(err)
	}
	rg, err := Run(context.Background(), given, spec, Options{Trials: 400, Seed: 1, Brief: true})
	if err != nil {
		t.Fatal(err)
	}
	if r.Passed != rg.Passed || *r.PassAtten != *rg.PassAtten {
		t.Errorf("no tolerance: %d passed, spread %+v; 5%% given: %d passed, spread %+v (want the same draws)", r.Passed, *r.PassAtten, rg.Passed, *rg.PassAtten)
	}
	found := false
	for _, w := range r.Warnings {
		if strings.Contains(w, "C2") && strings.Contains(w, "no tolerance") && strings.Contains(w, "5%") {
			found = true
		}
	}
	if !found {
		t.Errorf("no warning naming the part without tolerance and the default used: %q", r.Warnings)
	}
}
