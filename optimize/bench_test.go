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
