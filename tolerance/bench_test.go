package tolerance

import (
	"context"
	"testing"

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
