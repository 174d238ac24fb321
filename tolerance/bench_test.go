package tolerance

import (
	"context"
	"math"
	"sort"
	"syscall"
	"testing"
	"time"

	"drawerfit/optimize"
	"drawerfit/synth"
)

// BenchmarkYield8thOrder is the figure: 10,000 trials of an
// 8th-order design (four Sallen-Key sections, 16 parts) within 1 s on a
// 2-core machine. Brief mode is the Monte Carlo with blame, as used to rank
// candidates; the full run adds worst-case corners and the re-runs behind
// the advice.
func BenchmarkYield8thOrder(b *testing.B) {
	spec := butterworthLP(1e3, 2e3, 40)
	c := designCandidate(b, spec, 8, synth.OddOnePole, tols{0.01, 0.05})
	for _, mode := range []struct {
		name  string
		brief bool
	}{{"brief", true}, {"full", false}} {
		b.Run(mode.name, func(b *testing.B) {
			const trials = 10_000
			for b.Loop() {
				if _, err := Run(context.Background(), c, spec, Options{Trials: trials, Seed: 1, Brief: mode.brief}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(trials*b.N)/b.Elapsed().Seconds(), "trials/s")
		})
	}
}

// BenchmarkReadmeFit is the README's first command (a 1 kHz Butterworth
// low-pass, 40 dB from 3 kHz, on sample-stock.csv) as fit runs it by
// default: the search for the pool (search), the ranking by yield of the
// pool and the best candidate's analysis with the blame (rank; its cost per
// screened candidate is ms/candidate), and both (total, the figure the
// README quotes: within 1.5 s median). classical is the search alone as fit
// ran it before (classical placement, the balanced list of ten).
func BenchmarkReadmeFit(b *testing.B) {
	items := sampleStock(b)
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Stop: 3000, StopAtten: 40,
		Placement: synth.PlaceInside}
	ro := RankOptions{Options: Options{Trials: DefaultTrials, Seed: 1}}
	ctx := context.Background()
	median := func(d []time.Duration) time.Duration {
		s := append([]time.Duration(nil), d...)
		sort.Slice(s, func(i, j int) bool { return s[i] < s[j] })
		return s[len(s)/2]
	}
	// CPU seconds of the process, to quote alongside the wall-clock medians
	// when other work loads the machine.
	cpu := func() float64 {
		var ru syscall.Rusage
		if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
			return math.NaN()
		}
		return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
	}
	fo := optimize.DefaultOptions()
	pool := fo
	pool.Top = PoolSize(fo.Top)
	pool.GoodEnough = poolGoodEnough(spec, fo.GoodEnough)
	b.Run("total", func(b *testing.B) {
		var times []time.Duration
		c0 := cpu()
		for b.Loop() {
			t0 := time.Now()
			res, _, err := FitByYield(ctx, items, spec, fo, ro)
			if err != nil {
				b.Fatal(err)
			}
			best := ro.Options
			best.Brief = true
			if _, err := Run(ctx, res.Candidates[0], res.Spec, best); err != nil {
				b.Fatal(err)
			}
			times = append(times, time.Since(t0))
		}
		b.ReportMetric(median(times).Seconds(), "s/fit-median")
		b.ReportMetric((cpu()-c0)/float64(b.N), "cpu-s/fit")
	})
	b.Run("search", func(b *testing.B) {
		var times []time.Duration
		for b.Loop() {
			t0 := time.Now()
			if _, err := optimize.Fit(ctx, items, spec, pool); err != nil {
				b.Fatal(err)
			}
			times = append(times, time.Since(t0))
		}
		b.ReportMetric(median(times).Seconds(), "s/fit-median")
	})
	b.Run("rank", func(b *testing.B) {
		res, err := optimize.Fit(ctx, items, spec, pool)
		if err != nil {
			b.Fatal(err)
		}
		var times []time.Duration
		c0 := cpu()
		for b.Loop() {
			t0 := time.Now()
			rk, err := RankByYield(ctx, res.Candidates, res.Spec, ro)
			if err != nil {
				b.Fatal(err)
			}
			best := ro.Options
			best.Brief = true
			if _, err := Run(ctx, rk.Listed[0].Candidate, res.Spec, best); err != nil {
				b.Fatal(err)
			}
			times = append(times, time.Since(t0))
		}
		m := median(times)
		b.ReportMetric(m.Seconds(), "s/rank-median")
		b.ReportMetric(float64(m.Microseconds())/1000/float64(len(res.Candidates)), "ms/candidate")
		b.ReportMetric((cpu()-c0)/float64(b.N)*1000/float64(len(res.Candidates)), "cpu-ms/candidate")
	})
	b.Run("classical", func(b *testing.B) {
		cs := spec
		cs.Placement = synth.PlaceEdge
		var times []time.Duration
		c0 := cpu()
		for b.Loop() {
			t0 := time.Now()
			if _, err := optimize.Fit(ctx, items, cs, fo); err != nil {
				b.Fatal(err)
			}
			times = append(times, time.Since(t0))
		}
		b.ReportMetric(median(times).Seconds(), "s/fit-median")
		b.ReportMetric((cpu()-c0)/float64(b.N), "cpu-s/fit")
	})
}
