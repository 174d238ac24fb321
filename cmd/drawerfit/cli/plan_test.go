package cli

import (
	"bytes"
	"encoding/json"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"drawerfit/internal/testkit"
	"drawerfit/synth"
)

// The golden-file flag is shared by the package's tests: define it unless
// another test file already did.
func init() {
	if flag.Lookup("update") == nil {
		flag.Bool("update", false, "rewrite golden files under testdata/")
	}
}

func updateGolden() bool {
	f := flag.Lookup("update")
	return f != nil && f.Value.String() == "true"
}

// runPlanCmd runs drawerfit with args in-process and returns the exit
// status and both streams.
func runPlanCmd(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	env := &Env{In: strings.NewReader(""), Out: &out, Err: &errb,
		DBPath: filepath.Join(t.TempDir(), "stock.db"),
		Getenv: func(string) string { return "" }}
	code := Run(env, args)
	return code, out.String(), errb.String()
}

func planJSONOf(t *testing.T, args ...string) planJSON {
	t.Helper()
	code, out, errs := runPlanCmd(t, append([]string{"plan"}, append(args, "--json")...)...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var p planJSON
	if err := json.Unmarshal([]byte(out), &p); err != nil {
		t.Fatalf("JSON: %v\n%s", err, out)
	}
	return p
}

// TestPlanJSONKeys checks the keys and types issue 3 promises for --json,
// reading the raw object so a renamed key fails.
func TestPlanJSONKeys(t *testing.T) {
	t.Parallel()
	code, out, errs := runPlanCmd(t, "plan", "lowpass", "--pass", "1k", "--order", "3", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var raw map[string]any
	if err := json.Unmarshal([]byte(out), &raw); err != nil {
		t.Fatal(err)
	}
	if n, ok := raw["order"].(float64); !ok || n != 3 {
		t.Errorf("order %v", raw["order"])
	}
	if raw["response"] != "butterworth" || raw["kind"] != "lowpass" {
		t.Errorf("response %v kind %v", raw["response"], raw["kind"])
	}
	att, ok := raw["attenuation"].(map[string]any)
	if !ok {
		t.Fatalf("attenuation %v", raw["attenuation"])
	}
	if v, present := att["stop_atten_db"]; !present || v != nil {
		t.Errorf("attenuation.stop_atten_db should be null without fs, got %v (present %v)", v, present)
	}
	if p, ok := att["pass_atten_db"].(float64); !ok || !testkit.Abs(1e-9).Equal(p, synth.HalfPowerDB) {
		t.Errorf("attenuation_db.pass %v, want 3.0103", att["pass"])
	}
	secs, ok := raw["sections"].([]any)
	if !ok || len(secs) != 2 {
		t.Fatalf("sections %v", raw["sections"])
	}
	for _, s := range secs {
		m := s.(map[string]any)
		for _, k := range []string{"topology", "f0_hz", "q", "components"} {
			if _, ok := m[k]; !ok {
				t.Errorf("section lacks %q: %v", k, m)
			}
		}
		for _, c := range m["components"].([]any) {
			cm := c.(map[string]any)
			if _, ok := cm["ref"].(string); !ok {
				t.Errorf("component ref %v", cm["ref"])
			}
			if _, ok := cm["value"].(float64); !ok {
				t.Errorf("component value %v", cm["value"])
			}
		}
	}
	if nl, ok := raw["netlist"].(string); !ok || !strings.Contains(nl, "V1 in 0 AC 1") || !strings.HasSuffix(nl, ".end\n") {
		t.Errorf("netlist %q", raw["netlist"])
	}
}

// TestPlanMeetsSpec checks plan end to end for every approximation, kind
// and odd arrangement: the JSON attenuations meet the specification, the
// netlist analysed independently gives the same attenuations (1e-6 dB),
// and the components in the JSON are the ones in the netlist.
func TestPlanMeetsSpec(t *testing.T) {
	t.Parallel()
	cases := [][]string{
		{"lowpass", "--pass", "1k", "--stop", "3k", "--atten", "40"},
		{"lowpass", "--pass", "1k", "--stop", "3k", "--atten", "40", "--odd", "3pole"},
		{"highpass", "--pass", "300", "--stop", "100", "--atten", "45", "--response", "chebyshev", "--ripple", "0.5", "--odd", "3pole"},
		{"lowpass", "--pass", "2.5kHz", "--stop", "10k", "--atten", "30", "--response", "bessel"},
		{"highpass", "--pass", "20", "--stop", "2", "--atten", "35", "--response", "bessel", "--bessel-norm", "delay", "--odd", "3pole"},
		{"lowpass", "--pass", "10k", "--pass-atten", "0.5", "--stop", "30k", "--atten", "60"},
		{"lowpass", "--pass", "1k", "--response", "chebyshev", "--ripple", "1", "--order", "12"},
		{"highpass", "--pass", "1k", "--order", "11", "--odd", "3pole", "--anchor", "10n"},
	}
	for _, args := range cases {
		t.Run(strings.Join(args, " "), func(t *testing.T) {
			p := planJSONOf(t, args...)
			if p.AttenuationDB.Pass > p.PassAttenDB+1e-9 {
				t.Errorf("%.6f dB at fp, allowed %.6f", p.AttenuationDB.Pass, p.PassAttenDB)
			}
			if p.StopHz != nil && *p.AttenuationDB.Stop < *p.StopAttenDB-1e-9 {
				t.Errorf("%.6f dB at fs, required %.6f", *p.AttenuationDB.Stop, *p.StopAttenDB)
			}
			freqs := []float64{p.PassHz}
			if p.StopHz != nil {
				freqs = append(freqs, *p.StopHz)
			}
			h, err := synth.AnalyzeNetlist(p.Netlist, freqs)
			if err != nil {
				t.Fatal(err)
			}
			if d := math.Abs(synth.Attenuation(h[0]) - p.AttenuationDB.Pass); d > 1e-6 {
				t.Errorf("netlist at fp differs by %.3g dB", d)
			}
			if p.StopHz != nil {
				if d := math.Abs(synth.Attenuation(h[1]) - *p.AttenuationDB.Stop); d > 1e-6 {
					t.Errorf("netlist at fs differs by %.3g dB", d)
				}
			}
			for _, s := range p.Sections {
				for _, c := range s.Components {
					line := ""
					for _, l := range strings.Split(p.Netlist, "\n") {
						if strings.HasPrefix(l, c.Ref+" ") {
							line = l
						}
					}
					f := strings.Fields(line)
					if len(f) != 4 {
						t.Fatalf("component %s not in the netlist", c.Ref)
					}
					var v float64
					if err := json.Unmarshal([]byte(f[3]), &v); err != nil || v != c.Value {
						t.Errorf("%s: netlist value %s, JSON %g", c.Ref, f[3], c.Value)
					}
				}
			}
		})
	}
}

// TestPlanFrequencyForms checks that 1.5k, 1.5kHz and 1500 are the same
// frequency (issue 3).
func TestPlanFrequencyForms(t *testing.T) {
	t.Parallel()
	var first string
	for _, f := range []string{"1.5k", "1.5kHz", "1500", "1.5 kHz"} {
		code, out, errs := runPlanCmd(t, "plan", "lowpass", "--pass", f, "--order", "4", "--json")
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", f, code, errs)
		}
		if first == "" {
			first = out
		} else if out != first {
			t.Errorf("--pass %s gives a different design", f)
		}
	}
}

// TestPlanAnchor checks --anchor: each section's largest capacitor gets
// the anchor value (the classical hand procedure, docs/check-values.md, "Scaling").
func TestPlanAnchor(t *testing.T) {
	t.Parallel()
	for _, kind := range []string{"lowpass", "highpass"} {
		p := planJSONOf(t, kind, "--pass", "3k", "--order", "7", "--odd", "3pole", "--anchor", "4n7")
		for i, s := range p.Sections {
			cmax := 0.0
			for _, c := range s.Components {
				if c.Kind == "capacitor" {
					cmax = math.Max(cmax, c.Value)
				}
			}
			if !testkit.Abs(1e-21).Equal(cmax, 4.7e-9) {
				t.Errorf("%s section %d: largest capacitor %g F, want 4.7 nF", kind, i+1, cmax)
			}
		}
	}
	// Default: the resistors' geometric middle at sqrt(1 kΩ · 470 kΩ), the
	// middle of the practical range (synth.PracticalLimits).
	p := planJSONOf(t, "lowpass", "--pass", "3k", "--order", "4")
	for _, c := range p.Sections[0].Components {
		if c.Kind == "resistor" && !testkit.Abs(1e-6).Equal(c.Value, math.Sqrt(1e3*470e3)) {
			t.Errorf("default-scaled %s = %g Ω, want 21.68 kΩ", c.Ref, c.Value)
		}
	}
}

// TestPlanNetlistFile checks that --netlist writes the same text as the
// JSON carries.
func TestPlanNetlistFile(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "f.cir")
	p := planJSONOf(t, "lowpass", "--pass", "1k", "--order", "5", "--netlist", path)
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if string(b) != p.Netlist {
		t.Error("netlist file differs from the JSON netlist")
	}
	// The file exists now: replacing it needs --force.
	if code, _, _ := runPlanCmd(t, "plan", "lowpass", "--pass", "1k", "--order", "5", "--netlist", path); code != 1 {
		t.Errorf("replacing the netlist without --force: exit %d", code)
	}
	code, out, _ := runPlanCmd(t, "plan", "lowpass", "--pass", "1k", "--order", "5", "--netlist", path, "--force")
	if code != 0 || !strings.Contains(out, "SPICE netlist written to "+path) {
		t.Errorf("exit %d, output %q", code, out)
	}
}

// TestPlanErrors checks the exit statuses: 2 for every bad specification
// of issue 3 and for usage mistakes, 1 for an infeasible one.
func TestPlanErrors(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		args []string
		code int
		msg  string
	}{
		{"fs-wrong-side-lowpass", []string{"lowpass", "--pass", "1k", "--stop", "500", "--atten", "40"}, 2, "must be above the passband edge"},
		{"fs-wrong-side-highpass", []string{"highpass", "--pass", "1k", "--stop", "2k", "--atten", "40"}, 2, "must be below the passband edge"},
		{"as-le-ap", []string{"lowpass", "--pass", "1k", "--stop", "2k", "--atten", "3"}, 2, "must exceed the passband attenuation (3.0103 dB)"},
		{"negative-pass", []string{"lowpass", "--pass", "-1k", "--order", "2"}, 2, "--pass"},
		{"zero-stop", []string{"lowpass", "--pass", "1k", "--stop", "0", "--atten", "20"}, 2, "--stop"},
		{"nan-atten", []string{"lowpass", "--pass", "1k", "--stop", "2k", "--atten", "NaN"}, 2, "--atten must be a positive number"},
		{"inf-pass-atten", []string{"lowpass", "--pass", "1k", "--order", "2", "--pass-atten", "+Inf"}, 2, "--pass-atten must be a positive number"},
		{"ripple-zero", []string{"lowpass", "--pass", "1k", "--order", "2", "--response", "chebyshev", "--ripple", "0"}, 2, "--ripple must be a positive number"},
		{"ripple-negative", []string{"lowpass", "--pass", "1k", "--order", "2", "--response", "chebyshev", "--ripple", "-1"}, 2, "--ripple must be a positive number"},
		{"ripple-without-chebyshev", []string{"lowpass", "--pass", "1k", "--order", "2", "--ripple", "1"}, 2, "only applies to --response chebyshev"},
		{"order-0", []string{"lowpass", "--pass", "1k", "--order", "0"}, 2, "outside 1..12"},
		{"order-13", []string{"lowpass", "--pass", "1k", "--order", "13"}, 2, "outside 1..12"},
		{"bad-frequency", []string{"lowpass", "--pass", "1.5q", "--order", "2"}, 2, "cannot read the frequency"},
		{"bad-kind", []string{"bandpass", "--pass", "1k", "--order", "2"}, 2, "unknown response type"},
		{"bad-response", []string{"lowpass", "--pass", "1k", "--order", "2", "--response", "elliptic"}, 2, "unknown response"},
		{"bad-odd", []string{"lowpass", "--pass", "1k", "--order", "3", "--odd", "2pole"}, 2, "odd-order arrangement"},
		{"bessel-norm-without-bessel", []string{"lowpass", "--pass", "1k", "--order", "3", "--bessel-norm", "delay"}, 2, "only applies to --response bessel"},
		{"no-pass", []string{"lowpass", "--order", "3"}, 2, "--pass"},
		{"no-order-no-stop", []string{"lowpass", "--pass", "1k"}, 2, "or an order"},
		{"stop-without-atten", []string{"lowpass", "--pass", "1k", "--stop", "2k"}, 2, "--stop needs --atten"},
		{"atten-without-stop", []string{"lowpass", "--pass", "1k", "--atten", "20", "--order", "2"}, 2, "--atten needs --stop"},
		{"no-args", []string{"--pass", "1k", "--order", "2"}, 2, "lowpass or highpass"},
		{"bad-anchor", []string{"lowpass", "--pass", "1k", "--order", "2", "--anchor", "103"}, 2, "--anchor"},
		{"unknown-flag", []string{"lowpass", "--pass", "1k", "--order", "2", "--colour"}, 2, "unknown flag"},
		{"bessel-infeasible", []string{"lowpass", "--pass", "1k", "--stop", "2k", "--atten", "30", "--response", "bessel"}, 1, "the most is 14.17 dB"},
		{"order-limit", []string{"lowpass", "--pass", "1k", "--stop", "1.2k", "--atten", "100"}, 1, "the limit is 12"},
		{"gain-too-high", []string{"lowpass", "--pass", "1k", "--order", "2", "--gain", "41"}, 2, "--gain must be 0..40 dB"},
		{"gain-negative", []string{"lowpass", "--pass", "1k", "--order", "2", "--gain", "-3"}, 2, "--gain must be 0..40 dB"},
		{"bad-polarity", []string{"lowpass", "--pass", "1k", "--order", "2", "--polarity", "flip"}, 2, "--polarity"},
		{"bad-topology", []string{"lowpass", "--pass", "1k", "--order", "2", "--topology", "twin-t"}, 2, "--topology"},
		{"gain-without-2pole", []string{"lowpass", "--pass", "1k", "--order", "1", "--gain", "6"}, 1, "needs a 2-pole section"},
		{"mfb-keep-odd", []string{"lowpass", "--pass", "1k", "--order", "6", "--gain", "6", "--topology", "mfb", "--polarity", "keep"}, 1, "polarity keep forbids"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			code, out, errs := runPlanCmd(t, append([]string{"plan"}, c.args...)...)
			if code != c.code {
				t.Errorf("exit %d, want %d (stderr %q)", code, c.code, errs)
			}
			if !strings.Contains(errs, c.msg) {
				t.Errorf("stderr %q lacks %q", errs, c.msg)
			}
			if out != "" {
				t.Errorf("stdout not empty on error: %q", out)
			}
		})
	}
}

// TestPlanHelp checks that --help has a worked example.
func TestPlanHelp(t *testing.T) {
	t.Parallel()
	code, out, _ := runPlanCmd(t, "plan", "--help")
	if code != 0 || !strings.Contains(out, "drawerfit plan highpass --pass 40k") || !strings.Contains(out, "--anchor") {
		t.Errorf("exit %d, help %q", code, out)
	}
}

// TestPlanGolden pins the piped (tab-separated) text output of two plans;
// rewrite with go test ./cmd/drawerfit/cli -run PlanGolden -update.
func TestPlanGolden(t *testing.T) {
	t.Parallel()
	cases := []struct {
		file string
		args []string
	}{
		{"testdata/plan-butterworth-lowpass.golden", []string{"lowpass", "--pass", "1k", "--stop", "3k", "--atten", "40", "--odd", "3pole"}},
		{"testdata/plan-chebyshev-highpass.golden", []string{"highpass", "--pass", "40k", "--stop", "10k", "--atten", "50", "--response", "chebyshev", "--ripple", "0.5", "--anchor", "1n"}},
		{"testdata/plan-mfb-gain-lowpass.golden", []string{"lowpass", "--pass", "2k", "--stop", "8k", "--atten", "40", "--gain", "20", "--topology", "mfb", "--anchor", "10n"}},
		{"testdata/plan-sallen-key-gain-highpass.golden", []string{"highpass", "--pass", "300", "--order", "3", "--gain", "12", "--topology", "sallen-key"}},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			code, out, errs := runPlanCmd(t, append([]string{"plan"}, c.args...)...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			if updateGolden() {
				if err := os.MkdirAll(filepath.Dir(c.file), 0o755); err != nil {
					t.Fatal(err)
				}
				if err := os.WriteFile(c.file, []byte(out), 0o644); err != nil {
					t.Fatal(err)
				}
			}
			want, err := os.ReadFile(c.file)
			if err != nil {
				t.Fatalf("%v (run with -update to create it)", err)
			}
			if out != string(want) {
				t.Errorf("output differs from %s:\n%s", c.file, out)
			}
		})
	}
}
