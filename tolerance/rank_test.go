package tolerance

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"testing"

	"drawerfit/internal/testkit"
	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// sampleStock reads the bundled demonstration drawer (invented data).
func sampleStock(tb testing.TB) []stock.Item {
	tb.Helper()
	f, err := os.Open("../sample-stock.csv")
	if err != nil {
		tb.Fatal(err)
	}
	defer f.Close()
	items, err := stock.ReadCSV(f)
	if err != nil {
		tb.Fatal(err)
	}
	for i := range items {
		items[i].ID = int64(i + 1)
	}
	return items
}

// slackSpec returns a specification whose minimum order is n and which
// leaves slack at that order: fs = 3·fp (fp/3 for a high-pass) and As
// half-way between the attenuations the classical designs of orders n-1
// and n reach there, so order n has half an order's step to spare.
func slackSpec(tb testing.TB, a synth.Approx, k synth.Kind, n int) synth.Spec {
	return slackSpecAt(tb, a, k, n, 3, 0)
}

// slackSpecAt is slackSpec with fs = ratio·fp (fp/ratio for a high-pass)
// and a Chebyshev ripple (0: the default).
func slackSpecAt(tb testing.TB, a synth.Approx, k synth.Kind, n int, ratio, ripple float64) synth.Spec {
	tb.Helper()
	s := synth.Spec{Kind: k, Approx: a, Pass: 1000, Stop: 1000 * ratio, Ripple: ripple}
	if k == synth.HighPass {
		s.Stop = 1000 / ratio
	}
	at := func(order int) float64 {
		c := s
		c.Stop, c.Order = 0, order
		d, err := synth.NewDesign(c, order, synth.OddOnePole)
		if err != nil {
			tb.Fatal(err)
		}
		return d.AttenuationAt(s.Stop)
	}
	lo, hi := at(n-1), at(n)
	s.StopAtten = 0.5 * (lo + hi)
	if got, err := synth.MinOrder(s); err != nil || got != n {
		tb.Fatalf("%s %s: minimum order %d (%v), want %d", a, k, got, err, n)
	}
	return s
}

// independentYield is a Monte Carlo written for the test, sharing no code
// with this package: its own random source (ChaCha8), its own draws (each
// physical part uniform within its stock tolerance, a missing tolerance
// taken as 5 % for capacitors and 1 % for resistors), the combinations
// formed by the textbook rules (series R and parallel C add, the others
// add reciprocally), each section's transfer function from its topology
// (synth.Topology.Coeffs, checked against ngspice in synth), evaluated as
// polynomials in jω, and its own judgement: the passband figure on 2,000
// points from DC to fp (the attenuation relative to the unity passband
// gain, or for Chebyshev the ripple: largest minus smallest gain), the
// attenuation at fs and on 200 points up to 3·fs beyond it (fs/3 for a
// high-pass). It returns the passing count.
func independentYield(c *optimize.Candidate, spec synth.Spec, trials int, seed uint64) int {
	var key [32]byte
	for i := range 8 {
		key[i] = byte(seed >> (8 * i))
	}
	rng := rand.New(rand.NewChaCha8(key))
	draw := func(v, tol float64, k synth.PartKind) float64 {
		if tol == 0 {
			tol = 0.01
			if k == synth.Capacitor {
				tol = 0.05
			}
		}
		return v * (1 + tol*(2*rng.Float64()-1))
	}
	gainDB := func(nums, dens []synth.Poly, f float64) float64 {
		s := complex(0, 2*math.Pi*f)
		h := complex(1, 0)
		for i := range nums {
			var n, d complex128
			p := complex(1, 0)
			for j := range nums[i] {
				n += complex(nums[i][j], 0) * p
				d += complex(dens[i][j], 0) * p
				p *= s
			}
			h *= n / d
		}
		return 20 * math.Log10(cmplx.Abs(h))
	}
	// x on the low-pass axis (0..1 is the passband) to Hz.
	hz := func(x float64) float64 {
		if spec.Kind == synth.HighPass {
			return spec.Pass / x
		}
		return spec.Pass * x
	}
	xs := spec.Stop / spec.Pass
	if spec.Kind == synth.HighPass {
		xs = spec.Pass / spec.Stop
	}
	cheb := spec.Approx == synth.Chebyshev
	passed := 0
	for range trials {
		nums := make([]synth.Poly, len(c.Sections))
		dens := make([]synth.Poly, len(c.Sections))
		for si, sec := range c.Sections {
			vals := make([]float64, len(sec.Components))
			for ci, comp := range sec.Components {
				var sum, inv float64
				for _, p := range comp.Parts {
					v := draw(p.Value, p.Tolerance, comp.Kind)
					sum += v
					inv += 1 / v
				}
				additive := (comp.Kind == synth.Resistor) == (comp.Arrangement == synth.Series)
				switch {
				case len(comp.Parts) == 1:
					vals[ci] = sum
				case additive:
					vals[ci] = sum
				default:
					vals[ci] = 1 / inv
				}
			}
			nums[si], dens[si] = sec.Target.Topology.Coeffs(vals)
		}
		hi, lo := 0.0, 0.0 // unity gain at DC (infinite frequency for a high-pass)
		for i := 1; i <= 2000; i++ {
			g := gainDB(nums, dens, hz(float64(i)/2000))
			hi, lo = math.Max(hi, g), math.Min(lo, g)
		}
		figure := -gainDB(nums, dens, spec.Pass)
		if cheb {
			figure = hi - lo
		}
		ok := figure <= spec.PassAtten+1e-9
		for i := 0; i <= 200 && ok; i++ {
			x := xs * math.Pow(3, float64(i)/200)
			ok = -gainDB(nums, dens, hz(x)) >= spec.StopAtten-1e-9
		}
		if ok {
			passed++
		}
	}
	return passed
}

// agree reports whether two independent binomial estimates k1/n1 and k2/n2
// agree within their combined 95 % intervals: the distance between them is
// at most the sum of the half-widths of their Wilson intervals (the
// intervals overlap), with the interval written out here (Wilson, JASA 22,
// 1927; z = 1.959964, the 97.5 % normal quantile).
func agree(k1, n1, k2, n2 int) (bool, float64, float64) {
	wilson := func(k, n int) (p, half float64) {
		const z = 1.959964
		nn := float64(n)
		p = float64(k) / nn
		half = z / (1 + z*z/nn) * math.Sqrt(p*(1-p)/nn+z*z/(4*nn*nn))
		return p, half
	}
	p1, h1 := wilson(k1, n1)
	p2, h2 := wilson(k2, n2)
	return math.Abs(p1-p2) <= h1+h2, math.Abs(p1 - p2), h1 + h2
}

// TestDefaultFitReachesTargetYield: for specifications with slack, the
// default fit (target placed inside, ranked by yield) lists first a
// candidate whose yield reaches 95 % within its Monte Carlo interval,
// while the classical placement's best (ranked as before, by error and
// parts) does not; both yields agree with the independent Monte Carlo of
// this file, and every listed candidate's "meets spec" agrees with the
// yield analysis's verdict on its nominal board.
func TestDefaultFitReachesTargetYield(t *testing.T) {
	t.Parallel()
	items := sampleStock(t)
	// fs at ratio·fp; a Chebyshev ripple allowance (0: 1 dB). With the
	// drawer's 5 % capacitors a Chebyshev of order 6 or more with 1 dB
	// ripple and half an order's slack reaches only 72 to 84 % (the ripple
	// the high-Q section's tolerances add exceeds the 1 dB allowed, and no
	// placement can give the passband more than Ap), and a Bessel's
	// half-order step at 3·fp is a fraction of a dB: those cases get a
	// wider window here.
	cases := []struct {
		a             synth.Approx
		k             synth.Kind
		n             int
		ratio, ripple float64
	}{
		{synth.Butterworth, synth.LowPass, 5, 3, 0},
		{synth.Chebyshev, synth.HighPass, 4, 3, 0},
		{synth.Butterworth, synth.HighPass, 2, 3, 0},
		{synth.Butterworth, synth.LowPass, 8, 3, 0},
		{synth.Chebyshev, synth.LowPass, 3, 3, 0},
		{synth.Bessel, synth.LowPass, 3, 3, 0},
		{synth.Bessel, synth.HighPass, 4, 3, 0},
		{synth.Butterworth, synth.HighPass, 7, 3, 0},
		{synth.Chebyshev, synth.LowPass, 6, 3, 3},
		{synth.Bessel, synth.LowPass, 6, 6, 0},
	}
	if testing.Short() {
		cases = cases[:1]
	}
	const trials, indep = 2000, 2000
	for _, tc := range cases {
		t.Run(fmt.Sprintf("%s-%s-%d", tc.a, tc.k, tc.n), func(t *testing.T) {
			t.Parallel()
			spec := slackSpecAt(t, tc.a, tc.k, tc.n, tc.ratio, tc.ripple)
			spec.Placement = synth.PlaceInside
			fo := optimize.DefaultOptions()
			ro := RankOptions{Options: Options{Trials: trials, Seed: 5}}
			res, rk, err := FitByYield(context.Background(), items, spec, fo, ro)
			if err != nil {
				t.Fatal(err)
			}
			if rk == nil || len(res.Candidates) == 0 {
				t.Fatalf("nothing listed; limits %q", res.Limits)
			}
			spec = res.Spec // normalised
			best, y := res.Candidates[0], rk.Listed[0].Yield
			if best.Design.Placing.Used != synth.PlaceInside {
				t.Fatalf("best placed %v: %s", best.Design.Placing.Used, best.Design.Placing.Why)
			}
			if y.CIHigh < 0.95 {
				t.Errorf("default best: yield %.4f (%.4f..%.4f), want at least 95 %% within the interval", y.Fraction, y.CILow, y.CIHigh)
			}
			k := independentYield(best, spec, indep, 99)
			if ok, d, half := agree(y.Passed, y.Trials, k, indep); !ok {
				t.Errorf("default best: yield %d/%d, independent Monte Carlo %d/%d: differ by %.4f, more than %.4f", y.Passed, y.Trials, k, indep, d, half)
			}
			for i, c := range res.Candidates {
				r, err := Run(context.Background(), c, spec, Options{Trials: 1, Brief: true})
				if err != nil {
					t.Fatal(err)
				}
				if r.Nominal.Pass != c.MeetsSpec {
					t.Errorf("candidate %d: meets spec %v, the yield analysis judges its nominal board %v (figure %.6f dB)", i+1, c.MeetsSpec, r.Nominal.Pass, r.Nominal.PassAtten)
				}
			}

			// The classical placement, ranked as before (balanced).
			cs := spec
			cs.Placement = synth.PlaceEdge
			cres, err := optimize.Fit(context.Background(), items, cs, fo)
			if err != nil {
				t.Fatal(err)
			}
			if len(cres.Candidates) == 0 {
				t.Logf("the classical placement lists nothing that meets the specification")
				return
			}
			cs = cres.Spec
			cy, _, err := Yield(context.Background(), cres.Candidates[0], cs, ro.Options)
			if err != nil {
				t.Fatal(err)
			}
			if cy.CIHigh >= 0.95 {
				t.Errorf("classical best: yield %.4f (%.4f..%.4f), expected it to miss 95 %%", cy.Fraction, cy.CILow, cy.CIHigh)
			}
			ck := independentYield(cres.Candidates[0], cs, indep, 98)
			if ok, d, half := agree(cy.Passed, cy.Trials, ck, indep); !ok {
				t.Errorf("classical best: yield %d/%d, independent Monte Carlo %d/%d: differ by %.4f, more than %.4f", cy.Passed, cy.Trials, ck, indep, d, half)
			}
			t.Logf("default best %d parts, yield %.4f (independent %.4f); classical best %d parts, yield %.4f (independent %.4f)",
				best.PartCount, y.Fraction, float64(k)/indep, cres.Candidates[0].PartCount, cy.Fraction, float64(ck)/indep)
		})
	}
}

// TestRankByYieldDeterministic: the ranking depends only on the seed and
// the trial counts, not on the number of workers, and follows its key.
func TestRankByYieldDeterministic(t *testing.T) {
	t.Parallel()
	spec := slackSpec(t, synth.Butterworth, synth.LowPass, 3)
	fo := optimize.DefaultOptions()
	fo.Combine, fo.Top = 1, 20
	res, err := optimize.Fit(context.Background(), sampleStock(t), spec, fo) // classical: a spread of yields
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Candidates) < 5 {
		t.Fatalf("only %d candidates", len(res.Candidates))
	}
	var first *Ranking
	for _, workers := range []int{1, 2, 3, 8} {
		rk, err := RankByYield(context.Background(), res.Candidates, spec,
			RankOptions{Options: Options{Trials: 600, Seed: 17, Workers: workers, TargetYield: 0.6}, Top: 6, ScreenTrials: 100})
		if err != nil {
			t.Fatal(err)
		}
		if first == nil {
			first = rk
			continue
		}
		for i := range rk.Listed {
			a, b := first.Listed[i], rk.Listed[i]
			if a.Candidate != b.Candidate || a.Yield != b.Yield || a.Screen != b.Screen {
				t.Fatalf("%d workers: place %d differs from 1 worker (%+v vs %+v)", workers, i+1, b.Yield, a.Yield)
			}
		}
	}
	for i := 1; i < len(first.Listed); i++ {
		p, c := first.Listed[i-1], first.Listed[i]
		switch {
		case !p.Reaches && c.Reaches:
			t.Errorf("place %d misses the target, place %d reaches it", i, i+1)
		case p.Reaches && c.Reaches && p.Candidate.PartCount > c.Candidate.PartCount:
			t.Errorf("places %d and %d: %d parts before %d", i, i+1, p.Candidate.PartCount, c.Candidate.PartCount)
		case !p.Reaches && !c.Reaches && p.Yield.Passed < c.Yield.Passed:
			t.Errorf("places %d and %d: yield %d before %d", i, i+1, p.Yield.Passed, c.Yield.Passed)
		}
		if c.Reaches != (c.Yield.Fraction >= 0.6) {
			t.Errorf("place %d: reaches %v at yield %v", i+1, c.Reaches, c.Yield.Fraction)
		}
	}
	// The confirmed yield of a listed candidate is Run's.
	r, err := Run(context.Background(), first.Listed[0].Candidate, spec, Options{Trials: 600, Seed: 17, Brief: true})
	if err != nil {
		t.Fatal(err)
	}
	testkit.Close(t, "yield of the best, RankByYield vs Run", first.Listed[0].Yield.Fraction, r.Yield, testkit.Abs(0))
}

// TestCornersExact: with few parts the worst case is the true extreme over
// all 2^n corners, each corner analysed from scratch here (no Gray-code
// stepping), and the edge range is ordered.
func TestCornersExact(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name  string
		spec  synth.Spec
		order int
	}{
		{"butterworth-5", butterworthLP(1e3, 3e3, 40), 5},
		{"chebyshev-4", synth.Spec{Kind: synth.LowPass, Approx: synth.Chebyshev, Ripple: 1, Pass: 1e3, Stop: 3e3, StopAtten: 40}, 4},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			c := designCandidate(t, tc.spec, tc.order, synth.OddOnePole, tols{0.01, 0.05})
			spec, b, j, err := prepare(c, tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			_ = spec
			tol := make([]float64, len(b.parts))
			for i, p := range b.parts {
				tol[i] = p.tol
			}
			wc := corners(b, j, tol, &Options{})
			if !wc.Exact || wc.Corners != 1<<len(b.parts) {
				t.Fatalf("%d parts: corners %+v, want all %d", len(b.parts), wc, 1<<len(b.parts))
			}
			pass, stop, lo, hi := math.Inf(-1), math.Inf(1), math.Inf(1), math.Inf(-1)
			ws := b.newWorkspace()
			parts := make([]float64, len(b.parts))
			for m := 0; m < 1<<len(b.parts); m++ {
				for i, p := range b.parts {
					s := -1.0
					if m&(1<<i) != 0 {
						s = 1
					}
					parts[i] = p.nominal * (1 + s*tol[i])
				}
				ws.load(parts)
				mm := j.measure(ws, true)
				pass, stop = math.Max(pass, mm.passAtt), math.Min(stop, mm.stopAtt)
				lo, hi = math.Min(lo, mm.edge), math.Max(hi, mm.edge)
			}
			testkit.Close(t, "worst passband figure", wc.PassAtten, pass, testkit.Abs(1e-12))
			testkit.Close(t, "worst stopband attenuation", *wc.StopAtten, stop, testkit.Abs(1e-12))
			testkit.Close(t, "lowest edge", wc.EdgeLow, lo, testkit.Rel(1e-12))
			testkit.Close(t, "highest edge", wc.EdgeHigh, hi, testkit.Rel(1e-12))
			if !(wc.EdgeLow < wc.EdgeHigh) {
				t.Errorf("edge range %g..%g not ordered", wc.EdgeLow, wc.EdgeHigh)
			}
		})
	}
}
