package cli

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"strings"
	"testing"

	"github.com/spf13/cobra"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/synth"
)

// fakeDesigns is a designSource holding one invented design under ID "12".
type fakeDesigns struct {
	c    *optimize.Candidate
	spec synth.Spec
}

func (f *fakeDesigns) LoadDesign(_ context.Context, id string) (*optimize.Candidate, synth.Spec, error) {
	if id != "12" {
		return nil, synth.Spec{}, fault.NotFoundf("no saved design %s", id)
	}
	return f.c, f.spec, nil
}

func (f *fakeDesigns) Close() error { return nil }

// yieldFixture is a 6th-order Butterworth low-pass, 1 kHz, scaled by the
// hand procedure, built from invented 1 % resistors and 5 % C0G capacitors.
func yieldFixture(t *testing.T) *fakeDesigns {
	t.Helper()
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1e3, Stop: 3e3, StopAtten: 40}
	d, err := synth.NewDesign(spec, 6, synth.OddOnePole)
	if err != nil {
		t.Fatal(err)
	}
	stages, err := d.Scale(synth.Scaling{})
	if err != nil {
		t.Fatal(err)
	}
	c := &optimize.Candidate{Design: d}
	n := 0
	for i, st := range stages {
		sf := optimize.SectionFit{Target: d.Sections[i]}
		for k, e := range st.Topology.Elements() {
			n++
			v := st.Positions[k].Parts[0]
			tol, diel := 0.01, ""
			if e.Kind == synth.Capacitor {
				tol, diel = 0.05, "C0G"
			}
			sf.Components = append(sf.Components, optimize.Component{
				Ref: fmt.Sprintf("%c%d", e.Ref[0], n), Symbol: e.Symbol, Kind: e.Kind, Value: v,
				Parts: []optimize.Part{{StockID: int64(n), Value: v, Tolerance: tol, Dielectric: diel, Location: "parts cabinet 2"}},
			})
		}
		c.Sections = append(c.Sections, sf)
	}
	return &fakeDesigns{c: c, spec: d.Spec}
}

func runYieldCmd(t *testing.T, src designSource, args ...string) (int, string) {
	t.Helper()
	var out, errb bytes.Buffer
	env := &Env{Out: &out, Err: &errb, Getenv: func(string) string { return "" }, Ctx: context.Background()}
	cmd := newYieldCmdWith(func(*Env) (designSource, error) { return src, nil })(env, nil)
	cmd.SetArgs(args)
	cmd.SetOut(&out)
	cmd.SetErr(&errb)
	cmd.SilenceUsage, cmd.SilenceErrors = true, true
	cmd.SetFlagErrorFunc(func(_ *cobra.Command, err error) error { return usageError{err} })
	if err := cmd.Execute(); err != nil {
		return exitCode(err), err.Error()
	}
	return 0, out.String()
}

func TestYieldText(t *testing.T) {
	t.Parallel()
	src := yieldFixture(t)
	code, out := runYieldCmd(t, src, "12", "--boards", "25", "--gbw", "200k", "--bias-resistor", "--trials", "800")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, out)
	}
	for _, want := range []string{
		"design 12: ", "of 800 simulated boards pass (95% interval",
		"of 25 boards built, expect about", "seed 1",
		"-3 dB frequency", "attenuation at fs", "worst-case corners",
		"What the failures come from", "Op Amps for Everyone, section 16.8.4",
		"section 1: ", "R1+R2", "verify the circuit on the bench",
		"sits on the passband limit",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}

func TestYieldJSON(t *testing.T) {
	t.Parallel()
	src := yieldFixture(t)
	code, out := runYieldCmd(t, src, "12", "--json", "--trials", "600", "--seed", "9")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, out)
	}
	var raw map[string]any
	if err := json.Unmarshal([]byte(out), &raw); err != nil {
		t.Fatalf("JSON: %v\n%s", err, out)
	}
	for _, k := range []string{"fraction", "ci_low", "ci_high", "trials", "seed", "blame", "caution", "practical"} {
		if _, ok := raw[k]; !ok {
			t.Errorf("JSON lacks %q", k)
		}
	}
	if raw["trials"].(float64) != 600 || raw["seed"].(float64) != 9 {
		t.Errorf("trials %v seed %v", raw["trials"], raw["seed"])
	}
	y := raw["fraction"].(float64)
	if !(raw["ci_low"].(float64) <= y && y <= raw["ci_high"].(float64)) {
		t.Errorf("yield %v outside its interval %v..%v", y, raw["ci_low"], raw["ci_high"])
	}
	// The same seed gives the same answer.
	_, again := runYieldCmd(t, src, "12", "--json", "--trials", "600", "--seed", "9")
	if again != out {
		t.Error("same seed, different output")
	}
}

func TestYieldErrors(t *testing.T) {
	t.Parallel()
	src := yieldFixture(t)
	cases := []struct {
		name string
		args []string
		code int
	}{
		{"unknown design", []string{"13"}, 1},
		{"bad distribution", []string{"12", "--dist", "triangle"}, 2},
		{"bad target", []string{"12", "--target-yield", "150%"}, 2},
		{"dc gain without gbw", []string{"12", "--dc-gain", "90"}, 2},
		{"bad gbw", []string{"12", "--gbw", "fast"}, 2},
		{"no id", []string{}, 2},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			if code, out := runYieldCmd(t, src, tc.args...); code != tc.code {
				t.Errorf("exit %d (%s), want %d", code, out, tc.code)
			}
		})
	}
}
