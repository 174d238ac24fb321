package optimize

import (
	"math"
	"strings"
	"testing"

	"drawerfit/synth"
)

// TestEveryTopologyHasASearch fails when a topology synth describes has no
// section search in the fit (adding a topology must add its search, or the
// description a generic search reads: chosen elements and a solver).
func TestEveryTopologyHasASearch(t *testing.T) {
	t.Parallel()
	for _, top := range synth.Topologies() {
		if searchMethod(top) == "" {
			t.Errorf("%s has no search", top.ID())
		}
	}
}

// TestGainFitSampleStock is the acceptance fit on sample-stock.csv:
// a 2 kHz low-pass, 40 dB at 8 kHz, with 20 dB of gain. The best candidate
// by error must meet --good-enough (0.05 dB, the default), and ngspice,
// simulating its netlist far inside the passband (0.2 Hz), must give 20 dB
// within that candidate's response error (plus 0.01 dB for the simulator,
// the netlist check's tolerance). --topology mfb must build every 2-pole
// section as multiple-feedback and --polarity keep must list no inverting
// design.
func TestGainFitSampleStock(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("fits the sample drawer three times")
	}
	items := sampleStock(t)
	base := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 2000, Stop: 8000, StopAtten: 40, GainDB: 20}
	o := DefaultOptions()
	o.Rank = RankError
	t.Run("auto", func(t *testing.T) {
		t.Parallel()
		r := bestOf(t, items, base, o)
		c := r.Candidates[0]
		if c.ResponseError > o.GoodEnough || !c.MeetsSpec {
			t.Fatalf("best error %.4f dB (good enough %g), meets spec %v", c.ResponseError, o.GoodEnough, c.MeetsSpec)
		}
		if math.Abs(c.GainDB()-20) > c.ResponseError+1e-9 {
			t.Errorf("gain from the values %.4f dB, error %.4f dB", c.GainDB(), c.ResponseError)
		}
		net := synth.Netlist(c.Stages(), synth.NetlistOptions{Title: "gain", FStart: 0.2, FStop: 2})
		i := strings.Index(net, "\n.ac ")
		j := strings.Index(net[i+1:], "\n")
		net = net[:i+1] + ".ac lin 2 0.2 0.4" + net[i+1+j:]
		_, h := ngspiceAC(t, net)
		g := synth.MagnitudeDB(h[0])
		if math.Abs(g-20) > c.ResponseError+0.01 {
			t.Errorf("ngspice passband gain %.4f dB, want 20 within %.4f dB", g, c.ResponseError+0.01)
		}
		want := 0.0
		if c.Inverting() {
			want = 180
		}
		if ph := math.Abs(synth.PhaseDeg(h[0])); math.Abs(ph-want) > 0.05 {
			t.Errorf("ngspice passband phase %.3f°, inverting %v", synth.PhaseDeg(h[0]), c.Inverting())
		}
		t.Logf("best: %s, error %.4f dB, ngspice %.4f dB at 0.2 Hz, %.2f°", c.Topologies(), c.ResponseError, g, synth.PhaseDeg(h[0]))
	})
	for _, tc := range []struct {
		name string
		top  synth.TopologyChoice
		pol  synth.Polarity
	}{{"mfb", synth.TopologyMFB, synth.PolarityAny}, {"keep", synth.TopologyAuto, synth.PolarityKeep}} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := base
			s.Topology, s.Polarity = tc.top, tc.pol
			r := bestOf(t, items, s, o)
			for k, c := range r.Candidates {
				for i, sec := range c.Sections {
					tp := sec.Target.Topology
					if tc.top == synth.TopologyMFB && tp.Poles() == 2 && tp.Family() != synth.FamilyMFB {
						t.Errorf("candidate %d section %d is a %s", k+1, i+1, tp.Name())
					}
				}
				if tc.pol == synth.PolarityKeep && c.Inverting() {
					t.Errorf("candidate %d (%s) inverts", k+1, c.Topologies())
				}
			}
			t.Logf("%s: best %s, error %.4f dB", tc.name, r.Candidates[0].Topologies(), r.Candidates[0].ResponseError)
		})
	}
}
