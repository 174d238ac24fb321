package tolerance

import (
	"bufio"
	"context"
	"math"
	"math/cmplx"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"drawerfit/internal/testkit"
	"drawerfit/optimize"
	"drawerfit/synth"
)

// splitParts makes component k of section s two parts: a series pair for a
// resistor (70 % + 30 %), a parallel pair for a capacitor (60 % + 40 %).
func splitParts(c *optimize.Candidate, s, k int) {
	comp := &c.Sections[s].Components[k]
	p := comp.Parts[0]
	a, b := p, p
	if comp.Kind == synth.Resistor {
		comp.Arrangement = synth.Series
		a.Value, b.Value = 0.7*comp.Value, 0.3*comp.Value
	} else {
		comp.Arrangement = synth.Parallel
		a.Value, b.Value = 0.6*comp.Value, 0.4*comp.Value
	}
	comp.Parts = []optimize.Part{a, b}
}

// opampFixtures are candidates covering every topology, with series and
// parallel pairs.
func opampFixtures(t *testing.T) map[string]*optimize.Candidate {
	t.Helper()
	lp := designCandidate(t, synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 10e3, Order: 5}, 5, synth.OddThreePole, tols{0.01, 0.05})
	splitParts(lp, 0, 1)
	splitParts(lp, 1, 3)
	hp := designCandidate(t, synth.Spec{Kind: synth.HighPass, Approx: synth.Chebyshev, Ripple: 1, Pass: 2e3, Order: 5}, 5, synth.OddThreePole, tols{0.01, 0.05})
	splitParts(hp, 0, 0)
	splitParts(hp, 1, 2)
	rc := designCandidate(t, synth.Spec{Kind: synth.LowPass, Approx: synth.Bessel, Pass: 1e3, Order: 3}, 3, synth.OddOnePole, tols{0.01, 0.05})
	rch := designCandidate(t, synth.Spec{Kind: synth.HighPass, Approx: synth.Butterworth, Pass: 500, Order: 3}, 3, synth.OddOnePole, tols{0.01, 0.05})
	return map[string]*optimize.Candidate{"lowpass 3-pole": lp, "highpass 3-pole": hp, "lowpass rc": rc, "highpass rc": rch}
}

// opampCascade is the package's analysis of the nominal board with op.
func opampCascade(t *testing.T, c *optimize.Candidate, op *synth.OpAmp) func(f float64) complex128 {
	t.Helper()
	b, err := newBoard(c)
	if err != nil {
		t.Fatal(err)
	}
	ws := b.newWorkspace()
	ws.load(b.nominalParts())
	ob := &opampBoard{b: b, vals: ws.vals, op: op}
	return func(f float64) complex128 { return ob.response(2 * math.Pi * f) }
}

func TestSectionResponseIdealMatchesClosedForm(t *testing.T) {
	t.Parallel()
	// The nodal analysis built from the element list, with an ideal
	// follower, must reproduce each topology's closed form (docs/check-values.md,
	// "Section circuits").
	for _, topo := range synth.Topologies() {
		t.Run(topo.ID(), func(t *testing.T) {
			v := make([]float64, topo.NumElements())
			for i, e := range topo.Elements() {
				// Unequal invented values around 10 kΩ and 10 nF.
				if e.Kind == synth.Resistor {
					v[i] = 10e3 * (1 + 0.37*float64(i))
				} else {
					v[i] = 10e-9 * (1 + 0.61*float64(i))
				}
			}
			for _, f := range []float64{1, 30, 300, 1e3, 3e3, 3e4, 1e6} {
				w := 2 * math.Pi * f
				got := SectionResponse(topo, v, nil, w)
				want := topo.Eval(v, w)
				if cmplx.Abs(got-want) > 1e-12*cmplx.Abs(want) {
					t.Errorf("f %g: nodal %v, closed form %v", f, got, want)
				}
			}
		})
	}
}

func TestOpAmpAgainstNetlistAnalysis(t *testing.T) {
	t.Parallel()
	// synth.AnalyzeNetlist reads only the netlist text: an independent
	// implementation of the same model.
	ops := []synth.OpAmp{{GBW: 1e6}, {GBW: 3e5, DCGain: 2e4}, {GBW: 1e7, DCGain: 1e6}}
	for name, c := range opampFixtures(t) {
		for _, op := range ops {
			t.Run(name+"/gbw "+strconv.FormatFloat(op.GBW, 'g', -1, 64), func(t *testing.T) {
				nl := synth.Netlist(c.Stages(), synth.NetlistOptions{OpAmp: &op})
				var freqs []float64
				for f := 10.0; f < 1e6; f *= 1.3 {
					freqs = append(freqs, f)
				}
				hs, err := synth.AnalyzeNetlist(nl, freqs)
				if err != nil {
					t.Fatal(err)
				}
				mine := opampCascade(t, c, &op)
				for i, f := range freqs {
					if d := dbRatio(mine(f), hs[i]); math.Abs(d) > 1e-6 {
						t.Errorf("f %g Hz: differs from the netlist analysis by %.2e dB", f, d)
					}
				}
			})
		}
	}
}

func TestOpAmpAgainstNgspice(t *testing.T) {
	t.Parallel()
	const ngspice = "/usr/bin/ngspice"
	if _, err := os.Stat(ngspice); err != nil {
		t.Skip("ngspice not installed")
	}
	dir := t.TempDir()
	op := synth.OpAmp{GBW: 1e6, DCGain: 1e5}
	for name, c := range opampFixtures(t) {
		t.Run(name, func(t *testing.T) {
			nl := synth.Netlist(c.Stages(), synth.NetlistOptions{OpAmp: &op, FStart: 10, FStop: 1e6, PointsPerDecade: 20})
			out := filepath.Join(dir, strings.ReplaceAll(name, " ", "-")+".txt")
			ctl := ".control\nset wr_singlescale\noption numdgt=15\nrun\nwrdata " + out + " vr(out) vi(out)\nquit 0\n.endc\n.end\n"
			nl = strings.Replace(nl, ".end\n", ctl, 1)
			cir := out + ".cir"
			if err := os.WriteFile(cir, []byte(nl), 0o644); err != nil {
				t.Fatal(err)
			}
			if b, err := exec.Command(ngspice, "-b", cir).CombinedOutput(); err != nil {
				t.Fatalf("ngspice: %v\n%s", err, b)
			}
			f, err := os.Open(out)
			if err != nil {
				t.Fatal(err)
			}
			defer f.Close()
			mine := opampCascade(t, c, &op)
			sc := bufio.NewScanner(f)
			rows, worst := 0, 0.0
			for sc.Scan() {
				fs := strings.Fields(sc.Text())
				if len(fs) != 3 {
					continue
				}
				var x [3]float64
				ok := true
				for i := range fs {
					x[i], err = strconv.ParseFloat(fs[i], 64)
					ok = ok && err == nil
				}
				if !ok {
					continue
				}
				rows++
				// The tolerance: 0.01 dB.
				d := dbRatio(mine(x[0]), complex(x[1], x[2]))
				worst = math.Max(worst, math.Abs(d))
				if math.Abs(d) > 0.01 {
					t.Errorf("f %g Hz: differs from ngspice by %.4f dB", x[0], d)
				}
			}
			t.Logf("%d frequencies, largest difference from ngspice %.2e dB", rows, worst)
			if rows < 90 {
				t.Fatalf("read only %d rows from ngspice", rows)
			}
		})
	}
}

func TestGBWRuleBookExample(t *testing.T) {
	t.Parallel()
	// Op Amps for Everyone, 16.8.4: a 5th-order 10 kHz unity-gain Butterworth
	// low-pass needs 1.5 MHz; the Q = 1.618 section sets it. Recomputed
	// from the book's formula: 100·1.618034·10 kHz·√(2.118034/2.368034) =
	// 1.5302 MHz (docs/check-values.md, "Practical rules").
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 10e3, Order: 5}
	c := designCandidate(t, spec, 5, synth.OddOnePole, tols{0.01, 0.05})
	rep, err := CheckOpAmp(c, spec, synth.OpAmp{GBW: 1.5e6})
	if err != nil {
		t.Fatal(err)
	}
	need := 0.0
	for _, s := range rep.Sections {
		need = math.Max(need, s.RequiredGBW)
	}
	if !testkit.Abs(0.1e3).Equal(need, 1.5302e6) {
		t.Errorf("required gain-bandwidth %.5g Hz, want 1.5302 MHz", need)
	}
	rule := ruleWarnings(rep.Warnings)
	if len(rule) != 1 || !strings.Contains(rule[0], "section 3") || !strings.Contains(rule[0], "Q 1.62") {
		t.Errorf("warnings %q: want one for section 3 naming the rule", rep.Warnings)
	}
	rep, err = CheckOpAmp(c, spec, synth.OpAmp{GBW: 1.6e6})
	if err != nil {
		t.Fatal(err)
	}
	if len(ruleWarnings(rep.Warnings)) != 0 {
		t.Errorf("1.6 MHz: warnings %q, want none about the rule", rep.Warnings)
	}
	// First order: 100·fc (same rule).
	if g, _ := GBWRule(1, 10e3, 0, 0); g != 1e6 {
		t.Errorf("first order: %g, want 1 MHz", g)
	}
}

// ruleWarnings picks the warnings that cite the gain-bandwidth rule.
func ruleWarnings(ws []string) []string {
	var out []string
	for _, w := range ws {
		if strings.Contains(w, "Op Amps for Everyone, section 16.8.4") {
			out = append(out, w)
		}
	}
	return out
}

func TestOpAmpErrorFallsWithGBW(t *testing.T) {
	t.Parallel()
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Chebyshev, Ripple: 1, Pass: 5e3, Stop: 12e3, StopAtten: 40}
	c := designCandidate(t, spec, 6, synth.OddOnePole, tols{0.01, 0.05})
	prev := math.Inf(1)
	for _, gbw := range []float64{2e5, 1e6, 1e7, 1e8, 1e12} {
		rep, err := CheckOpAmp(c, spec, synth.OpAmp{GBW: gbw, DCGain: 1e9})
		if err != nil {
			t.Fatal(err)
		}
		if rep.BandError >= prev {
			t.Errorf("GBW %g: error %.4g dB not below %.4g dB at the lower GBW", gbw, rep.BandError, prev)
		}
		prev = rep.BandError
	}
	// With 1 THz and a DC gain of 1e9 the op-amp changes nothing
	// measurable. (A gain of only 1e5 would still move the Q of the
	// Q = 8 section by about 4Q²/A0·½, some 0.01 dB at its peak.)
	if prev > 2e-4 {
		t.Errorf("GBW 1 THz: error %.3g dB, want below 2e-4", prev)
	}
	if _, err := CheckOpAmp(c, spec, synth.OpAmp{GBW: -1}); err == nil {
		t.Error("negative GBW accepted")
	}
}

func TestHighPassUpperEdge(t *testing.T) {
	t.Parallel()
	// A high-pass with a 1 MHz op-amp stops passing near a fraction of the
	// GBW; the report says where.
	spec := synth.Spec{Kind: synth.HighPass, Approx: synth.Butterworth, Pass: 1e3, Order: 4}
	c := designCandidate(t, spec, 4, synth.OddOnePole, tols{0.01, 0.05})
	rep, err := CheckOpAmp(c, spec, synth.OpAmp{GBW: 1e6})
	if err != nil {
		t.Fatal(err)
	}
	if rep.UpperEdge < 1e5 || rep.UpperEdge > 2e6 {
		t.Errorf("upper edge %g Hz, want somewhere near the 1 MHz GBW", rep.UpperEdge)
	}
	// Measured from the passband gain the amplifier allows, (A0/(1+A0))^n
	// with the default A0 = 1e5 and n = 2 sections.
	op := &synth.OpAmp{GBW: 1e6}
	h := opampCascade(t, c, op)(rep.UpperEdge)
	ref := -2 * 20 * math.Log10(op.DCFollowerGain())
	if d := synth.Attenuation(h) - ref; !testkit.Abs(1e-6).Equal(d, synth.HalfPowerDB) {
		t.Errorf("attenuation at the reported upper edge %.6f dB from the passband gain, want 3.0103", d)
	}
	if rep.PassJudgedUpTo != 10*spec.Pass {
		t.Errorf("pass band judged up to %g Hz, want 10·fp", rep.PassJudgedUpTo)
	}
}

// TestOpAmpFiguresFromTheRealDCGain: a first-order RC section with a
// follower of low DC gain (A0 = 100, 40 dB) and no pole is the ideal
// section scaled by A0/(1+A0) (standard circuit analysis), so its figures
// with the amplifier equal the ideal ones when attenuations are measured
// from A0/(1+A0); from 0 dB they would be 20·log10(101/100) = 0.0864 dB
// worse.
func TestOpAmpFiguresFromTheRealDCGain(t *testing.T) {
	t.Parallel()
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1e3, Order: 1}
	c := designCandidate(t, spec, 1, synth.OddOnePole, tols{0.01, 0.05})
	rep, err := CheckOpAmp(c, spec, synth.OpAmp{GBW: 1e300, DCGain: 100})
	if err != nil {
		t.Fatal(err)
	}
	if !testkit.Abs(1e-6).Equal(rep.WithOpAmp.PassAtten, rep.Ideal.PassAtten) {
		t.Errorf("pass figure with the amplifier %.6f dB, ideal %.6f dB", rep.WithOpAmp.PassAtten, rep.Ideal.PassAtten)
	}
}

// TestHighPassJudgedUpToTenFp: a high-pass at 500 kHz with a 10 MHz
// amplifier rolls off above its pass band; judged up to 10·fp the pass
// figure stays a few dB, not the hundreds of dB a judgement up to infinite
// frequency gives.
func TestHighPassJudgedUpToTenFp(t *testing.T) {
	t.Parallel()
	spec := synth.Spec{Kind: synth.HighPass, Approx: synth.Chebyshev, Ripple: 0.5, Pass: 500e3, Order: 4}
	c := designCandidate(t, spec, 4, synth.OddOnePole, tols{0.01, 0.05})
	rep, err := CheckOpAmp(c, spec, synth.OpAmp{GBW: 10e6})
	if err != nil {
		t.Fatal(err)
	}
	if !(rep.WithOpAmp.PassAtten < 30) || rep.PassJudgedUpTo != 5e6 {
		t.Errorf("pass figure with the amplifier %.2f dB judged up to %g Hz", rep.WithOpAmp.PassAtten, rep.PassJudgedUpTo)
	}
}

// TestYieldWithTheCandidatesAmplifier: a candidate that carries an
// amplifier is simulated with it. With a 1 THz amplifier of 1e12 V/V the
// yield is the ideal one; with a slow one it differs.
func TestYieldWithTheCandidatesAmplifier(t *testing.T) {
	t.Parallel()
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 10e3, Order: 4}
	c := designCandidate(t, spec, 4, synth.OddOnePole, tols{0.01, 0.05})
	opt := Options{Trials: 400, Seed: 3, Brief: true, PassMargin: 0.05}
	ideal, err := Run(context.Background(), c, spec, opt)
	if err != nil {
		t.Fatal(err)
	}
	fast := *c
	fast.Amp = &optimize.Amplifier{Label: "test", Channels: 1, Model: synth.OpAmp{GBW: 1e12, DCGain: 1e12}}
	rf, err := Run(context.Background(), &fast, spec, opt)
	if err != nil {
		t.Fatal(err)
	}
	if rf.Passed != ideal.Passed {
		t.Errorf("with a 1 THz amplifier %d of 400 pass, ideal %d", rf.Passed, ideal.Passed)
	}
	slow := *c
	slow.Amp = &optimize.Amplifier{Label: "test", Channels: 1, Model: synth.OpAmp{GBW: 200e3}}
	rs, err := Run(context.Background(), &slow, spec, opt)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("passed: ideal %d, 1 THz %d, 200 kHz %d of 400", ideal.Passed, rf.Passed, rs.Passed)
	if rs.Passed == ideal.Passed {
		t.Errorf("a 200 kHz amplifier under a 10 kHz filter changes no board's verdict (%d)", rs.Passed)
	}
}

// TestNoiseGainRule checks the gain-bandwidth demand of sections with gain:
// the follower rule times the noise gain, K for a Sallen-Key with a divider
// and 1 + G for a multiple-feedback section (common practice; see
// NoiseGain).
func TestNoiseGainRule(t *testing.T) {
	t.Parallel()
	sk := []float64{10e3, 10e3, 10e-9, 10e-9, 10e3, 15e3} // K = 2.5
	if g := NoiseGain(synth.SallenKeyGainLowPass(), sk); math.Abs(g-2.5) > 1e-12 {
		t.Errorf("Sallen-Key noise gain %g, want 2.5", g)
	}
	mfb := []float64{10e3, 40e3, 10e3, 100e-9, 1e-9} // G = 4
	if g := NoiseGain(synth.MFBLowPass(), mfb); math.Abs(g-5) > 1e-12 {
		t.Errorf("MFB noise gain %g, want 5", g)
	}
	if g := NoiseGain(synth.SallenKeyLowPass(), []float64{1, 1, 1, 1}); g != 1 {
		t.Errorf("follower noise gain %g", g)
	}
}
