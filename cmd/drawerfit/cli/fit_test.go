package cli

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const sampleCSV = "../../../sample-stock.csv"

func TestFitJSONShape(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	out := s.ok("fit", "lowpass", "--pass", "2k", "--order", "4", "--stock", sampleCSV, "--top", "3", "--json")
	var doc map[string]any
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	spec, ok := doc["spec"].(map[string]any)
	if !ok || spec["kind"] != "lowpass" || spec["response"] != "butterworth" {
		t.Errorf("spec = %v", doc["spec"])
	}
	cands, _ := doc["candidates"].([]any)
	if len(cands) != 3 {
		t.Fatalf("%d candidates, want 3", len(cands))
	}
	// The keys the issue lists for every candidate.
	for _, k := range []string{"rank", "order", "arrangement", "response_error_db", "meets_spec", "attenuation",
		"part_count", "unique_parts", "boards_buildable", "sections", "stock_use", "netlist"} {
		if _, ok := cands[0].(map[string]any)[k]; !ok {
			t.Errorf("candidate has no %q", k)
		}
	}
	c := cands[0].(map[string]any)
	if c["rank"].(float64) != 1 || c["order"].(float64) != 4 || c["meets_spec"] != true {
		t.Errorf("first candidate: rank %v order %v meets %v", c["rank"], c["order"], c["meets_spec"])
	}
	att := c["attenuation"].(map[string]any)
	if _, ok := att["pass_atten_db"].(float64); !ok || att["stop_atten_db"] != nil {
		t.Errorf("attenuation = %v (stop must be null without --stop)", att)
	}
	sec := c["sections"].([]any)[0].(map[string]any)
	for _, k := range []string{"topology", "target_f0_hz", "target_q", "f0_hz", "q", "components"} {
		if _, ok := sec[k]; !ok {
			t.Errorf("section has no %q", k)
		}
	}
	comp := sec["components"].([]any)[0].(map[string]any)
	for _, k := range []string{"ref", "value", "arrangement", "parts"} {
		if _, ok := comp[k]; !ok {
			t.Errorf("component has no %q", k)
		}
	}
	part := comp["parts"].([]any)[0].(map[string]any)
	for _, k := range []string{"stock_id", "value", "location"} {
		if _, ok := part[k]; !ok {
			t.Errorf("part has no %q", k)
		}
	}
	if !strings.Contains(c["netlist"].(string), "V1 in 0 AC 1") {
		t.Errorf("netlist lacks the AC source:\n%s", c["netlist"])
	}
}

func TestFitTableAndNetlistFile(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	net := filepath.Join(s.dir, "best.cir")
	out := s.ok("fit", "highpass", "--pass", "200", "--order", "2", "--stock", sampleCSV, "--netlist", net)
	for _, want := range []string{"Butterworth high-pass", "error dB", "Candidate #1", "Sallen-Key high-pass", "Verify on the bench"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	b, err := os.ReadFile(net)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), ".ac dec") || !strings.HasSuffix(strings.TrimSpace(string(b)), ".end") {
		t.Errorf("netlist file:\n%s", b)
	}
}

func TestFitExitCodes(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	tiny := s.write("tiny.csv", "kind,value,quantity,dielectric\nR,10k,5,\nR,22k,5,\nC,100p,5,C0G\nC,220p,5,C0G\n")
	for _, tc := range []struct {
		name string
		args []string
		code int
		err  string
	}{
		{"nothing-meets", []string{"fit", "lowpass", "--pass", "10", "--order", "2", "--stock", tiny}, 1, ""},
		{"boards-zero", []string{"fit", "lowpass", "--pass", "1k", "--order", "2", "--stock", tiny, "--boards", "0"}, 2, "--boards"},
		{"top-zero", []string{"fit", "lowpass", "--pass", "1k", "--order", "2", "--stock", tiny, "--top", "0"}, 2, "--top"},
		{"bad-rank", []string{"fit", "lowpass", "--pass", "1k", "--order", "2", "--stock", tiny, "--rank", "cheapest"}, 2, "--rank"},
		{"no-kind", []string{"fit", "--pass", "1k"}, 2, "lowpass or highpass"},
		{"missing-file", []string{"fit", "lowpass", "--pass", "1k", "--order", "2", "--stock", filepath.Join(s.dir, "none.csv")}, 1, "none.csv"},
		{"missing-database", []string{"fit", "lowpass", "--pass", "1k", "--order", "2"}, 1, "no stock database at"},
		{"empty-database", []string{"fit", "lowpass", "--pass", "1k", "--order", "2"}, 1, "empty"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if tc.name == "empty-database" {
				s.createEmpty()
			}
			out, errs, code := s.run("", tc.args...)
			if code != tc.code {
				t.Fatalf("exit %d, want %d\nstdout:\n%s\nstderr:\n%s", code, tc.code, out, errs)
			}
			if tc.err != "" && !strings.Contains(errs, tc.err) {
				t.Errorf("stderr %q does not mention %q", errs, tc.err)
			}
			if tc.name == "nothing-meets" && !strings.Contains(out, "Nothing in stock meets the specification") {
				t.Errorf("no plain statement of failure:\n%s", out)
			}
		})
	}
}
