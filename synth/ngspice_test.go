package synth

import (
	"bufio"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"drawerfit/internal/testkit"
)

// runNgspice simulates netlist with ngspice (Debian package ngspice) in
// and returns the .ac sweep's frequencies and V(out). V1 drives
// "in" with AC 1, so V(out) is the transfer function. It skips the test when
// ngspice is not installed.
func runNgspice(t *testing.T, netlist string) ([]float64, []complex128) {
	t.Helper()
	bin, err := exec.LookPath("ngspice")
	if err != nil {
		t.Skip("ngspice not installed (Debian package ngspice); skipping the simulator cross-check")
	}
	dir := t.TempDir()
	out := filepath.Join(dir, "out.txt")
	control := strings.Join([]string{
		".control",
		"set wr_singlescale",
		"option numdgt=15",
		"run",
		"wrdata " + out + " v(out)",
		"quit",
		".endc",
		".end",
	}, "\n") + "\n"
	text := strings.TrimSuffix(strings.TrimSpace(netlist), ".end") + control
	cir := filepath.Join(dir, "filter.cir")
	if err := os.WriteFile(cir, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	// Not -b: batch mode exits with status 1 when a netlist has no .print
	// line; the .control block runs the analysis, writes the data and quits.
	cmd := exec.Command(bin, cir)
	cmd.Dir = dir
	cmd.Stdin = strings.NewReader("")
	if msg, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("ngspice: %v\n%s", err, msg)
	}
	f, err := os.Open(out)
	if err != nil {
		t.Fatalf("ngspice wrote no data: %v", err)
	}
	defer f.Close()
	var freqs []float64
	var h []complex128
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fields := strings.Fields(sc.Text())
		if len(fields) < 3 {
			continue
		}
		var v [3]float64
		ok := true
		for i := range v {
			x, err := strconv.ParseFloat(fields[i], 64)
			if err != nil {
				ok = false
				break
			}
			v[i] = x
		}
		if ok {
			freqs = append(freqs, v[0])
			h = append(h, complex(v[1], v[2]))
		}
	}
	if len(freqs) == 0 {
		t.Fatalf("no data in ngspice output")
	}
	return freqs, h
}

// TestNgspiceAgrees simulates the tool's netlists for a set of designs in
// ngspice and holds the result to the tool's own nodal analysis within
// 0.01 dB (issue 3) and 0.01° over the whole .ac band, with ideal op-amps
// and with the gain-bandwidth op-amp subcircuit.
func TestNgspiceAgrees(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name  string
		spec  Spec
		split bool
		opamp *OpAmp
	}{
		{"butterworth-lp-5-3pole", Spec{Approx: Butterworth, Pass: 1000, Order: 5, Odd: OddThreePole}, false, nil},
		{"chebyshev1dB-hp-6", Spec{Kind: HighPass, Approx: Chebyshev, Ripple: 1, Pass: 2000, Order: 6}, false, nil},
		{"bessel-lp-7-1pole", Spec{Approx: Bessel, Pass: 10e3, Order: 7, Odd: OddOnePole}, false, nil},
		{"chebyshev0.5dB-lp-12", Spec{Approx: Chebyshev, Ripple: 0.5, Pass: 500, Order: 12}, false, nil},
		{"chebyshev3dB-lp-11-3pole", Spec{Approx: Chebyshev, Ripple: 3, Pass: 3000, Order: 11, Odd: OddThreePole}, false, nil},
		{"bessel-delay-hp-3-3pole-split", Spec{Kind: HighPass, Approx: Bessel, BesselNorm: BesselDelay, Pass: 300, Order: 3, Odd: OddThreePole}, true, nil},
		{"butterworth-hp-9-3pole-split", Spec{Kind: HighPass, Approx: Butterworth, Pass: 50, Stop: 20, StopAtten: 30, Odd: OddThreePole}, true, nil},
		{"butterworth-lp-4-gbw", Spec{Approx: Butterworth, Pass: 20e3, Order: 4}, false, &OpAmp{DCGain: 2e5, GBW: 1e6}},
		{"chebyshev1dB-lp-5-3pole-gbw", Spec{Approx: Chebyshev, Ripple: 1, Pass: 5e3, Order: 5, Odd: OddThreePole}, true, &OpAmp{GBW: 3e6}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			d, err := NewDesign(c.spec, 0, 0)
			if err != nil {
				t.Fatal(err)
			}
			stages, err := d.Scale(Scaling{})
			if err != nil {
				t.Fatal(err)
			}
			if c.split {
				stages = splitParts(stages)
			}
			lo, hi := d.Band()
			nl := Netlist(stages, NetlistOptions{Title: c.name, FStart: lo, FStop: hi, PointsPerDecade: 25, OpAmp: c.opamp})
			freqs, sim := runNgspice(t, nl)
			if len(freqs) < 25 || !testkit.Rel(1e-9).Equal(freqs[0], lo) || !testkit.Rel(1e-9).Equal(freqs[len(freqs)-1], hi) {
				t.Fatalf("ngspice swept %d points %g..%g Hz, netlist asks %g..%g", len(freqs), freqs[0], freqs[len(freqs)-1], lo, hi)
			}
			mna, err := AnalyzeNetlist(nl, freqs)
			if err != nil {
				t.Fatal(err)
			}
			worst, worstPh, at := 0.0, 0.0, 0.0
			for i := range freqs {
				if e := math.Abs(MagnitudeDB(sim[i]) - MagnitudeDB(mna[i])); e > worst {
					worst, at = e, freqs[i]
				}
				worstPh = math.Max(worstPh, math.Abs(PhaseDeg(sim[i]/mna[i])))
			}
			if worst > 0.01 || worstPh > 0.01 {
				t.Errorf("ngspice vs nodal analysis: %.3g dB (at %g Hz), %.3g° apart", worst, at, worstPh)
			}
			t.Logf("%d points %g..%g Hz: worst %.2g dB, %.2g°", len(freqs), lo, hi, worst, worstPh)
		})
	}
}
