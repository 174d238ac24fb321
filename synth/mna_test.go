package synth

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"drawerfit/fault"
	"drawerfit/internal/testkit"
)

// logSweep returns n frequencies spaced logarithmically from lo to hi (Hz).
func logSweep(lo, hi float64, n int) []float64 {
	f := make([]float64, n)
	for i := range f {
		f[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return f
}

// designGrid lists specifications covering every approximation, both
// kinds, orders 1..12 and both odd-order arrangements.
func designGrid() []Spec {
	var out []Spec
	type fam struct {
		a      Approx
		ripple float64
		norm   BesselNorm
	}
	fams := []fam{{Butterworth, 0, 0}, {Chebyshev, 0.5, 0}, {Chebyshev, 1, 0}, {Chebyshev, 3, 0}, {Bessel, 0, BesselMag}, {Bessel, 0, BesselDelay}}
	for _, f := range fams {
		for _, k := range []Kind{LowPass, HighPass} {
			for n := 1; n <= MaxOrder; n++ {
				odds := []Odd{OddOnePole}
				if n%2 == 1 && n > 1 {
					odds = append(odds, OddThreePole)
				}
				for _, o := range odds {
					out = append(out, Spec{Kind: k, Approx: f.a, Ripple: f.ripple, BesselNorm: f.norm, Pass: 1000, Order: n, Odd: o})
				}
			}
		}
	}
	return out
}

func specName(s Spec) string {
	name := fmt.Sprintf("%s/%s/n=%d/%s", s.Kind, s.Approx, s.Order, s.Odd)
	if s.Approx == Chebyshev {
		name += fmt.Sprintf("/%gdB", s.Ripple)
	}
	if s.Approx == Bessel {
		name += "/" + s.BesselNorm.String()
	}
	return name
}

// splitParts turns every second element into two parts (alternately in
// series and in parallel) with the same combined value, to exercise
// multi-part positions in netlists.
func splitParts(stages []Stage) []Stage {
	out := make([]Stage, len(stages))
	k := 0
	for i, st := range stages {
		v := st.Values()
		ns := StageOf(st.Topology, v)
		for j := range v {
			k++
			if k%2 == 0 {
				continue
			}
			kind := st.Topology.Elements()[j].Kind
			// Parts a and b with a+b = v (resistors in series, capacitors in
			// parallel) or 1/a+1/b = 1/v (the other way round).
			add := Series
			if kind == Capacitor {
				add = Parallel
			}
			if k%4 == 1 {
				ns.Positions[j] = Position{Arrangement: add, Parts: []float64{0.3 * v[j], 0.7 * v[j]}}
			} else {
				arr := Parallel
				if add == Parallel {
					arr = Series
				}
				ns.Positions[j] = Position{Arrangement: arr, Parts: []float64{v[j] / 0.3, v[j] / 0.7}}
			}
		}
		out[i] = ns
	}
	return out
}

// TestClosedFormMatchesNodalAnalysis holds the closed-form cascade response
// (the topologies' transfer functions) and the independent nodal analysis
// of the netlist to within 1e-6 dB in magnitude and 1e-6 degrees in phase
// (issue 3), for every approximation, kind, order 1..12 and odd-order
// arrangement, with some elements split into series and parallel parts,
// over the design's band. Also checks that the scaled stages realise the
// ideal target.
func TestClosedFormMatchesNodalAnalysis(t *testing.T) {
	t.Parallel()
	for _, s := range designGrid() {
		t.Run(specName(s), func(t *testing.T) {
			d, err := NewDesign(s, 0, 0)
			if err != nil {
				t.Fatal(err)
			}
			stages, err := d.Scale(Scaling{})
			if err != nil {
				t.Fatal(err)
			}
			stages = splitParts(stages)
			lo, hi := d.Band()
			freqs := logSweep(lo, hi, 61)
			nl := Netlist(stages, NetlistOptions{FStart: lo, FStop: hi})
			h, err := AnalyzeNetlist(nl, freqs)
			if err != nil {
				t.Fatalf("%v\n%s", err, nl)
			}
			worst, worstPh, worstT := 0.0, 0.0, 0.0
			for i, f := range freqs {
				w := 2 * math.Pi * f
				cf := CascadeResponse(stages, w)
				worst = math.Max(worst, math.Abs(MagnitudeDB(h[i])-MagnitudeDB(cf)))
				dph := math.Abs(PhaseDeg(h[i] / cf))
				worstPh = math.Max(worstPh, dph)
				worstT = math.Max(worstT, math.Abs(MagnitudeDB(cf)-MagnitudeDB(d.Target(w))))
			}
			if worst > 1e-6 || worstPh > 1e-6 {
				t.Errorf("closed form vs nodal analysis: %.3g dB, %.3g° apart", worst, worstPh)
			}
			if worstT > 1e-9 {
				t.Errorf("scaled stages vs ideal target: %.3g dB apart", worstT)
			}
		})
	}
}

// The transfer functions of docs/check-values.md, "Section circuits" written out literally, independent of
// topology.go, as denominators (and numerators) in ascending powers of s.
func domainSallenKeyLP(r1, r2, cf, cg float64) (num, den []float64) {
	return []float64{1}, []float64{1, cg * (r1 + r2), r1 * r2 * cf * cg}
}

func domainSallenKeyHP(c1, c2, rf, rg float64) (num, den []float64) {
	a2 := rf * rg * c1 * c2
	return []float64{0, 0, a2}, []float64{1, rf * (c1 + c2), a2}
}

func domainThreePoleLP(r1, r2, r3, ca, cf, cb float64) (num, den []float64) {
	return []float64{1}, []float64{1,
		ca*r1 + cb*(r1+r2+r3),
		ca*cb*r1*(r2+r3) + cb*cf*r3*(r1+r2),
		ca * cb * cf * r1 * r2 * r3}
}

func domainThreePoleHP(c1, c2, c3, ra, rf, rb float64) (num, den []float64) {
	a3 := c1 * c2 * c3 * ra * rb * rf
	return []float64{0, 0, 0, a3}, []float64{1,
		c1*ra + c2*ra + c2*rf + c3*rf,
		c1*c2*ra*rf + c1*c3*ra*rf + c2*c3*ra*rf + c2*c3*rb*rf,
		a3}
}

// The gain and multiple-feedback sections: transfer functions derived by
// hand from the nodal equations (node by node, ideal op-amp), written out
// here independently of topology.go. The multiple-feedback low-pass is the
// form printed in Texas Instruments, Op Amps for Everyone (SLOD006B), ch. 16
// (from memory): A0 = -R2/R1, a1 = ωc·C1(R2 + R3 + R2R3/R1),
// b1 = ωc²·C1·C2·R2·R3, with the book's C1 the feedback capacitor (our Cf).

// domainSallenKeyGainLP: Vo = K·Vp, K = 1 + Rb/Ra; node p gives
// Va = Vp(1 + s Cg R2), node a gives
// Vin = Vp(1 + s(Cg(R1+R2) + (1-K)Cf R1) + s² R1 R2 Cf Cg).
func domainSallenKeyGainLP(r1, r2, cf, cg, ra, rb float64) (num, den []float64) {
	k := 1 + rb/ra
	return []float64{k}, []float64{1, cg*r1 + cg*r2 - (k-1)*cf*r1, r1 * r2 * cf * cg}
}

// domainSallenKeyGainHP: node p gives Va = Vp(1 + 1/(s C2 Rg)), node a
// gives Vin s C1 = Vp(s C1 + (1-K)/Rf + (C1+C2)/(C2 Rg) + 1/(s C2 Rg Rf)).
func domainSallenKeyGainHP(c1, c2, rf, rg, ra, rb float64) (num, den []float64) {
	k := 1 + rb/ra
	a2 := c1 * c2 * rf * rg
	return []float64{0, 0, k * a2}, []float64{1, rf*c1 + rf*c2 - (k-1)*c2*rg, a2}
}

// domainMFBLP: the - input m is a virtual ground, so Va = -Vo·s Cf R3 and
// node a gives Vin/R1 = Va(1/R1 + 1/R2 + 1/R3 + s Cg) - Vo/R2.
func domainMFBLP(r1, r2, r3, cg, cf float64) (num, den []float64) {
	return []float64{-r2 / r1}, []float64{1, cf*r2 + cf*r3 + cf*r2*r3/r1, cf * cg * r2 * r3}
}

// domainMFBHP: Va = -Vo/(s C3 R2) and node a gives
// Vin s C1 = Va(s(C1+C2+C3) + 1/R1) - Vo s C2.
func domainMFBHP(c1, c2, c3, r1, r2 float64) (num, den []float64) {
	return []float64{0, 0, -c1 * c3 * r1 * r2}, []float64{1, r1*c1 + r1*c2 + r1*c3, r1 * r2 * c2 * c3}
}

func domainRC(r, c float64, hp bool) (num, den []float64) {
	if hp {
		return []float64{0, r * c}, []float64{1, r * c}
	}
	return []float64{1}, []float64{1, r * c}
}

func evalPoly(c []float64, s complex128) complex128 {
	var v complex128
	for i := len(c) - 1; i >= 0; i-- {
		v = v*s + complex(c[i], 0)
	}
	return v
}

// TestDomainFormulas verifies the section transfer functions written in
// docs/check-values.md by nodal analysis of each topology's netlist with random
// element values (not only the equal-value cases), and that topology.go's
// Coeffs agree with the same formulas.
func TestDomainFormulas(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(3, 1))
	formula := map[string]func(v []float64) ([]float64, []float64){
		"rc-lowpass":          func(v []float64) ([]float64, []float64) { return domainRC(v[0], v[1], false) },
		"rc-highpass":         func(v []float64) ([]float64, []float64) { return domainRC(v[1], v[0], true) },
		"sallen-key-lowpass":  func(v []float64) ([]float64, []float64) { return domainSallenKeyLP(v[0], v[1], v[2], v[3]) },
		"sallen-key-highpass": func(v []float64) ([]float64, []float64) { return domainSallenKeyHP(v[0], v[1], v[2], v[3]) },
		"three-pole-lowpass": func(v []float64) ([]float64, []float64) {
			return domainThreePoleLP(v[0], v[1], v[2], v[3], v[4], v[5])
		},
		"three-pole-highpass": func(v []float64) ([]float64, []float64) {
			return domainThreePoleHP(v[0], v[1], v[2], v[3], v[4], v[5])
		},
		"sallen-key-gain-lowpass": func(v []float64) ([]float64, []float64) {
			return domainSallenKeyGainLP(v[0], v[1], v[2], v[3], v[4], v[5])
		},
		"sallen-key-gain-highpass": func(v []float64) ([]float64, []float64) {
			return domainSallenKeyGainHP(v[0], v[1], v[2], v[3], v[4], v[5])
		},
		"mfb-lowpass":  func(v []float64) ([]float64, []float64) { return domainMFBLP(v[0], v[1], v[2], v[3], v[4]) },
		"mfb-highpass": func(v []float64) ([]float64, []float64) { return domainMFBHP(v[0], v[1], v[2], v[3], v[4]) },
	}
	for _, top := range Topologies() {
		t.Run(top.ID(), func(t *testing.T) {
			f, ok := formula[top.ID()]
			if !ok {
				t.Fatalf("no closed form for %s", top.ID())
			}
			for trial := 0; trial < 20; trial++ {
				v := make([]float64, top.NumElements())
				for i, e := range top.Elements() {
					// Log-uniform over two decades around 10 kΩ and 10 nF.
					x := math.Pow(10, rng.Float64()*2-1)
					if e.Kind == Resistor {
						v[i] = 1e4 * x
					} else {
						v[i] = 1e-8 * x
					}
				}
				num, den := f(v)
				cn, cd := top.Coeffs(v)
				for i := range den {
					if !testkit.Rel(1e-14).Equal(cd[i], den[i]) {
						t.Fatalf("Coeffs den[%d] = %g, closed form %g (values %v)", i, cd[i], den[i], v)
					}
				}
				for i := range num {
					if !testkit.Rel(1e-14).Equal(cn[i], num[i]) {
						t.Fatalf("Coeffs num[%d] = %g, closed form %g", i, cn[i], num[i])
					}
				}
				freqs := logSweep(10, 1e5, 25)
				nl := Netlist([]Stage{StageOf(top, v)}, NetlistOptions{IdealGain: IdealGain})
				h, err := AnalyzeNetlist(nl, freqs)
				if err != nil {
					t.Fatal(err)
				}
				for i, fr := range freqs {
					s := complex(0, 2*math.Pi*fr)
					want := evalPoly(num, s) / evalPoly(den, s)
					if d := cmplx.Abs(h[i]/want - 1); d > 1e-9 {
						t.Fatalf("values %v at %g Hz: nodal %v, closed form %v (rel. %.2g)", v, fr, h[i], want, d)
					}
				}
			}
		})
	}
}

// TestDomainSectionFacts checks the other statements of docs/check-values.md, "Section circuits" about
// sections: real Sallen-Key resistors exist iff Cf/Cg >= 4Q² (equal
// resistors exactly at 4Q²), equal high-pass capacitors give Rg/Rf = 4Q²,
// and the 3-pole high-pass with unit capacitors has the reciprocals of the
// low-pass capacitors as its resistors.
func TestDomainSectionFacts(t *testing.T) {
	t.Parallel()
	t.Run("sallen-key-lowpass-ratio", func(t *testing.T) {
		w0, q := 2*math.Pi*1e3, 1.3
		_, den := pairPoly(LowPass, w0, q)
		cg := 1e-9
		for _, r := range []float64{0.9, 0.999, 1.001, 1.5, 10} {
			cf := r * 4 * q * q * cg
			sols, ok := SallenKeyLowPass().Solve([]float64{0, 0, cf, cg}, den)
			if ok != (r >= 1) {
				t.Errorf("Cf/Cg = %g·4Q²: solvable %v", r, ok)
			}
			if ok {
				_, got := SallenKeyLowPass().Coeffs(sols[0])
				if !testkit.Rel(1e-12).Equal(got[1], den[1]) || !testkit.Rel(1e-12).Equal(got[2], den[2]) {
					t.Errorf("Cf/Cg = %g·4Q²: solution %v gives %v, want %v", r, sols[0], got, den)
				}
			}
		}
		// At exactly 4Q² the discriminant is zero up to rounding, so Solve
		// may report the boundary either way; the resistors must be equal.
		sols, _ := SallenKeyLowPass().Solve([]float64{0, 0, 4 * q * q * cg, cg}, den)
		if !testkit.Rel(1e-6).Equal(sols[0][0], sols[0][1]) {
			t.Errorf("Cf/Cg = 4Q²: resistors %v, want equal", sols[0])
		}
	})
	t.Run("sallen-key-highpass-equal-c", func(t *testing.T) {
		for _, q := range []float64{0.5, 0.7071, 1.3, 5} {
			_, den := pairPoly(HighPass, 2*math.Pi*1e3, q)
			v, _ := SallenKeyHighPass().Solve([]float64{1e-8, 1e-8, 0, 0}, den)
			if r := v[0][3] / v[0][2]; !testkit.Rel(1e-12).Equal(r, 4*q*q) {
				t.Errorf("Q %g: Rg/Rf = %g, want 4Q² = %g", q, r, 4*q*q)
			}
		}
	})
	t.Run("three-pole-highpass-reciprocals", func(t *testing.T) {
		for _, s := range []Spec{
			{Approx: Butterworth, Order: 3}, {Approx: Butterworth, Order: 7},
			{Approx: Chebyshev, Ripple: 0.5, Order: 5}, {Approx: Bessel, Order: 3}, {Approx: Bessel, Order: 9},
		} {
			s.Pass, s.Odd = 1000, OddThreePole
			lp, err := NewDesign(s, 0, 0)
			if err != nil {
				t.Fatal(err)
			}
			s.Kind = HighPass
			hp, err := NewDesign(s, 0, 0)
			if err != nil {
				t.Fatal(err)
			}
			vl, _ := lp.Normalised(0)
			vh, _ := hp.Normalised(0)
			// LP Elements R1 R2 R3 Ca Cf Cb; HP Elements C1 C2 C3 Ra Rf Rb.
			for i := 0; i < 3; i++ {
				if !testkit.Rel(1e-12).Equal(vh[i], 1) || !testkit.Rel(1e-9).Equal(vh[3+i], 1/vl[3+i]) {
					t.Errorf("%s: high-pass %v, low-pass %v", specName(s), vh, vl)
				}
			}
		}
	})
}

// TestOpAmpModel checks the gain-bandwidth subcircuit by nodal analysis
// against the closed form of a first-order RC section, whose follower sees
// no feedback into the network: H = 1/(1+sRC) · A/(1+A) with
// A(s) = A0/(1+s/ωa), ωa = 2π·GBW/A0 (single-pole model).
func TestOpAmpModel(t *testing.T) {
	t.Parallel()
	const r, c = 10e3, 10e-9
	st := StageOf(FirstOrderLowPass(), []float64{r, c})
	for _, m := range []OpAmp{{DCGain: 1e5, GBW: 1e6}, {DCGain: 2e5, GBW: 10e6}, {DCGain: 1e3}, {}} {
		t.Run(fmt.Sprintf("A0=%g/GBW=%g", m.DCGain, m.GBW), func(t *testing.T) {
			nl := Netlist([]Stage{st}, NetlistOptions{OpAmp: &m})
			freqs := logSweep(1, 1e7, 50)
			h, err := AnalyzeNetlist(nl, freqs)
			if err != nil {
				t.Fatal(err)
			}
			a0 := m.DCGain
			if a0 == 0 {
				a0 = DefaultDCGain
			}
			for i, f := range freqs {
				s := complex(0, 2*math.Pi*f)
				a := complex(a0, 0)
				if m.GBW > 0 {
					a /= 1 + s/complex(2*math.Pi*m.GBW/a0, 0)
				}
				want := 1 / (1 + s*complex(r*c, 0)) * a / (1 + a)
				if d := cmplx.Abs(h[i]/want - 1); d > 1e-9 {
					t.Fatalf("%g Hz: nodal %v, closed form %v", f, h[i], want)
				}
			}
		})
	}
}

// TestIdealGainError checks the documented error of the ideal follower: an
// E element of gain IdealGain gives 1/(1+1/IdealGain), far under 1e-8 dB.
func TestIdealGainError(t *testing.T) {
	t.Parallel()
	st := StageOf(FirstOrderLowPass(), []float64{1e3, 1e-9})
	h, err := AnalyzeNetlist(Netlist([]Stage{st}, NetlistOptions{}), []float64{1e-3})
	if err != nil {
		t.Fatal(err)
	}
	if e := math.Abs(MagnitudeDB(h[0])); e > 1e-8 {
		t.Errorf("DC gain error %.3g dB", e)
	}
}

func TestParseSpiceValue(t *testing.T) {
	t.Parallel()
	cases := []struct {
		in   string
		want float64
	}{
		// SPICE scale factors (the SPICE2 user's guide convention, which
		// ngspice keeps): M is milli, MEG is mega, case-insensitive
		// (the parser is given lower-case text).
		{"4.7k", 4700}, {"1meg", 1e6}, {"10n", 10e-9}, {"2.2uf", 2.2e-6}, {"1m", 1e-3},
		{"1e-9", 1e-9}, {"3.3e+3", 3300}, {"47pf", 47e-12}, {"1g", 1e9}, {"2t", 2e12},
		{"5f", 5e-15}, {"100", 100}, {"1kohm", 1000}, {"1.5e3k", 1.5e6},
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			got, err := parseSpiceValue(c.in)
			if err != nil || !testkit.Rel(1e-15).Equal(got, c.want) {
				t.Errorf("got %g, %v; want %g", got, err, c.want)
			}
		})
	}
	if _, err := parseSpiceValue("abc"); fault.KindOf(err) != fault.Invalid {
		t.Errorf("abc: %v, want invalid", err)
	}
}

// TestAnalyzeNetlistText checks reading netlist features that the tool's
// own netlists do not all use, on a hand-written RC divider whose response
// is known: continuation lines, comments, suffixes, case, a subcircuit.
func TestAnalyzeNetlistText(t *testing.T) {
	t.Parallel()
	const text = `test divider
* a comment
.SUBCKT half a b
R1 a b 1K ; inline comment
.ENDS half
Vsrc IN 0 DC 0 AC 1
X1 in mid half
R2 mid
+ 0 1k
C1 mid out 1u
Rload out 0 1meg
.ac dec 10 1 1k
.control
run
.endc
.end
`
	freqs := []float64{1, 100, 1e4}
	h, err := AnalyzeNetlist(text, freqs)
	if err != nil {
		t.Fatal(err)
	}
	for i, f := range freqs {
		s := complex(0, 2*math.Pi*f)
		// Divider 1k/1k loaded by C in series with 1 MΩ: Thevenin 0.5 V
		// behind 500 Ω, then C and 1 MΩ.
		zc := 1 / (s * 1e-6)
		want := complex(0.5, 0) * 1e6 / (500 + zc + 1e6)
		if d := cmplx.Abs(h[i]/want - 1); d > 1e-12 {
			t.Errorf("%g Hz: %v, want %v", f, h[i], want)
		}
	}
	bad := []struct{ name, text string }{
		{"inductor", "t\nV1 in 0 AC 1\nL1 in out 1m\nR1 out 0 1k\n.end\n"},
		{"no-out", "t\nV1 in 0 AC 1\nR1 in 0 1k\n.end\n"},
		{"floating", "t\nV1 in 0 AC 1\nR1 in out 1k\nR2 a b 1k\n.end\n"},
		{"unknown-subckt", "t\nV1 in 0 AC 1\nX1 in out nothing\n.end\n"},
		{"open-subckt", "t\n.subckt a x y\nR1 x y 1\n"},
		{"bad-value", "t\nV1 in 0 AC 1\nR1 in out abc\n.end\n"},
	}
	for _, b := range bad {
		t.Run(b.name, func(t *testing.T) {
			_, err := AnalyzeNetlist(b.text, []float64{100})
			if fault.KindOf(err) != fault.Invalid {
				t.Errorf("got %v, want an invalid-input error", err)
			}
		})
	}
}

// TestNetlistShape checks the netlist's promises: only R, C, V, E (and X
// with a gain-bandwidth) elements, "V1 in 0 AC 1", an .ac dec line, one
// element per physical part, and ".end" last.
func TestNetlistShape(t *testing.T) {
	t.Parallel()
	d, err := NewDesign(Spec{Approx: Chebyshev, Ripple: 1, Pass: 2000, Stop: 5000, StopAtten: 50, Odd: OddThreePole}, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	stages, _ := d.Scale(Scaling{})
	stages = splitParts(stages)
	parts := 0
	for _, st := range stages {
		for _, p := range st.Positions {
			parts += len(p.Parts)
		}
	}
	for _, m := range []*OpAmp{nil, {GBW: 1e6}} {
		nl := Netlist(stages, NetlistOptions{OpAmp: m, PointsPerDecade: 30, FStart: 10, FStop: 1e5})
		lines := strings.Split(strings.TrimSpace(nl), "\n")
		if lines[len(lines)-1] != ".end" {
			t.Errorf("last line %q", lines[len(lines)-1])
		}
		if !strings.Contains(nl, "\nV1 in 0 AC 1\n") || !strings.Contains(nl, "\n.ac dec 30 10 100000\n") {
			t.Errorf("missing source or .ac line:\n%s", nl)
		}
		rc, insub := 0, false
		for _, l := range lines[1:] {
			switch {
			case strings.HasPrefix(l, ".subckt"):
				insub = true
			case strings.HasPrefix(l, ".ends"):
				insub = false
			case l == "" || l[0] == '*' || l[0] == '.':
			case strings.IndexByte("RCVEX", l[0]) < 0:
				t.Errorf("element %q is not R, C, V, E or X", l)
			case (l[0] == 'R' || l[0] == 'C') && !insub:
				rc++
			case l[0] == 'X' && m == nil:
				t.Errorf("subcircuit instance without an op-amp model: %q", l)
			}
		}
		if rc != parts {
			t.Errorf("%d R/C elements for %d physical parts", rc, parts)
		}
	}
}
