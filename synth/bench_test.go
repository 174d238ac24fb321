package synth

import (
	"math"
	"testing"
)

// benchStages returns one scaled stage of every topology.
func benchStages(b testing.TB) []Stage {
	var out []Stage
	for _, k := range []Kind{LowPass, HighPass} {
		d, err := NewDesign(Spec{Kind: k, Approx: Chebyshev, Ripple: 1, Pass: 1000, Order: 5, Odd: OddThreePole}, 0, 0)
		if err != nil {
			b.Fatal(err)
		}
		st, err := d.Scale(Scaling{})
		if err != nil {
			b.Fatal(err)
		}
		out = append(out, st...)
		d, err = NewDesign(Spec{Kind: k, Approx: Butterworth, Pass: 1000, Order: 1}, 0, 0)
		if err != nil {
			b.Fatal(err)
		}
		st, err = d.Scale(Scaling{})
		if err != nil {
			b.Fatal(err)
		}
		out = append(out, st...)
	}
	return out
}

const benchPoints = 200

// BenchmarkSectionEval measures the exact response of one candidate section
// from its element values (Topology.Eval: coefficients from the values,
// then N(jω)/D(jω)), per frequency point.
func BenchmarkSectionEval(b *testing.B) {
	for _, st := range benchStages(b) {
		b.Run(st.Topology.id, func(b *testing.B) {
			v := st.Values()
			w := make([]float64, benchPoints)
			for i := range w {
				w[i] = 2 * math.Pi * 10 * math.Pow(1e4, float64(i)/benchPoints)
			}
			var sink complex128
			b.ResetTimer()
			for b.Loop() {
				for _, x := range w {
					sink += st.Topology.Eval(v, x)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*benchPoints), "ns/point")
			_ = sink
		})
	}
}

// BenchmarkSectionGain2 measures the fit's hot path: coefficients once per
// candidate, then |H|² per point without complex arithmetic.
func BenchmarkSectionGain2(b *testing.B) {
	for _, st := range benchStages(b) {
		b.Run(st.Topology.id, func(b *testing.B) {
			v := st.Values()
			var sink float64
			for b.Loop() {
				num, den := st.Topology.Coeffs(v)
				for i := 0; i < benchPoints; i++ {
					sink += Gain2(num, den, st.Topology.poles, float64(i+1)*100)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*benchPoints), "ns/point")
			_ = sink
		})
	}
}

// BenchmarkSolve measures Topology.Solve, the fit's step from chosen
// capacitors to exact resistors, for each topology.
func BenchmarkSolve(b *testing.B) {
	for _, k := range []Kind{LowPass, HighPass} {
		d, err := NewDesign(Spec{Kind: k, Approx: Chebyshev, Ripple: 1, Pass: 1000, Order: 5, Odd: OddThreePole}, 0, 0)
		if err != nil {
			b.Fatal(err)
		}
		st, _ := d.Scale(Scaling{})
		for i, sec := range d.Sections {
			caps := st[i].Values()
			b.Run(sec.Topology.id, func(b *testing.B) {
				var dst [][]float64
				for b.Loop() {
					dst, _ = sec.Topology.SolveAppend(caps, sec.Den, dst[:0])
				}
			})
		}
	}
}

// BenchmarkAnalyzeNetlist measures the nodal analysis of a 5th-order
// cascade netlist (parsing included), per frequency point.
func BenchmarkAnalyzeNetlist(b *testing.B) {
	d, _ := NewDesign(Spec{Approx: Chebyshev, Ripple: 1, Pass: 1000, Order: 5, Odd: OddThreePole}, 0, 0)
	st, _ := d.Scale(Scaling{})
	nl := Netlist(st, NetlistOptions{})
	f := logSweep(10, 1e5, benchPoints)
	for b.Loop() {
		if _, err := AnalyzeNetlist(nl, f); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*benchPoints), "ns/point")
}
