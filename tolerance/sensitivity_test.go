package tolerance

import (
	"context"
	"math"
	"strings"
	"testing"

	"drawerfit/internal/testkit"
	"drawerfit/optimize"
	"drawerfit/synth"
)

func TestSensitivitiesSallenKeyAnalytic(t *testing.T) {
	t.Parallel()
	// From the closed forms in docs/check-values.md, "Section circuits", differentiating ln w0 and ln Q:
	// low-pass  w0 = (R1 R2 Cf Cg)^-½, Q = √(R1 R2 Cf Cg)/(Cg(R1+R2)):
	//   S^w0 = -½ for all; S^Q_R1 = ½ - R1/(R1+R2), S^Q_R2 = ½ - R2/(R1+R2),
	//   S^Q_Cf = ½, S^Q_Cg = -½.
	// high-pass w0 = (Rf Rg C1 C2)^-½, Q = √(Rf Rg C1 C2)/(Rf(C1+C2)):
	//   S^Q_C1 = ½ - C1/(C1+C2), S^Q_C2 = ½ - C2/(C1+C2), S^Q_Rf = -½,
	//   S^Q_Rg = ½.
	r1, r2, cf, cg := 12e3, 33e3, 22e-9, 4.7e-9
	lp := sallenKey(r1, r2, cf, cg, [4]float64{0.01, 0.01, 0.05, 0.05})
	c1, c2, rf, rg := 10e-9, 15e-9, 8.2e3, 27e3
	hp := &optimize.Candidate{Sections: []optimize.SectionFit{{
		Target: synth.Section{Topology: synth.SallenKeyHighPass()},
		Components: []optimize.Component{
			singlePart("C1", "C1", synth.Capacitor, c1, 0.05),
			singlePart("C2", "C2", synth.Capacitor, c2, 0.05),
			singlePart("R1", "Rf", synth.Resistor, rf, 0.01),
			singlePart("R2", "Rg", synth.Resistor, rg, 0.01),
		},
	}}}
	cases := []struct {
		name  string
		c     *optimize.Candidate
		wantQ []float64
	}{
		{"lowpass", lp, []float64{0.5 - r1/(r1+r2), 0.5 - r2/(r1+r2), 0.5, -0.5}},
		{"highpass", hp, []float64{0.5 - c1/(c1+c2), 0.5 - c2/(c1+c2), -0.5, 0.5}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			b, err := newBoard(tc.c)
			if err != nil {
				t.Fatal(err)
			}
			s := sensitivities(b)[0]
			for k, cs := range s.Components {
				if !testkit.Abs(1e-8).Equal(cs.F0, -0.5) {
					t.Errorf("%s: S^f0 = %.10f, want -0.5", cs.Ref, cs.F0)
				}
				if !testkit.Abs(1e-8).Equal(cs.Q, tc.wantQ[k]) {
					t.Errorf("%s: S^Q = %.10f, want %.10f", cs.Ref, cs.Q, tc.wantQ[k])
				}
			}
		})
	}
}

func TestSensitivitiesHomogeneity(t *testing.T) {
	t.Parallel()
	// Scaling every resistor by k scales every time constant by k, so w0
	// goes as 1/k and Q is unchanged: for every topology the f0
	// sensitivities to the resistors sum to -1, to the capacitors to -1, and
	// the Q sensitivities of each kind sum to 0 (Euler's theorem for
	// homogeneous functions; a textbook identity of active-filter
	// sensitivity analysis). The 3-pole real pole obeys the same sums.
	specs := []struct {
		spec synth.Spec
		odd  synth.Odd
	}{
		{synth.Spec{Kind: synth.LowPass, Approx: synth.Chebyshev, Ripple: 0.5, Pass: 1e3, Order: 5}, synth.OddThreePole},
		{synth.Spec{Kind: synth.HighPass, Approx: synth.Bessel, Pass: 1e3, Order: 5}, synth.OddThreePole},
		{synth.Spec{Kind: synth.HighPass, Approx: synth.Butterworth, Pass: 1e3, Order: 3}, synth.OddOnePole},
		{synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1e3, Order: 3}, synth.OddOnePole},
	}
	for _, sp := range specs {
		c := designCandidate(t, sp.spec, sp.spec.Order, sp.odd, tols{0.01, 0.05})
		b, err := newBoard(c)
		if err != nil {
			t.Fatal(err)
		}
		for si, ss := range sensitivities(b) {
			t.Run(ss.Topology, func(t *testing.T) {
				var f0R, f0C, qR, qC, wrR, wrC float64
				for k, cs := range ss.Components {
					if b.sections[si].topo.Element(k).Kind == synth.Resistor {
						f0R, qR, wrR = f0R+cs.F0, qR+cs.Q, wrR+cs.RealF0
					} else {
						f0C, qC, wrC = f0C+cs.F0, qC+cs.Q, wrC+cs.RealF0
					}
				}
				const tol = 1e-7
				if !testkit.Abs(tol).Equal(f0R, -1) || !testkit.Abs(tol).Equal(f0C, -1) || !testkit.Abs(tol).Equal(qR, 0) || !testkit.Abs(tol).Equal(qC, 0) {
					t.Errorf("sums: f0 R %.9f C %.9f, Q R %.9f C %.9f", f0R, f0C, qR, qC)
				}
				if b.sections[si].topo.Poles() == 3 && (!testkit.Abs(tol).Equal(wrR, -1) || !testkit.Abs(tol).Equal(wrC, -1)) {
					t.Errorf("real pole sums: R %.9f C %.9f", wrR, wrC)
				}
			})
		}
	}
}

func TestWorstCaseFirstOrder(t *testing.T) {
	t.Parallel()
	// A buffered RC low-pass: the -3 dB frequency is 1/(2πRC) exactly, so
	// the corners are R and C both at +tol (lowest) and both at -tol
	// (highest).
	r, cv := 10e3, 15.9e-9
	c := &optimize.Candidate{Sections: []optimize.SectionFit{{
		Target: synth.Section{Topology: synth.FirstOrderLowPass()},
		Components: []optimize.Component{
			singlePart("R1", "R", synth.Resistor, r, 0.01),
			singlePart("C1", "C", synth.Capacitor, cv, 0.05),
		},
	}}}
	f := 1 / (2 * math.Pi * r * cv)
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: f, Stop: 10 * f, StopAtten: 19}
	res, err := Run(context.Background(), c, spec, Options{Trials: 500, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	wc := res.WorstCase
	lo := 1 / (2 * math.Pi * r * 1.01 * cv * 1.05)
	hi := 1 / (2 * math.Pi * r * 0.99 * cv * 0.95)
	if !testkit.Rel(1e-9).Equal(wc.EdgeLow, lo) || !testkit.Rel(1e-9).Equal(wc.EdgeHigh, hi) {
		t.Errorf("edge corners %.6f..%.6f Hz, want %.6f..%.6f", wc.EdgeLow, wc.EdgeHigh, lo, hi)
	}
	// The Monte Carlo never leaves the corners.
	if res.Edge.Min < lo*(1-1e-9) || res.Edge.Max > hi*(1+1e-9) {
		t.Errorf("Monte Carlo edge %.4f..%.4f outside the corners %.4f..%.4f", res.Edge.Min, res.Edge.Max, lo, hi)
	}
	// Worst passband: the lowest edge, attenuation at fp = 10 log10(1 + (f/lo)²).
	wantPass := 10 * math.Log10(1+(f/lo)*(f/lo))
	if !testkit.Abs(1e-9).Equal(wc.PassAtten, wantPass) || wc.PassOK {
		t.Errorf("worst passband %.9f dB (ok %v), want %.9f dB and a failure", wc.PassAtten, wc.PassOK, wantPass)
	}
	wantStop := 10 * math.Log10(1+(10*f/hi)*(10*f/hi))
	if wc.StopAtten == nil || !testkit.Abs(1e-9).Equal(*wc.StopAtten, wantStop) {
		t.Errorf("worst stopband %v dB, want %.9f", wc.StopAtten, wantStop)
	}
}

func TestChebyshevRippleEdge(t *testing.T) {
	t.Parallel()
	// Exact parts: the ripple-band edge is fp and the passband figure is the
	// ripple, for even and odd orders (docs/check-values.md, "Conventions": fp is the ripple-band edge
	// and Ap the ripple).
	for _, n := range []int{4, 5} {
		spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Chebyshev, Ripple: 0.5, Pass: 2e3, Stop: 5e3, StopAtten: 30}
		c := designCandidate(t, spec, n, synth.OddOnePole, tols{0, 0})
		r, err := Run(context.Background(), c, spec, Options{Trials: 10, Brief: true})
		if err != nil {
			t.Fatal(err)
		}
		if !testkit.Rel(1e-7).Equal(r.Nominal.Edge, 2e3) || !testkit.Abs(1e-7).Equal(r.Nominal.PassAtten, 0.5) {
			t.Errorf("n=%d: edge %.6f Hz, ripple %.8f dB, want 2000 Hz and 0.5 dB", n, r.Nominal.Edge, r.Nominal.PassAtten)
		}
		if r.EdgeKind != EdgeRipple {
			t.Errorf("edge kind %q", r.EdgeKind)
		}
	}
}

func TestBiasResistors(t *testing.T) {
	t.Parallel()
	// The DC resistance at each follower's + input (docs/check-values.md, "Practical rules",
	// practical rules): R1+R2, R1+R2+R3, Rg or Rb for the high-passes, R for
	// first-order sections.
	cases := []struct {
		spec synth.Spec
		odd  synth.Odd
	}{
		{synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1e3, Order: 5}, synth.OddThreePole},
		{synth.Spec{Kind: synth.HighPass, Approx: synth.Butterworth, Pass: 1e3, Order: 5}, synth.OddThreePole},
		{synth.Spec{Kind: synth.LowPass, Approx: synth.Bessel, Pass: 1e3, Order: 3}, synth.OddOnePole},
		{synth.Spec{Kind: synth.HighPass, Approx: synth.Bessel, Pass: 1e3, Order: 3}, synth.OddOnePole},
	}
	want := map[string]string{
		"sallen-key-lowpass": "R1+R2", "three-pole-lowpass": "R1+R2+R3",
		"sallen-key-highpass": "R2", "three-pole-highpass": "R3",
		"rc-lowpass": "R1", "rc-highpass": "R1",
	}
	for _, tc := range cases {
		c := designCandidate(t, tc.spec, tc.spec.Order, tc.odd, tols{0.01, 0.05})
		splitParts(c, 0, 0)
		brs, err := BiasResistors(c)
		if err != nil {
			t.Fatal(err)
		}
		for i, br := range brs {
			topo := c.Sections[i].Target.Topology
			t.Run(topo.ID(), func(t *testing.T) {
				sum := 0.0
				for _, ref := range strings.Split(want[topo.ID()], "+") {
					for k, e := range topo.Elements() {
						if e.Ref == ref {
							sum += c.Sections[i].Components[k].Value
						}
					}
				}
				if !testkit.Rel(1e-12).Equal(br.Ohms, sum) {
					t.Errorf("%g Ω, want %g Ω (%s)", br.Ohms, sum, want[topo.ID()])
				}
				if br.Path != want[topo.ID()] {
					t.Errorf("path %q, want %q", br.Path, want[topo.ID()])
				}
			})
		}
	}
}

func TestPracticalWarnings(t *testing.T) {
	t.Parallel()
	c := sallenKey(680, 560e3, 22e-9, 47e-12, [4]float64{0.01, 0.01, 0.05, 0.05})
	c.Sections[0].Components[2].Parts[0].Dielectric = "x7r"
	w, err := Practical(c)
	if err != nil {
		t.Fatal(err)
	}
	joined := strings.Join(w, "\n")
	for _, want := range []string{"R1 (section 1) is 680 Ω, below about 1 kΩ", "R2 (section 1) is 560 kΩ, above about 470 kΩ",
		"C2 (Cg, section 1) is 47 pF, below about 100 pF", "C1 (Cf, section 1) uses a X7R ceramic"} {
		if !strings.Contains(joined, want) {
			t.Errorf("warnings lack %q:\n%s", want, joined)
		}
	}
	if strings.Count(joined, "common practice, no source") != 4 {
		t.Errorf("every practical warning should say it is common practice:\n%s", joined)
	}
	ok := sallenKey(10e3, 10e3, 22e-9, 10e-9, [4]float64{0.01, 0.01, 0.05, 0.05})
	if w, _ := Practical(ok); len(w) != 0 {
		t.Errorf("unremarkable values: %q", w)
	}
	for code, class2 := range map[string]bool{"X7R": true, "x5r": true, "Y5V": true, "Z5U": true, "C0G": false, "NP0": false, "npo": false, "PP": false, "": false} {
		if ClassTwoCeramic(code) != class2 {
			t.Errorf("ClassTwoCeramic(%q) = %v", code, !class2)
		}
	}
}
