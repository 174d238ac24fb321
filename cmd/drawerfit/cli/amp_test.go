package cli

import (
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"
)

// ampRow returns the stock id of the sample drawer's amplifier row with
// the given label.
func ampRow(t *testing.T, s *stockEnv, label string) string {
	t.Helper()
	for _, it := range s.listJSON("--kind", "opamp") {
		if it["label"] == label {
			return strconv.Itoa(int(it["stock_id"].(float64)))
		}
	}
	t.Fatalf("no amplifier row %q", label)
	return ""
}

// TestAmplifierPackagesThroughProduction: a design pinned to the sample
// drawer's quad takes one package for its two sections; the netlist has the
// row's subcircuit; a build that needs more packages than the row holds is
// refused with the shortfall and changes nothing; a build draws the
// packages with the passives and lists their channels by bin; undo returns
// them.
func TestAmplifierPackagesThroughProduction(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	quad := ampRow(t, s, "blue bag") // 10 quads, 1 MHz, bin E1 (invented)
	net := filepath.Join(s.dir, "filter.cir")
	var fit struct {
		Candidates []struct {
			ID     string `json:"design_id"`
			OpAmps []struct {
				StockID     int64    `json:"stock_id"`
				Packages    int      `json:"packages_per_board"`
				Channels    int      `json:"channels_used"`
				Designators []string `json:"designators"`
			} `json:"opamps"`
			Ideal    *float64 `json:"ideal_opamp_error_db"`
			Error    float64  `json:"response_error_db"`
			Sections []any    `json:"sections"`
		} `json:"candidates"`
	}
	if code := s.jsonOf(&fit, "fit", "lowpass", "--pass", "1k", "--order", "4", "--combine", "1", "--rank", "balanced",
		"--top", "1", "--opamp", quad, "--save", "--json", "--netlist", net); code != 0 || len(fit.Candidates) != 1 {
		t.Fatalf("fit exit %d: %+v", code, fit)
	}
	c := fit.Candidates[0]
	if len(c.OpAmps) != 1 || strconv.FormatInt(c.OpAmps[0].StockID, 10) != quad || c.OpAmps[0].Packages != 1 ||
		c.OpAmps[0].Channels != 2 || strings.Join(c.OpAmps[0].Designators, " ") != "U1A U1B" || c.Ideal == nil {
		t.Fatalf("amplifier of the fit: %+v", c)
	}
	text, err := os.ReadFile(net)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(text), ".subckt") || !strings.Contains(string(text), "XU1A ") || !strings.Contains(string(text), "XU1B ") ||
		strings.Count(string(text), ".subckt") != 1 {
		t.Fatalf("netlist:\n%s", text)
	}
	id := c.ID
	before := s.quantities()
	// 11 boards need 11 quads; the row holds 10.
	out, _, code := s.run("", "build", id, "--boards", "11")
	if code != 1 || !strings.Contains(out, "Not enough stock") || !strings.Contains(out, "blue bag") {
		t.Fatalf("build of 11: exit %d\n%s", code, out)
	}
	if !reflect.DeepEqual(before, s.quantities()) {
		t.Fatal("a refused build changed the stock")
	}
	qtyOf := func() float64 {
		for _, it := range s.listJSON("--kind", "opamp") {
			if strconv.Itoa(int(it["stock_id"].(float64))) == quad {
				return it["quantity"].(float64)
			}
		}
		return -1
	}
	out = s.ok("build", id, "--boards", "3")
	if !strings.Contains(out, "U1A U1B") || !strings.Contains(out, "E1") || qtyOf() != 7 {
		t.Fatalf("build of 3 (quads left %v):\n%s", qtyOf(), out)
	}
	if h := s.ok("stock", "history", quad); !strings.Contains(h, "build 1") {
		t.Fatalf("ledger of the quad row:\n%s", h)
	}
	s.ok("build", "undo", "1")
	if qtyOf() != 10 || !reflect.DeepEqual(before, s.quantities()) {
		t.Fatalf("undo left %v quads", qtyOf())
	}
}

// TestFitOpAmpFlags: --opamp none scores with ideal amplifiers and lists
// no amplifier; --opamp with a resistor row or --gbw with --opamp is
// refused.
func TestFitOpAmpFlags(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	var fit struct {
		Candidates []struct {
			OpAmps []any    `json:"opamps"`
			Ideal  *float64 `json:"ideal_opamp_error_db"`
		} `json:"candidates"`
	}
	if code := s.jsonOf(&fit, "fit", "lowpass", "--pass", "1k", "--order", "2", "--combine", "1", "--rank", "balanced",
		"--top", "2", "--opamp", "none", "--json"); code != 0 || len(fit.Candidates) == 0 {
		t.Fatalf("--opamp none: exit %d", code)
	}
	for _, c := range fit.Candidates {
		if len(c.OpAmps) != 0 || c.Ideal != nil {
			t.Fatalf("--opamp none lists an amplifier: %+v", c)
		}
	}
	if msg := s.fail("fit", "lowpass", "--pass", "1k", "--order", "2", "--opamp", "1"); !strings.Contains(msg, "not an amplifier") {
		t.Errorf("--opamp with a resistor row: %q", msg)
	}
	if msg := s.fail("fit", "lowpass", "--pass", "1k", "--order", "2", "--opamp", "none", "--gbw", "1M"); !strings.Contains(msg, "exclude each other") {
		t.Errorf("--opamp with --gbw: %q", msg)
	}
}

// TestSuggestBuysAmplifierPackages: for 20 boards every amplifier row of
// the sample drawer is short; the purchase suggestion that closes the
// shortfall buys the missing packages of one.
func TestSuggestBuysAmplifierPackages(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	var fit struct {
		Suggestions []jsonSuggestion `json:"suggestions"`
	}
	s.jsonOf(&fit, "fit", "lowpass", "--pass", "1k", "--order", "4", "--combine", "1", "--rank", "balanced",
		"--stock", sampleCSV, "--boards", "20", "--suggest", "--json")
	for _, sg := range fit.Suggestions {
		if !sg.ClosesShortfall {
			continue
		}
		for _, p := range sg.Items {
			if p.Kind == "opamp" && p.Quantity > 0 {
				return
			}
		}
	}
	t.Fatalf("no suggestion buys amplifier packages: %+v", fit.Suggestions)
}

// TestPlanFiltersSharePackages: two 2-section filters pinned to the quad
// share one package per board (four channels), not one each; the build of
// the saved board draws one package per board and names four channels.
func TestPlanFiltersSharePackages(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	quad := ampRow(t, s, "blue bag")
	plan := s.write("pair.toml", "name = \"two-channel pair\"\nboards = 2\n\n"+
		"[[filter]]\nlabel = \"low\"\nkind = \"lowpass\"\npass = \"1k\"\norder = 4\n\n"+
		"[[filter]]\nlabel = \"high\"\nkind = \"highpass\"\npass = \"100\"\norder = 4\n")
	var res struct {
		Boards []struct {
			ID       string `json:"design_id"`
			StockUse []struct {
				StockID  int64 `json:"stock_id"`
				PerBoard int   `json:"per_board"`
			} `json:"stock_use"`
		} `json:"candidates"`
	}
	if code := s.jsonOf(&res, "fit", "--plan", plan, "--combine", "1", "--rank", "balanced", "--opamp", quad, "--top", "1", "--save", "--json"); code != 0 || len(res.Boards) == 0 {
		t.Fatalf("plan fit exit %d: %+v", code, res)
	}
	quads := 0
	for _, u := range res.Boards[0].StockUse {
		if strconv.FormatInt(u.StockID, 10) == quad {
			quads = u.PerBoard
		}
	}
	if quads != 1 {
		t.Fatalf("two filters of 2 sections take %d quads per board, want 1 shared", quads)
	}
	out := s.ok("build", res.Boards[0].ID, "--boards", "2", "--dry-run")
	if !strings.Contains(out, "U1A U1B U1C U1D") {
		t.Fatalf("pick list of the shared quad:\n%s", out)
	}
}

// TestSlowSectionsInJSON: a 100 kHz filter on the 1 MHz quad: the sections
// the quad cannot bring within --good-enough are named with the
// gain-bandwidth they need.
func TestSlowSectionsInJSON(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	quad := ampRow(t, s, "blue bag")
	var fit struct {
		Slow []struct {
			Section int      `json:"section"`
			Need    *float64 `json:"need_gbw_hz"`
			Fastest string   `json:"fastest"`
		} `json:"slow_sections"`
	}
	s.jsonOf(&fit, "fit", "lowpass", "--pass", "100k", "--order", "4", "--combine", "1", "--rank", "balanced", "--opamp", quad, "--json")
	if len(fit.Slow) == 0 {
		t.Fatal("no slow section for a 100 kHz filter on a 1 MHz amplifier")
	}
	for _, sl := range fit.Slow {
		if sl.Need == nil || !(*sl.Need > 1e6) || sl.Fastest != "blue bag" {
			t.Errorf("slow section %+v", sl)
		}
	}
}
