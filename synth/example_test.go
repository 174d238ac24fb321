package synth_test

import (
	"fmt"
	"math"

	"drawerfit/fault"
	"drawerfit/synth"
)

// A bench supply's ripple filter: pass up to 1 kHz, at least 40 dB down at
// 3 kHz.
func ExampleNewDesign() {
	d, err := synth.NewDesign(synth.Spec{
		Kind: synth.LowPass, Approx: synth.Butterworth,
		Pass: 1000, Stop: 3000, StopAtten: 40,
	}, 0, synth.OddThreePole)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("order", d.Order)
	for _, s := range d.Sections {
		fmt.Printf("%s f0=%.1f Hz Q=%.4f\n", s.Topology.ID(), s.F0, s.Q)
	}
	fmt.Printf("%.3f dB at 1 kHz, %.2f dB at 3 kHz\n", d.AttenuationAt(1000), d.AttenuationAt(3000))
	// Output:
	// order 5
	// three-pole-lowpass f0=1000.0 Hz Q=0.6180
	// sallen-key-lowpass f0=1000.0 Hz Q=1.6180
	// 3.010 dB at 1 kHz, 47.71 dB at 3 kHz
}

func ExampleMinOrder() {
	for _, a := range []synth.Approx{synth.Butterworth, synth.Chebyshev, synth.Bessel} {
		n, err := synth.MinOrder(synth.Spec{Approx: a, Pass: 1000, Stop: 2000, StopAtten: 30})
		if fault.KindOf(err) == fault.Infeasible {
			fmt.Println(a, "infeasible")
			continue
		}
		fmt.Println(a, n)
	}
	// Output:
	// butterworth 5
	// chebyshev 4
	// bessel infeasible
}

func ExampleDesign_Normalised() {
	d, _ := synth.NewDesign(synth.Spec{Approx: synth.Butterworth, Pass: 1000, Order: 3}, 0, synth.OddThreePole)
	v, _ := d.Normalised(0)
	for i, e := range d.Sections[0].Topology.Elements() {
		fmt.Printf("%s (%s) = %.4f\n", e.Ref, e.Symbol, v[i])
	}
	// Output:
	// R1 (R1) = 1.0000
	// R2 (R2) = 1.0000
	// R3 (R3) = 1.0000
	// C1 (Ca) = 1.3926
	// C2 (Cf) = 3.5468
	// C3 (Cb) = 0.2025
}

// A 1 kHz first-order stage with a 47 nF capacitor, as in the classical
// hand procedure.
func ExampleDesign_Scale() {
	d, _ := synth.NewDesign(synth.Spec{Approx: synth.Butterworth, Pass: 1000, Order: 1}, 0, 0)
	st, _ := d.Scale(synth.Scaling{Anchor: 47e-9})
	fmt.Println(st[0])
	// Output:
	// rc-lowpass R1=3.386 kΩ C1=47 nF
}

func ExampleNetlist() {
	st := synth.StageOf(synth.FirstOrderLowPass(), []float64{10e3, 15.9e-9})
	fmt.Print(synth.Netlist([]synth.Stage{st}, synth.NetlistOptions{Title: "1 kHz smoothing stage", FStart: 10, FStop: 1e5, PointsPerDecade: 10}))
	// Output:
	// * 1 kHz smoothing stage
	// * written by drawerfit: only R, C, V and E elements; op-amps as unity followers
	// V1 in 0 AC 1
	// * stage 1: first-order RC low-pass
	// R1 in s1_p 10000
	// C1 s1_p 0 1.59e-08
	// E1 out 0 s1_p out 1e+12
	// .ac dec 10 10 100000
	// .end
}

func ExampleAnalyzeNetlist() {
	const text = `* divider
V1 in 0 AC 1
R1 in out 1k
R2 out 0 3k
.end
`
	h, err := synth.AnalyzeNetlist(text, []float64{100})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.4f\n", real(h[0]))
	// Output:
	// 0.7500
}

func ExampleCascadeResponse() {
	d, _ := synth.NewDesign(synth.Spec{Approx: synth.Bessel, Pass: 500, Order: 4}, 0, 0)
	st, _ := d.Scale(synth.Scaling{})
	h := synth.CascadeResponse(st, 2*math.Pi*500)
	fmt.Printf("%.4f dB, %.2f°\n", synth.MagnitudeDB(h), synth.PhaseDeg(h))
	// Output:
	// -3.0103 dB, -120.84°
}

func ExampleStage_Values() {
	// 10 kΩ made of 8.2 kΩ and 1.8 kΩ in series; 22 nF of two 47 nF in series
	// beside nothing else.
	st := synth.Stage{Topology: synth.FirstOrderLowPass(), Positions: []synth.Position{
		{Arrangement: synth.Series, Parts: []float64{8.2e3, 1.8e3}},
		{Arrangement: synth.Series, Parts: []float64{47e-9, 47e-9}},
	}}
	fmt.Printf("%.0f Ω, %.1f nF\n", st.Values()[0], st.Values()[1]*1e9)
	// Output:
	// 10000 Ω, 23.5 nF
}

func ExampleParseFrequency() {
	for _, s := range []string{"1500", "1.5k", "1.5kHz", "2 MHz", "1.5x"} {
		f, err := synth.ParseFrequency(s)
		if err != nil {
			fmt.Println(err)
			continue
		}
		fmt.Println(f)
	}
	// Output:
	// 1500
	// 1500
	// 1500
	// 2e+06
	// cannot read the frequency "1.5x": write e.g. 1500, 1.5k or 1.5kHz
}

func ExampleSpec_Normalize() {
	s := synth.Spec{Approx: synth.Butterworth, Pass: 1000, Stop: 500, StopAtten: 40}
	fmt.Println(s.Normalize())
	// Output:
	// for a low-pass the stopband edge (500 Hz) must be above the passband edge (1000 Hz)
}

func ExamplePrototype() {
	for _, p := range synth.Prototype(synth.Bessel, 3, 0, synth.BesselDelay) {
		fmt.Printf("%.4f\n", p)
	}
	// Output:
	// (-2.3222+0.0000i)
	// (-1.8389+1.7544i)
}

func ExampleAttenuation() {
	fmt.Printf("%.4f dB\n", synth.Attenuation(complex(0, 1/math.Sqrt2)))
	// Output:
	// 3.0103 dB
}

func ExampleDesign_Target() {
	d, _ := synth.NewDesign(synth.Spec{Kind: synth.HighPass, Approx: synth.Chebyshev, Ripple: 1, Pass: 100, Order: 3}, 0, 0)
	for _, f := range []float64{50, 100, 1000} {
		fmt.Printf("%g Hz: %.3f dB\n", f, synth.MagnitudeDB(d.Target(2*math.Pi*f)))
	}
	// Output:
	// 50 Hz: -22.456 dB
	// 100 Hz: -1.000 dB
	// 1000 Hz: -0.097 dB
}
