package cli

import (
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"drawerfit/internal/testkit"
)

// sampleEnv is a test environment whose database holds the sample drawer.
func sampleEnv(t *testing.T) *stockEnv {
	t.Helper()
	s := newStockEnv(t)
	s.ok("stock", "import", filepath.Join("..", "..", "..", "sample-stock.csv"))
	return s
}

func (s *stockEnv) jsonOf(v any, args ...string) int {
	s.t.Helper()
	out, errs, code := s.run("", args...)
	if err := json.Unmarshal([]byte(out), v); err != nil {
		s.t.Fatalf("drawerfit %s: exit %d, not JSON (%v)\n%s\n%s", strings.Join(args, " "), code, err, out, errs)
	}
	return code
}

func (s *stockEnv) quantities() map[float64]float64 {
	s.t.Helper()
	q := map[float64]float64{}
	for _, it := range s.listJSON() {
		q[it["stock_id"].(float64)] = it["quantity"].(float64)
	}
	return q
}

// An invented intercom board: two voice-band low-passes.
const intercomPlan = `name = "intercom"
boards = 10

[[filter]]
label = "microphone low-pass"
kind = "lowpass"
pass = "3.4k"
order = 4

[[filter]]
label = "speaker low-pass"
kind = "lowpass"
pass = 4000
order = 4
`

func TestFitSaveShowRoundTrip(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	var fit map[string]any
	if code := s.jsonOf(&fit, "fit", "lowpass", "--pass", "2k", "--order", "4", "--combine", "1", "--top", "3", "--save", "--json"); code != 0 {
		t.Fatalf("fit exit %d", code)
	}
	cands := fit["candidates"].([]any)
	if len(cands) == 0 {
		t.Fatal("no candidates")
	}
	var ids []string
	for _, c := range cands {
		id, _ := c.(map[string]any)["design_id"].(string)
		if len(id) != 6 {
			t.Fatalf("candidate without a saved id: %v", c.(map[string]any)["design_id"])
		}
		ids = append(ids, id)
	}
	var shown map[string]any
	if code := s.jsonOf(&shown, "show", strings.ToUpper(ids[0]), "--json"); code != 0 {
		t.Fatalf("show exit %d", code)
	}
	first := cands[0].(map[string]any)
	for _, k := range []string{"design_id", "order", "arrangement", "response_error_db", "meets_spec", "attenuation", "part_count",
		"unique_parts", "sections", "stock_use", "netlist", "rank"} {
		if !reflect.DeepEqual(shown[k], first[k]) {
			t.Errorf("show %s = %v, fit said %v", k, shown[k], first[k])
		}
	}
	if issues := shown["stock_issues"].([]any); len(issues) != 0 {
		t.Errorf("fresh design has stock issues: %v", issues)
	}
	var list []map[string]any
	s.jsonOf(&list, "designs", "--json")
	if len(list) != len(ids) || list[0]["design_id"] != ids[0] {
		t.Fatalf("designs: %v, want %v first", list, ids)
	}
	text := s.ok("show", ids[0])
	if !strings.Contains(text, "* nominal") || !strings.Contains(text, "every row is as saved") {
		t.Fatalf("show text lacks the sketch or the stock check:\n%s", text)
	}
	s.ok("designs", "remove", ids[0])
	if _, _, code := s.run("", "show", ids[0]); code != 1 {
		t.Fatalf("show of a removed design: exit %d", code)
	}
	// The table of a saving fit has an id column.
	out := s.ok("fit", "lowpass", "--pass", "2k", "--order", "2", "--combine", "1", "--top", "2", "--save")
	if !strings.Contains(out, "#\tid\torder") {
		t.Fatalf("no id column:\n%s", out)
	}
}

func TestSaveRefusesCSVStock(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	_, errs, code := s.run("", "fit", "lowpass", "--pass", "2k", "--order", "2", "--combine", "1",
		"--stock", filepath.Join("..", "..", "..", "sample-stock.csv"), "--save")
	if code != 2 || !strings.Contains(errs, "stock import") {
		t.Fatalf("exit %d: %s", code, errs)
	}
}

func TestPlanBuildUndo(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	plan := s.write("intercom.toml", intercomPlan)
	var fit struct {
		Boards []struct {
			ID          string `json:"design_id"`
			UniqueParts int    `json:"unique_parts"`
			Filters     []struct {
				Label string `json:"label"`
			} `json:"filters"`
		} `json:"candidates"`
	}
	if code := s.jsonOf(&fit, "fit", "--plan", plan, "--combine", "1", "--top", "2", "--save", "--json"); code != 0 {
		t.Fatalf("plan fit exit %d", code)
	}
	if len(fit.Boards) == 0 || fit.Boards[0].ID == "" || len(fit.Boards[0].Filters) != 2 {
		t.Fatalf("plan fit: %+v", fit)
	}
	id := fit.Boards[0].ID
	before := s.quantities()

	var dry jsonBuild
	if code := s.jsonOf(&dry, "build", id, "--boards", "10", "--dry-run", "--json"); code != 0 || dry.Drawn || dry.ID != nil {
		t.Fatalf("dry run: exit %d %+v", code, dry)
	}
	if !reflect.DeepEqual(s.quantities(), before) {
		t.Fatal("a dry run changed the stock")
	}
	total := 0
	for _, p := range dry.Picks {
		total += p.Quantity
		if len(p.Refs) == 0 || p.Quantity%10 != 0 {
			t.Fatalf("pick %+v", p)
		}
	}

	csvPath := filepath.Join(s.dir, "picks.csv")
	var built jsonBuild
	if code := s.jsonOf(&built, "build", id, "--boards", "10", "--csv", csvPath, "--json"); code != 0 || !built.Drawn || built.ID == nil {
		t.Fatalf("build: exit %d %+v", code, built)
	}
	after := s.quantities()
	for _, p := range built.Picks {
		if after[float64(p.StockID)] != before[float64(p.StockID)]-float64(p.Quantity) {
			t.Errorf("row %d: %v after, %v before, %d drawn", p.StockID, after[float64(p.StockID)], before[float64(p.StockID)], p.Quantity)
		}
	}
	b, err := os.ReadFile(csvPath)
	if err != nil || !strings.HasPrefix(string(b), "location,stock_id,kind,value,part,quantity,refs\n") ||
		strings.Count(string(b), "\n") != len(built.Picks)+1 {
		t.Fatalf("pick list CSV (%v):\n%s", err, b)
	}
	if hist := s.ok("stock", "history"); !strings.Contains(hist, "build 1: design "+id+" × 10 boards") {
		t.Fatalf("history lacks the build:\n%s", hist)
	}
	var builds []jsonBuildInfo
	s.jsonOf(&builds, "builds", "--json")
	if len(builds) != 1 || builds[0].Drawn != total || builds[0].Undone != nil {
		t.Fatalf("builds: %+v (drawn %d)", builds, total)
	}

	s.ok("build", "undo", "1")
	if !reflect.DeepEqual(s.quantities(), before) {
		t.Fatal("undo did not restore the quantities")
	}
	if _, errs, code := s.run("", "build", "undo", "1"); code != 1 || !strings.Contains(errs, "undone already") {
		t.Fatalf("second undo: exit %d %s", code, errs)
	}
	if !reflect.DeepEqual(s.quantities(), before) {
		t.Fatal("a refused undo changed the stock")
	}
}

func TestBuildRefusedOnShortfall(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	var fit map[string]any
	s.jsonOf(&fit, "fit", "lowpass", "--pass", "2k", "--order", "2", "--combine", "1", "--top", "1", "--save", "--json")
	id := fit["candidates"].([]any)[0].(map[string]any)["design_id"].(string)
	before := s.quantities()
	var res jsonBuild
	if code := s.jsonOf(&res, "build", id, "--boards", "1000", "--json"); code != 1 {
		t.Fatalf("exit %d", code)
	}
	if res.Drawn || res.ID != nil || len(res.Shortfall) == 0 || len(res.Picks) == 0 {
		t.Fatalf("refused build: %+v", res)
	}
	for _, r := range res.Shortfall {
		if r.Needed <= r.OnHand || r.OnHand != int(before[float64(r.StockID)]) {
			t.Fatalf("shortfall row %+v, on hand %v", r, before[float64(r.StockID)])
		}
	}
	if !reflect.DeepEqual(s.quantities(), before) {
		t.Fatal("a refused build changed the stock")
	}
	out, _, code := s.run("", "build", id, "--boards", "1000")
	if code != 1 || !strings.Contains(out, "Not enough stock (nothing was drawn)") {
		t.Fatalf("text refusal: exit %d\n%s", code, out)
	}
	// Taking the design's rows out of the inventory is reported by show
	// and stops a build, naming the parts.
	row := res.Picks[0]
	s.ok("stock", "remove", itoa64(row.StockID), "--force")
	var shown map[string]any
	s.jsonOf(&shown, "show", id, "--json")
	issues := shown["stock_issues"].([]any)
	if len(issues) == 0 || issues[0].(map[string]any)["kind"] != "missing" {
		t.Fatalf("show after removing row %d: %v", row.StockID, issues)
	}
	if _, errs, code := s.run("", "build", id, "--boards", "1"); code != 1 || !strings.Contains(errs, "no longer in stock") {
		t.Fatalf("build with a removed row: exit %d %s", code, errs)
	}
}

func itoa64(n int64) string { return strconv.FormatInt(n, 10) }

func TestPlanFileMistakes(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "import", s.write("drawer.csv", smallDrawer))
	cases := []struct {
		name, file, want string
	}{
		{"unknown key", "name = \"x\"\n[[filter]]\nlabel = \"a\"\nkind = \"lowpass\"\npass = \"1k\"\norder = 2\nq = 3\n", "unknown keys filter.q"},
		{"no kind", "name = \"x\"\n[[filter]]\nlabel = \"a\"\npass = \"1k\"\norder = 2\n", `filter "a": give kind`},
		{"syntax", "name = \"x\"\n[[filter]\n", "p.toml, line "},
		{"stop without atten", "name = \"x\"\n[[filter]]\nlabel = \"a\"\nkind = \"lowpass\"\npass = \"1k\"\nstop = \"3k\"\n", "stop needs atten"},
		{"no name", "[[filter]]\nlabel = \"a\"\nkind = \"lowpass\"\npass = \"1k\"\norder = 2\n", "name"},
		{"duplicate labels", "name = \"x\"\n[[filter]]\nlabel = \"a\"\nkind = \"lowpass\"\npass = \"1k\"\norder = 2\n[[filter]]\nlabel = \"A\"\nkind = \"lowpass\"\npass = \"2k\"\norder = 2\n", "both labelled"},
		// The largest int64: it once overflowed to "at least 1, not -2".
		{"boards overflow", "name = \"x\"\nboards = 9223372036854775807\n[[filter]]\nlabel = \"a\"\nkind = \"lowpass\"\npass = \"1k\"\norder = 2\n", "boards must be from 1 to 1000000000, not 9223372036854775807"},
		{"escape in a label", "name = \"x\"\n[[filter]]\nlabel = \"a\\u001b[31m\"\nkind = \"lowpass\"\npass = \"1k\"\norder = 2\n", `"a\x1b[31m"`},
		{"newline in the name", "name = \"x\\ny\"\n[[filter]]\nlabel = \"a\"\nkind = \"lowpass\"\npass = \"1k\"\norder = 2\n", "control character"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, errs, code := s.run("", "fit", "--plan", s.write("p.toml", c.file))
			if code != 2 || !strings.Contains(errs, c.want) {
				t.Fatalf("exit %d, %q lacks %q", code, errs, c.want)
			}
		})
	}
	if _, errs, code := s.run("", "fit", "--plan", filepath.Join(s.dir, "none.toml")); code != 1 || !strings.Contains(errs, "does not exist") {
		t.Fatalf("missing file: exit %d %s", code, errs)
	}
}

func TestShippedExamplePlanParses(t *testing.T) {
	t.Parallel()
	p, err := readPlan(filepath.Join("..", "..", "..", "examples", "hydrophone-board.toml"))
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Filters) != 3 || p.Boards != 25 || p.Filters[0].Spec != p.Filters[1].Spec || p.Filters[2].Spec.Stop != 100 {
		t.Fatalf("example plan: %+v", p)
	}
}

func TestFitSuggestJSON(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("several fits")
	}
	s := sampleEnv(t)
	var fit struct {
		Candidates  []any            `json:"candidates"`
		Suggestions []jsonSuggestion `json:"suggestions"`
	}
	code := s.jsonOf(&fit, "fit", "lowpass", "--pass", "3.4k", "--order", "4", "--combine", "1", "--boards", "80", "--suggest", "--json")
	if code != 1 || len(fit.Candidates) != 0 {
		t.Fatalf("exit %d with %d candidates: the drawer should not cover 80 boards", code, len(fit.Candidates))
	}
	if len(fit.Suggestions) == 0 || !fit.Suggestions[0].ClosesShortfall || len(fit.Suggestions[0].Items) == 0 {
		t.Fatalf("suggestions: %+v", fit.Suggestions)
	}
	for _, it := range fit.Suggestions[0].Items {
		if it.Quantity <= 0 || it.Part == "" {
			t.Fatalf("purchase %+v", it)
		}
	}
	out, _, _ := s.run("", "fit", "--plan", s.write("p.toml", intercomPlan), "--combine", "1", "--boards", "80", "--suggest")
	if !strings.Contains(out, "Purchase suggestions for 80 boards") || !strings.Contains(out, "closes the shortfall") {
		t.Fatalf("plan suggestions:\n%s", out)
	}
}

func TestYieldReadsSavedDesigns(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	plan := s.write("intercom.toml", intercomPlan)
	var fit struct {
		Boards []struct {
			ID string `json:"design_id"`
		} `json:"candidates"`
	}
	s.jsonOf(&fit, "fit", "--plan", plan, "--combine", "1", "--top", "1", "--save", "--json")
	id := fit.Boards[0].ID
	var y map[string]any
	if code := s.jsonOf(&y, "yield", id+"/2", "--trials", "200", "--json"); code != 0 || y["design"] != "design "+id+"/2" {
		t.Fatalf("yield: exit %d %v", code, y["design"])
	}
	// The whole board: every filter must pass, so its yield is the product
	// of the filters' (their parts are drawn independently).
	var board struct {
		Yield   float64 `json:"fraction"`
		Filters []struct {
			Yield float64 `json:"fraction"`
		} `json:"filters"`
	}
	if code := s.jsonOf(&board, "yield", id, "--trials", "200", "--json"); code != 0 || len(board.Filters) != 2 {
		t.Fatalf("board yield: exit %d %+v", code, board)
	}
	if want := board.Filters[0].Yield * board.Filters[1].Yield; !testkit.Abs(1e-12).Equal(board.Yield, want) {
		t.Errorf("board yield %v, want the product %v", board.Yield, want)
	}
	if board.Filters[1].Yield != y["fraction"].(float64) {
		t.Errorf("filter 2 in the board %v, alone %v", board.Filters[1].Yield, y["fraction"])
	}
}

func TestProductionCommandsHaveExamples(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	for _, args := range [][]string{{"designs"}, {"designs", "remove"}, {"show"}, {"build"}, {"build", "undo"}, {"builds"}, {"yield"}} {
		out := s.ok(append(args, "--help")...)
		if !strings.Contains(out, "Examples:") || !strings.Contains(out, "drawerfit "+args[0]) {
			t.Errorf("%v --help has no worked example:\n%s", args, out)
		}
	}
}

// TestRemovedRowFoundAgainByIdentity: a row that a saved design uses is
// removed only with --force (the refusal lists the design); once the same
// part is added again, the design finds the new row, says so, and builds
// from it.
func TestRemovedRowFoundAgainByIdentity(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	var fit map[string]any
	s.jsonOf(&fit, "fit", "lowpass", "--pass", "2k", "--order", "2", "--combine", "1", "--top", "1", "--save", "--json")
	id := fit["candidates"].([]any)[0].(map[string]any)["design_id"].(string)
	var dry jsonBuild
	if code := s.jsonOf(&dry, "build", id, "--boards", "1", "--dry-run", "--json"); code != 0 {
		t.Fatalf("dry run exit %d", code)
	}
	old := dry.Picks[0].StockID
	var row map[string]any
	for _, it := range s.listJSON() {
		if int64(it["stock_id"].(float64)) == old {
			row = it
		}
	}
	_, errs, code := s.run("", "stock", "remove", itoa64(old))
	if code != 1 || !strings.Contains(errs, "saved design "+id) || !strings.Contains(errs, "--force") {
		t.Fatalf("remove without --force: exit %d %q", code, errs)
	}
	out := s.ok("stock", "remove", itoa64(old), "--force")
	if !strings.Contains(out, id) {
		t.Errorf("remove --force does not name the design:\n%s", out)
	}
	// The recount: the same part, added again.
	kind := row["kind"].(string)
	value := strconv.FormatFloat(row["value"].(float64), 'g', -1, 64)
	if kind == "capacitor" {
		value += "F"
	}
	args := []string{"stock", "add", value, "--kind", kind, "--qty", "40",
		"--tol", strconv.FormatFloat(row["tolerance"].(float64)*100, 'g', -1, 64) + "%",
		"--package", row["package"].(string), "--dielectric", row["dielectric"].(string), "--location", row["location"].(string)}
	s.ok(args...)
	var again jsonBuild
	if code := s.jsonOf(&again, "build", id, "--boards", "1", "--dry-run", "--json"); code != 0 {
		t.Fatalf("dry run after re-adding: exit %d %+v", code, again)
	}
	text, _, code := s.run("", "build", id, "--boards", "1", "--dry-run")
	if code != 0 || !strings.Contains(text, "added again") {
		t.Errorf("dry run text: exit %d\n%s", code, text)
	}
	var built jsonBuild
	if code := s.jsonOf(&built, "build", id, "--boards", "1", "--json"); code != 0 || !built.Drawn {
		t.Fatalf("build after re-adding: exit %d %+v", code, built)
	}
	for _, p := range built.Picks {
		if p.StockID == old {
			t.Errorf("the build drew from the removed row %d", old)
		}
	}
}
