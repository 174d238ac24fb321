package optimize

import (
	"context"
	"os"
	"runtime"
	"testing"
	"time"

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

// benchFit runs complete fits of a Butterworth low-pass at 1 kHz of the
// given order (pairs on, default options) and reports the median time.
func benchFit(b *testing.B, items []stock.Item, order int) {
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: order}
	o := DefaultOptions()
	var times []time.Duration
	var values, sections int
	var m0, m1 runtime.MemStats
	b.ReportAllocs()
	b.ResetTimer()
	runtime.ReadMemStats(&m0)
	for i := 0; i < b.N; i++ {
		t0 := time.Now()
		r, err := Fit(context.Background(), items, spec, o)
		if err != nil {
			b.Fatal(err)
		}
		if len(r.Candidates) == 0 {
			b.Fatal("no candidate")
		}
		times = append(times, time.Since(t0))
		values = r.Resistors + r.Capacitors
		sections = 0
		for _, d := range r.Designs {
			sections += len(d.Sections)
		}
	}
	runtime.ReadMemStats(&m1)
	b.ReportMetric(median(times).Seconds(), "s/fit-median")
	// Memory allocated per realisable value and searched section: the
	// issue's bound is that memory grows no faster than their product.
	perOp := float64(m1.TotalAlloc-m0.TotalAlloc) / float64(b.N)
	b.ReportMetric(perOp/float64(values*sections), "B/value-section")
}

func median(d []time.Duration) time.Duration {
	s := append([]time.Duration(nil), d...)
	for i := range s {
		for j := i + 1; j < len(s); j++ {
			if s[j] < s[i] {
				s[i], s[j] = s[j], s[i]
			}
		}
	}
	return s[len(s)/2]
}

func BenchmarkFitSample(b *testing.B) {
	items := sampleStock(b)
	for _, n := range []int{2, 4, 6, 8} {
		b.Run(orderName(n), func(b *testing.B) { benchFit(b, items, n) })
	}
}

func BenchmarkFitFullSeries(b *testing.B) {
	items := fullSeriesStock()
	for _, n := range []int{2, 4, 6, 8} {
		b.Run(orderName(n), func(b *testing.B) { benchFit(b, items, n) })
	}
}

func orderName(n int) string { return "order" + string(rune('0'+n/10)) + string(rune('0'+n%10)) }

// hostileSpecs is a grid of specifications a new user may type that reach
// the edges of what a drawer can build (invented cases): very low and very
// high edges, high orders, large ripple and very high Q.
func hostileSpecs() []struct {
	name string
	spec synth.Spec
} {
	type hs = struct {
		name string
		spec synth.Spec
	}
	lp := func(f float64, n int) synth.Spec {
		return synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: f, Order: n}
	}
	cheb := func(f float64, n int, ripple float64) synth.Spec {
		return synth.Spec{Kind: synth.LowPass, Approx: synth.Chebyshev, Ripple: ripple, Pass: f, Order: n}
	}
	hp := synth.Spec{Kind: synth.HighPass, Approx: synth.Butterworth, Pass: 5e6, Stop: 1.67e6, StopAtten: 40}
	return []hs{
		{"lp-0.01Hz-o2", lp(0.01, 2)}, {"lp-0.05Hz-o2", lp(0.05, 2)}, {"lp-0.5Hz-o2", lp(0.5, 2)},
		{"lp-1MHz-o2", lp(1e6, 2)}, {"lp-2MHz-o2", lp(2e6, 2)}, {"lp-10MHz-o2", lp(10e6, 2)},
		{"lp-1kHz-o1", lp(1e3, 1)}, {"lp-1kHz-o12", lp(1e3, 12)}, {"lp-10Hz-o12", lp(10, 12)},
		{"cheb3dB-1kHz-o8", cheb(1e3, 8, 3)}, {"cheb30dB-1kHz-o2", cheb(1e3, 2, 30)}, {"cheb1dB-1kHz-o12", cheb(1e3, 12, 1)},
		{"hp-5MHz-stop", hp},
	}
}

// BenchmarkFitHostile fits every specification of the hostile grid on the
// sample drawer and reports the median time of each fit and the slowest of
// those medians (the bound: 2 s).
func BenchmarkFitHostile(b *testing.B) {
	items := sampleStock(b)
	o := DefaultOptions()
	var slowest float64
	slowName := ""
	for _, h := range hostileSpecs() {
		var times []time.Duration
		for i := 0; i < b.N; i++ {
			t0 := time.Now()
			if _, err := Fit(context.Background(), items, h.spec, o); err != nil {
				b.Fatalf("%s: %v", h.name, err)
			}
			times = append(times, time.Since(t0))
		}
		m := median(times).Seconds()
		b.ReportMetric(m, "s/"+h.name)
		if m > slowest {
			slowest, slowName = m, h.name
		}
	}
	b.ReportMetric(slowest, "s/slowest-median")
	b.Logf("slowest: %s", slowName)
}
