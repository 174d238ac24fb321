package synth

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"drawerfit/internal/testkit"
)

// gainGrid is a set of specifications with passband gain, each family and
// kind, odd and even orders.
func gainGrid() []Spec {
	var out []Spec
	for _, kind := range []Kind{LowPass, HighPass} {
		for _, top := range []TopologyChoice{TopologySallenKey, TopologyMFB} {
			for _, c := range []struct {
				approx Approx
				ripple float64
				order  int
				gain   float64
			}{
				{Butterworth, 0, 2, 6}, {Butterworth, 0, 5, 20}, {Chebyshev, 0.5, 6, 40},
				{Bessel, 0, 4, 12}, {Chebyshev, 1, 8, 26},
			} {
				out = append(out, Spec{Kind: kind, Approx: c.approx, Ripple: c.ripple, Pass: 1000,
					Order: c.order, GainDB: c.gain, Topology: top})
			}
		}
	}
	return out
}

func gainSpecName(s Spec) string {
	return fmt.Sprintf("%s/%s-%s-%d/%gdB", s.Topology, s.Approx, s.Kind, s.Order, s.GainDB)
}

// TestGainDesignsMatchNodalAnalysis holds the closed form of the gain and
// multiple-feedback sections (Topology.Coeffs of the scaled stages, some
// positions split into series and parallel parts) to the independent nodal
// analysis of their netlist (ideal op-amps of gain IdealGain) within
// 1e-6 dB and 1e-6°, checks that the
// scaled stages realise the ideal target, that the passband gain is the
// specification's (at DC for a low-pass, at 1000·fp for a high-pass) and
// that the phase there is 180° exactly when the design inverts.
func TestGainDesignsMatchNodalAnalysis(t *testing.T) {
	t.Parallel()
	for _, s := range gainGrid() {
		t.Run(gainSpecName(s), func(t *testing.T) {
			t.Parallel()
			d, err := NewDesign(s, 0, 0)
			if err != nil {
				t.Fatal(err)
			}
			testkit.Close(t, "design gain dB", d.GainDB(), s.GainDB, testkit.Abs(1e-9))
			for _, sec := range d.Sections {
				if sec.Topology.poles == 2 {
					want := FamilySallenKey
					if s.Topology == TopologyMFB {
						want = FamilyMFB
					}
					if sec.Topology.family != want {
						t.Fatalf("section %s is %s, asked for %s", sec.Topology.id, sec.Topology.family, s.Topology)
					}
				}
			}
			stages, err := d.Scale(Scaling{})
			if err != nil {
				t.Fatal(err)
			}
			stages = splitParts(stages)
			lo, hi := d.Band()
			freqs := logSweep(lo, hi, 61)
			// The ideal op-amps at gain 1e12 (the nodal analysis refines its
			// solution; the default 1e9 of gain stages is for ngspice).
			nl := Netlist(stages, NetlistOptions{FStart: lo, FStop: hi, IdealGain: IdealGain})
			h, err := AnalyzeNetlist(nl, freqs)
			if err != nil {
				t.Fatalf("%v\n%s", err, nl)
			}
			worst, worstPh, worstT := 0.0, 0.0, 0.0
			for i, f := range freqs {
				w := 2 * math.Pi * f
				cf := CascadeResponse(stages, w)
				worst = math.Max(worst, math.Abs(MagnitudeDB(h[i])-MagnitudeDB(cf)))
				worstPh = math.Max(worstPh, math.Abs(PhaseDeg(h[i]/cf)))
				worstT = math.Max(worstT, math.Abs(MagnitudeDB(cf)-MagnitudeDB(d.Target(w))))
			}
			if worst > 1e-6 || worstPh > 1e-6 {
				t.Errorf("closed form vs nodal analysis: %.3g dB, %.3g° apart", worst, worstPh)
			}
			if worstT > 1e-9 {
				t.Errorf("scaled stages vs ideal target: %.3g dB apart", worstT)
			}
			// Passband gain and sign from the nodal analysis.
			fpb := s.Pass * 1e-6
			if s.Kind == HighPass {
				fpb = s.Pass * 1e6
			}
			hp, err := AnalyzeNetlist(nl, []float64{fpb})
			if err != nil {
				t.Fatal(err)
			}
			testkit.Close(t, "passband gain dB", MagnitudeDB(hp[0]), s.GainDB, testkit.Abs(1e-6))
			wantPh := 0.0
			if d.Inverting() {
				wantPh = 180
			}
			if ph := math.Abs(PhaseDeg(hp[0])); math.Abs(ph-wantPh) > 1e-3 {
				t.Errorf("passband phase %.4g°, want %g° (inverting %v)", PhaseDeg(hp[0]), wantPh, d.Inverting())
			}
			// Attenuation relative to the passband gain: Ap at fp, except for
			// even Chebyshev orders, whose DC gain is the ripple minimum.
			if s.Approx != Chebyshev || s.Order%2 == 1 {
				testkit.Close(t, "attenuation at fp", d.AttenuationAt(s.Pass), d.Spec.PassAtten, testkit.Abs(1e-6))
			}
		})
	}
}

// TestSolveGainReproducesSection checks the gain solvers: for random
// chosen elements (capacitors, divider resistor), every exact solution
// reproduces the section's denominator and passband gain and keeps the
// chosen values; the multiple-feedback low-pass has a solution exactly when
// Cg/Cf >= 4Q²(1+G) (Texas Instruments, Op Amps for Everyone, SLOD006B,
// ch. 16, from memory; docs/check-values.md, "Section circuits").
func TestSolveGainReproducesSection(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(11, 4))
	for _, top := range []*Topology{&sallenKeyGainLowPass, &sallenKeyGainHighPass, &mfbLowPass, &mfbHighPass} {
		t.Run(top.id, func(t *testing.T) {
			t.Parallel()
			for trial := 0; trial < 400; trial++ {
				q := 0.5 + 6*rng.Float64()
				gain := 1 + 30*rng.Float64()
				_, den := pairPoly(top.response, 2*math.Pi*1e3, q)
				v := make([]float64, len(top.elements))
				for _, i := range top.chosen {
					x := math.Pow(10, 2*rng.Float64()-1)
					if top.elements[i].Kind == Capacitor {
						v[i] = 1e-8 * x
					} else {
						v[i] = 1e4 * x
					}
				}
				if top == &mfbHighPass {
					v[0] = gain * v[1] // the gain is C1/C2
				}
				sols, ok := top.SolveGain(v, den, gain)
				if top == &mfbLowPass {
					need := 4 * q * q * (1 + gain)
					if r := v[3] / v[4]; ok != (r >= need) && math.Abs(r/need-1) > 1e-9 {
						t.Fatalf("Cg/Cf = %g, 4Q²(1+G) = %g: solvable %v", r, need, ok)
					}
				}
				if top == &sallenKeyGainHighPass || top == &mfbHighPass {
					if !ok {
						t.Fatalf("no solution for %v, Q %g, gain %g", v, q, gain)
					}
				}
				if !ok {
					continue
				}
				for _, sol := range sols {
					num, got := top.Coeffs(sol)
					for k := 1; k <= 2; k++ {
						testkit.Close(t, fmt.Sprintf("den[%d]", k), got[k], den[k], testkit.Rel(1e-9))
					}
					pg := num[0]
					if top.response == HighPass {
						pg = num[2] / got[2]
					}
					testkit.Close(t, "passband gain", math.Abs(pg), gain, testkit.Rel(1e-9))
					if (pg < 0) != top.inverting {
						t.Fatalf("passband gain %g, inverting %v", pg, top.inverting)
					}
					for _, i := range top.chosen {
						if sol[i] != v[i] {
							t.Fatalf("chosen element %s changed: %g -> %g", top.elements[i].Ref, v[i], sol[i])
						}
					}
					for i, x := range sol {
						if !(x > 0) {
							t.Fatalf("element %s = %g", top.elements[i].Ref, x)
						}
					}
				}
			}
		})
	}
}

// TestGainAssignment checks the gain-sharing rule of the package doc:
// equal shares in dB over the 2-pole sections, 1-pole and 3-pole sections
// at unity, and the refusals.
func TestGainAssignment(t *testing.T) {
	t.Parallel()
	d, err := NewDesign(Spec{Approx: Butterworth, Pass: 1000, Order: 5, GainDB: 20}, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	for i, sec := range d.Sections {
		want := 1.0
		if sec.Topology.poles == 2 {
			want = math.Sqrt(10) // 20 dB over two 2-pole sections: 10 dB each
		}
		testkit.Close(t, fmt.Sprintf("section %d gain", i+1), sec.Gain, want, testkit.Rel(1e-12))
	}
	if _, err := NewDesign(Spec{Approx: Butterworth, Pass: 1000, Order: 3, Odd: OddThreePole, GainDB: 6}, 0, 0); err == nil {
		t.Error("a gain with only a 3-pole section was accepted")
	}
	if _, err := NewDesign(Spec{Approx: Butterworth, Pass: 1000, Order: 5, GainDB: 6, Topology: TopologyMFB, Polarity: PolarityKeep}, 0, 0); err != nil {
		t.Errorf("two MFB sections keep the polarity: %v", err)
	}
	if _, err := NewDesign(Spec{Approx: Butterworth, Pass: 1000, Order: 6, GainDB: 6, Topology: TopologyMFB, Polarity: PolarityKeep}, 0, 0); err == nil {
		t.Error("three MFB sections with polarity keep were accepted")
	}
	for _, g := range []float64{-1, 40.5, math.NaN()} {
		s := Spec{Approx: Butterworth, Pass: 1000, Order: 2, GainDB: g}
		if err := s.Normalize(); err == nil {
			t.Errorf("gain %g dB accepted", g)
		}
	}
}

// TestVariants checks the topology assignments the fit searches: every
// combination under auto, none that inverts under polarity keep, and the
// summary names.
func TestVariants(t *testing.T) {
	t.Parallel()
	d, err := NewDesign(Spec{Approx: Butterworth, Pass: 1000, Order: 5, GainDB: 20}, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	vs := d.Variants()
	if len(vs) != 4 {
		t.Fatalf("%d variants of RC + two 2-pole sections, want 4", len(vs))
	}
	names := map[string]bool{}
	for _, v := range vs {
		names[v.TopologySummary()] = true
		testkit.Close(t, "variant gain", v.GainDB(), 20, testkit.Abs(1e-9))
	}
	for _, want := range []string{"RC + 2 × SK", "RC + SK + MFB", "RC + MFB + SK", "RC + 2 × MFB"} {
		if !names[want] {
			t.Errorf("no variant %q among %v", want, names)
		}
	}
	if d.Sections[1].Topology != SallenKeyGainLowPass() {
		t.Errorf("Variants changed the design")
	}
	s := d.Spec
	s.Polarity = PolarityKeep
	k, err := NewDesign(s, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, v := range k.Variants() {
		if v.Inverting() {
			t.Errorf("polarity keep listed the inverting %s", v.TopologySummary())
		}
	}
	if n := len(k.Variants()); n != 2 {
		t.Errorf("polarity keep: %d variants, want 2 (no MFB, or both)", n)
	}
}
