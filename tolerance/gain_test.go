package tolerance

import (
	"context"
	"testing"

	"drawerfit/synth"
)

// TestYieldOfGainSections: a board is judged relative to its own passband
// gain, as the specification's attenuations are. Boards of exact parts of
// a design with 20 dB of gain (Sallen-Key dividers, multiple-feedback
// sections) all pass; with 0.1 % parts the yield equals that of the same
// shape at unity gain within the two runs' 95 % intervals. The targets
// are placed inside the specification, so exact parts are off its limits.
func TestYieldOfGainSections(t *testing.T) {
	t.Parallel()
	for _, top := range []synth.TopologyChoice{synth.TopologySallenKey, synth.TopologyMFB} {
		t.Run(top.String(), func(t *testing.T) {
			t.Parallel()
			spec := butterworthLP(1000, 4000, 40)
			spec.GainDB, spec.Topology, spec.Placement = 20, top, synth.PlaceInside
			exact := designCandidate(t, spec, 5, synth.OddOnePole, tols{})
			r, err := Run(context.Background(), exact, spec, Options{Trials: 200, Seed: 1, Brief: true})
			if err != nil {
				t.Fatal(err)
			}
			if r.Yield != 1 {
				t.Fatalf("exact parts: yield %g, want 1", r.Yield)
			}
			gain := designCandidate(t, spec, 5, synth.OddOnePole, tols{r: 0.001, c: 0.001})
			unitySpec := butterworthLP(1000, 4000, 40)
			unitySpec.Topology, unitySpec.Placement = top, synth.PlaceInside
			unity := designCandidate(t, unitySpec, 5, synth.OddOnePole, tols{r: 0.001, c: 0.001})
			rg, err := Run(context.Background(), gain, spec, Options{Trials: 2000, Seed: 1, Brief: true})
			if err != nil {
				t.Fatal(err)
			}
			ru, err := Run(context.Background(), unity, unitySpec, Options{Trials: 2000, Seed: 1, Brief: true})
			if err != nil {
				t.Fatal(err)
			}
			if rg.CIHigh < ru.CILow || ru.CIHigh < rg.CILow {
				t.Errorf("yield with gain %.3f [%.3f, %.3f], at unity gain %.3f [%.3f, %.3f]",
					rg.Yield, rg.CILow, rg.CIHigh, ru.Yield, ru.CILow, ru.CIHigh)
			}
		})
	}
}
