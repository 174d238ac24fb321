package cli

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"sort"
	"strconv"
	"strings"
	"testing"
)

// jsonOutput is one command output's place in the vocabulary: its schema
// file docs/schema/NAME.json and the Go type the command prints.
type jsonOutput struct {
	name, title string
	typ         reflect.Type
}

// jsonOutputs lists every --json output. A command that gets --json adds
// its type here; TestJSONOutputsValidate runs it.
var jsonOutputs = []jsonOutput{
	{"fit", "drawerfit fit ... --json", reflect.TypeOf(jsonFit{})},
	{"fit-plan", "drawerfit fit --plan FILE --json", reflect.TypeOf(jsonPlanFit{})},
	{"plan", "drawerfit plan ... --json", reflect.TypeOf(planJSON{})},
	{"designs", "drawerfit designs --json", reflect.TypeOf([]jsonDesignInfo{})},
	{"show", "drawerfit show ID --json (a single filter)", reflect.TypeOf(jsonShowFilter{})},
	{"show-board", "drawerfit show ID --json (a board of filters)", reflect.TypeOf(jsonShowBoard{})},
	{"build", "drawerfit build ID --json", reflect.TypeOf(jsonBuild{})},
	{"build-undo", "drawerfit build undo BUILD_ID --json", reflect.TypeOf(jsonUndo{})},
	{"builds", "drawerfit builds --json", reflect.TypeOf([]jsonBuildInfo{})},
	{"yield", "drawerfit yield ID --json (a single filter, or ID/N)", reflect.TypeOf(yieldReport{})},
	{"yield-board", "drawerfit yield ID --json (a board of filters)", reflect.TypeOf(boardYield{})},
	{"stock-list", "drawerfit stock list --json", reflect.TypeOf([]itemJSON{})},
	{"stock-import", "drawerfit stock import FILE --json", reflect.TypeOf(jsonImport{})},
	{"stock-add", "drawerfit stock add ... --json", reflect.TypeOf(jsonAdd{})},
	{"stock-set", "drawerfit stock set ID ... --json", reflect.TypeOf(itemJSON{})},
	{"stock-history", "drawerfit stock history --json", reflect.TypeOf([]movementJSON{})},
	{"stock-reorder", "drawerfit stock reorder --json", reflect.TypeOf([]jsonReorder{})},
}

// schemaDocs builds every output's schema document; it reports fields that
// may leave their key out and types it cannot describe.
func schemaDocs(t *testing.T) map[string]map[string]any {
	t.Helper()
	docs := map[string]map[string]any{}
	for _, o := range jsonOutputs {
		g := &schemaGen{defs: map[string]any{}}
		doc := g.document(o.title, "Generated from the Go type the command prints; see docs/json.md for the vocabulary's rules.", o.typ)
		for _, f := range g.omitempty {
			t.Errorf("%s: field %s may leave its key out (omitempty); keys are always present, as null or empty", o.name, f)
		}
		for _, u := range g.unknown {
			t.Errorf("%s: type %s marshals itself; describe it in the schema generator", o.name, u)
		}
		// Round-trip through JSON so that the in-memory document is what
		// the file holds.
		var back map[string]any
		if err := json.Unmarshal(marshalSchema(doc), &back); err != nil {
			t.Fatal(err)
		}
		docs[o.name] = back
	}
	return docs
}

// TestJSONSchemaFiles keeps docs/schema/ equal to the Go types (rewrite
// with -update and review the diff).
func TestJSONSchemaFiles(t *testing.T) {
	t.Parallel()
	docs := schemaDocs(t)
	for _, o := range jsonOutputs {
		want := marshalSchema(docs[o.name])
		path := filepath.Join(schemaDir, o.name+".json")
		if updateGolden() {
			if err := os.MkdirAll(schemaDir, 0o755); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(path, want, 0o644); err != nil {
				t.Fatal(err)
			}
			continue
		}
		got, err := os.ReadFile(path)
		if err != nil {
			t.Errorf("%v (go test ./cmd/drawerfit/cli -run TestJSONSchemaFiles -update writes it)", err)
			continue
		}
		if !bytes.Equal(got, want) {
			t.Errorf("%s differs from the Go type %s: rewrite with -update and review the diff", path, o.typ)
		}
	}
	// No stale files.
	files, _ := filepath.Glob(filepath.Join(schemaDir, "*.json"))
	for _, f := range files {
		name := strings.TrimSuffix(filepath.Base(f), ".json")
		known := false
		for _, o := range jsonOutputs {
			known = known || o.name == name
		}
		if !known {
			t.Errorf("%s describes no output listed in jsonOutputs", f)
		}
	}
}

// TestJSONVocabulary: one key, one type, in every output (docs/json.md).
func TestJSONVocabulary(t *testing.T) {
	t.Parallel()
	docs := schemaDocs(t)
	types := map[string]map[string][]string{}
	for name, doc := range docs {
		keyTypes(doc, name, types)
	}
	keys := make([]string, 0, len(types))
	for k := range types {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		byType := types[k]
		delete(byType, "any")
		if len(byType) <= 1 {
			continue
		}
		var desc []string
		for tp, where := range byType {
			sort.Strings(where)
			desc = append(desc, tp+" in "+where[0])
		}
		sort.Strings(desc)
		t.Errorf("key %q has %d types: %s", k, len(byType), strings.Join(desc, "; "))
	}
	// Words the vocabulary replaced: the same concept has one key.
	for old, now := range retiredKeys {
		if _, ok := types[old]; ok {
			t.Errorf("key %q is retired: the vocabulary says %q (docs/json.md)", old, now)
		}
	}
}

// retiredKeys are keys an earlier version used for a concept that now has
// one key everywhere.
var retiredKeys = map[string]string{
	"created": "saved_at", "saved": "saved_at", "at": "recorded_at",
	"id": "design_id, build_id, stock_id or movement_id",
}

// TestJSONOutputsValidate runs every command with --json on the sample
// drawer and validates what it prints against its schema.
func TestJSONOutputsValidate(t *testing.T) {
	t.Parallel()
	docs := schemaDocs(t)
	s := sampleEnv(t)
	seen := map[string]bool{}
	check := func(name string, args ...string) string {
		t.Helper()
		out, errs, code := s.run("", append(args, "--json")...)
		if code > 1 { // 1: nothing meets the specification, a refused build: still JSON
			t.Fatalf("drawerfit %s --json: exit %d\n%s", strings.Join(args, " "), code, errs)
		}
		dec := json.NewDecoder(strings.NewReader(out))
		dec.UseNumber()
		var v any
		if err := dec.Decode(&v); err != nil {
			t.Fatalf("drawerfit %s --json: %v\n%s", strings.Join(args, " "), err, out)
		}
		doc, ok := docs[name]
		if !ok {
			t.Fatalf("no schema %s", name)
		}
		seen[name] = true
		for _, e := range validate(doc, doc, v, name) {
			t.Errorf("drawerfit %s --json: %s", strings.Join(args, " "), e)
		}
		return out
	}
	plan := filepath.Join("..", "..", "..", "examples", "hydrophone-board.toml")

	out := check("fit", "fit", "lowpass", "--pass", "1k", "--stop", "3k", "--atten", "40", "--combine", "1", "--top", "2",
		"--save", "--gbw", "1M", "--bias-resistor")
	var fit struct {
		Candidates []struct {
			DesignID string `json:"design_id"`
		} `json:"candidates"`
	}
	if err := json.Unmarshal([]byte(out), &fit); err != nil || len(fit.Candidates) == 0 || fit.Candidates[0].DesignID == "" {
		t.Fatalf("fit --save --json gives no design_id: %v\n%s", err, out)
	}
	id := fit.Candidates[0].DesignID
	check("fit", "fit", "lowpass", "--pass", "1k", "--stop", "1.05k", "--atten", "80", "--order", "4", "--combine", "1")
	out = check("fit-plan", "fit", "--plan", plan, "--combine", "1", "--top", "1", "--boards", "1", "--save")
	var pf struct {
		Candidates []struct {
			DesignID string `json:"design_id"`
		} `json:"candidates"`
	}
	if err := json.Unmarshal([]byte(out), &pf); err != nil || len(pf.Candidates) == 0 || pf.Candidates[0].DesignID == "" {
		t.Fatalf("fit --plan --save --json gives no design_id: %v", err)
	}
	board := pf.Candidates[0].DesignID
	check("plan", "plan", "lowpass", "--pass", "1k", "--stop", "3k", "--atten", "40")
	check("designs", "designs")
	check("show", "show", id)
	check("show-board", "show", board)
	check("yield", "yield", id, "--trials", "200", "--gbw", "1M", "--bias-resistor")
	check("yield", "yield", board+"/1", "--trials", "200")
	check("yield-board", "yield", board, "--trials", "200", "--boards", "5")
	out = check("build", "build", id, "--boards", "1")
	var b struct {
		BuildID *int64 `json:"build_id"`
	}
	if err := json.Unmarshal([]byte(out), &b); err != nil || b.BuildID == nil {
		t.Fatalf("build --json gives no build_id: %v\n%s", err, out)
	}
	check("build", "build", id, "--boards", "100000", "--dry-run")
	check("builds", "builds")
	check("build-undo", "build", "undo", strconv.FormatInt(*b.BuildID, 10))
	check("builds", "builds")
	check("stock-list", "stock", "list")
	check("stock-history", "stock", "history")
	check("stock-reorder", "stock", "reorder")
	out = check("stock-add", "stock", "add", "4K7", "--kind", "R", "--qty", "10", "--tol", "1%", "--location", "Z9")
	var add struct {
		Item struct {
			StockID int64 `json:"stock_id"`
		} `json:"item"`
	}
	if err := json.Unmarshal([]byte(out), &add); err != nil || add.Item.StockID == 0 {
		t.Fatalf("stock add --json gives no stock_id: %v\n%s", err, out)
	}
	check("stock-set", "stock", "set", strconv.FormatInt(add.Item.StockID, 10), "--qty", "12", "--reason", "recounted")
	check("stock-import", "stock", "import", filepath.Join("..", "..", "..", "sample-stock.csv"))
	for _, o := range jsonOutputs {
		if !seen[o.name] {
			t.Errorf("output %s was not run", o.name)
		}
	}
}
