package cli

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"sort"
	"strings"
	"testing"
	"time"

	"drawerfit/store"
)

// stockEnv is a test environment with its own database file and a fixed
// clock; run executes one command line in it.
type stockEnv struct {
	t   *testing.T
	db  string
	dir string
	// width, when positive, makes standard output a terminal of that many
	// columns (tables drawn to fit); 0 is a pipe.
	width int
}

func newStockEnv(t *testing.T) *stockEnv {
	dir := t.TempDir()
	return &stockEnv{t: t, db: filepath.Join(dir, "stock.db"), dir: dir}
}

// run executes drawerfit with args (plus --db) and returns stdout, stderr
// and the exit status.
func (s *stockEnv) run(stdin string, args ...string) (string, string, int) {
	s.t.Helper()
	var out, errb bytes.Buffer
	env := &Env{
		In: strings.NewReader(stdin), Out: &out, Err: &errb,
		Getenv: func(k string) string { return "" },
		Now:    func() time.Time { return time.Date(2030, 3, 1, 9, 30, 0, 0, time.UTC) },
	}
	if s.width > 0 {
		env.TermWidth = func(w io.Writer) int {
			if w == &out {
				return s.width
			}
			return 0
		}
	}
	code := Run(env, append([]string{"--db", s.db}, args...))
	return out.String(), errb.String(), code
}

// ok runs a command that must succeed and returns its stdout.
func (s *stockEnv) ok(args ...string) string {
	s.t.Helper()
	out, errs, code := s.run("", args...)
	if code != 0 {
		s.t.Fatalf("drawerfit %s: exit %d\n%s", strings.Join(args, " "), code, errs)
	}
	return out
}

// createEmpty makes the stock database exist with no rows, as an import
// of a header-only file would.
func (s *stockEnv) createEmpty() *stockEnv {
	s.t.Helper()
	db, err := store.Open(s.db)
	if err != nil {
		s.t.Fatal(err)
	}
	db.Close()
	return s
}

// fail runs a command that must fail and returns its stderr.
func (s *stockEnv) fail(args ...string) string {
	s.t.Helper()
	_, errs, code := s.run("", args...)
	if code == 0 {
		s.t.Fatalf("drawerfit %s succeeded", strings.Join(args, " "))
	}
	return errs
}

func (s *stockEnv) write(name, content string) string {
	s.t.Helper()
	p := filepath.Join(s.dir, name)
	if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
		s.t.Fatal(err)
	}
	return p
}

func (s *stockEnv) listJSON(args ...string) []map[string]any {
	s.t.Helper()
	var items []map[string]any
	out := s.ok(append([]string{"stock", "list", "--json"}, args...)...)
	if err := json.Unmarshal([]byte(out), &items); err != nil {
		s.t.Fatalf("list --json: %v\n%s", err, out)
	}
	return items
}

const smallDrawer = "kind,value,tolerance,quantity,package,dielectric,location,note\n" +
	"R,4k7,1%,50,0805,,A1,\n" +
	"R,10k,1%,120,0805,,A2,\n" +
	"C,2n2,5%,20,0805,C0G,C1,\n" +
	"C,100n,10%,15,radial,X7R,C9,decoupling only\n"

func TestStockListJSONKeys(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "import", s.write("drawer.csv", smallDrawer))
	items := s.listJSON()
	if len(items) != 4 {
		t.Fatalf("%d items", len(items))
	}
	var keys []string
	for k := range items[0] {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	// Every key, the amplifier columns too (null or zero for a passive row).
	want := []string{"channels", "dc_gain_db", "dielectric", "gbw_hz", "kind", "label", "location", "min", "note", "pack", "package",
		"price", "quantity", "slew_v_per_us", "stock_id", "supplier_ref", "supply", "tolerance", "value", "voltage"}
	if !reflect.DeepEqual(keys, want) {
		t.Fatalf("keys %v, want %v", keys, want)
	}
	first := items[0]
	if first["kind"] != "resistor" || first["value"] != 4700.0 || first["tolerance"] != 0.01 || first["quantity"] != 50.0 ||
		first["package"] != "0805" || first["dielectric"] != "" || first["note"] != "" || first["stock_id"] != 1.0 ||
		first["price"] != nil || first["min"] != nil || first["voltage"] != nil || first["pack"] != nil {
		t.Fatalf("first item %v", first)
	}
	caps := s.listJSON("--kind", "C")
	if len(caps) != 2 || caps[0]["value"] != 2.2e-9 || caps[1]["dielectric"] != "X7R" {
		t.Fatalf("capacitors %v", caps)
	}
	// An empty list is an empty array, not null.
	empty := newStockEnv(t).createEmpty()
	if out := empty.ok("stock", "list", "--json"); strings.TrimSpace(out) != "[]" {
		t.Fatalf("empty list: %q", out)
	}
}

func TestStockListTable(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "import", s.write("drawer.csv", smallDrawer))
	out := s.ok("stock", "list")
	lines := strings.Split(strings.TrimSpace(out), "\n")
	// Piped output: a header and one tab-separated line per row.
	if len(lines) != 5 || lines[0] != "ID\tKind\tValue\tTol\tQty\tPackage\tDielectric\tLocation\tRated\tPrice\tMin\tNote" {
		t.Fatalf("table:\n%s", out)
	}
	if lines[1] != "1\tresistor\t4.7 kΩ\t1%\t50\t0805\t\tA1\t\t\t\t" || lines[3] != "3\tcapacitor\t2.2 nF\t5%\t20\t0805\tC0G\tC1\t\t\t\t" {
		t.Fatalf("rows:\n%s", out)
	}
	// --csv lists a file without touching the database.
	other := newStockEnv(t).createEmpty()
	out = other.ok("stock", "list", "--csv", s.write("d2.csv", smallDrawer), "--kind", "capacitor")
	if !strings.Contains(out, "100 nF") || strings.Contains(out, "kΩ") {
		t.Fatalf("--csv list:\n%s", out)
	}
	if items := other.listJSON(); len(items) != 0 {
		t.Fatalf("--csv stored rows: %v", items)
	}
}

func TestStockImportRefusesBadFileAndKeepsDatabase(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "import", s.write("drawer.csv", smallDrawer))
	before := s.ok("stock", "export")
	bad := s.write("bad.csv", "kind,value,quantity,colour\nR,1k,1,red\n")
	_, errs, code := s.run("", "stock", "import", bad)
	if code != 2 || !strings.Contains(errs, `unknown column "colour"`) || !strings.Contains(errs, "nothing was imported") {
		t.Fatalf("unknown column: exit %d\n%s", code, errs)
	}
	bad = s.write("bad2.csv", "kind,value,quantity\nR,1k,5\nR,4k7k,1\nC,103,2\nR,1k,-3\n")
	_, errs, code = s.run("", "stock", "import", bad)
	if code != 2 {
		t.Fatalf("bad rows: exit %d", code)
	}
	for _, want := range []string{"line 3, value:", `"4k7k"`, "line 4, value:", "10 nF", "line 5, quantity:", "negative"} {
		if !strings.Contains(errs, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errs)
		}
	}
	if after := s.ok("stock", "export"); after != before {
		t.Fatalf("database changed by a refused import:\n%s\nthen\n%s", before, after)
	}
	if _, errs, code := s.run("", "stock", "import", filepath.Join(s.dir, "missing.csv")); code != 1 || !strings.Contains(errs, "does not exist") {
		t.Fatalf("missing file: exit %d %s", code, errs)
	}
}

func TestStockImportMergesAndReplaces(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	f := s.write("drawer.csv", smallDrawer)
	s.ok("stock", "import", f)
	out := s.ok("stock", "import", f)
	if !strings.Contains(out, "4 rows matched a row already there") {
		t.Fatalf("second import summary:\n%s", out)
	}
	if items := s.listJSON(); len(items) != 4 || items[0]["quantity"] != 100.0 {
		t.Fatalf("after a second import: %v", items)
	}
	repl := s.write("count.csv", "kind,value,quantity,tolerance,package,location\nR,4k7,33,1%,0805,a1\nR,1M,7,1%,0805,D6\n")
	out = s.ok("stock", "import", repl, "--replace")
	if !strings.Contains(out, "1 row kept") || !strings.Contains(out, "3 rows not in the file removed") {
		t.Fatalf("replace summary:\n%s", out)
	}
	items := s.listJSON()
	if len(items) != 2 || items[0]["quantity"] != 33.0 || items[0]["location"] != "A1" || items[1]["value"] != 1e6 {
		t.Fatalf("after replace: %v", items)
	}
}

// TestStockExportImportRoundTrip: exporting and importing with --replace into
// an empty database gives back exactly the same inventory.
func TestStockExportImportRoundTrip(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "import", s.write("drawer.csv", smallDrawer))
	s.ok("stock", "add", "47K3", "--kind", "R", "--qty", "3", "--tol", "0.1%", "--note", "=trim pot spare", "--location", "+top")
	s.ok("stock", "add", "p68", "--kind", "C", "--qty", "8", "--dielectric", "npo", "--note", "two, with \"quotes\"",
		"--voltage", "500V", "--price", "0.3", "--supplier-ref", "@order")
	// Every shop attribute, set on an existing row.
	s.ok("stock", "set", "1", "--min", "50", "--price", "0.012", "--pack", "100", "--voltage", "150", "--supplier-ref", "reel R-4K7")
	if h := s.ok("stock", "history", "1"); !strings.Contains(h, "price none -> 0.012") || !strings.Contains(h, "min none -> 50") {
		t.Fatalf("price and min changes not in the history:\n%s", h)
	}
	s.ok("stock", "add", "bag 7 dual", "--kind", "opamp", "--qty", "8", "--channels", "2", "--gbw", "10.5 MHz",
		"--dc-gain", "96.5", "--slew", "7", "--supply", "±5 V", "--package", "SO-8", "--location", "E2")
	s.ok("stock", "add", "=spare single", "--kind", "amp", "--qty", "1")
	exported := filepath.Join(s.dir, "export.csv")
	s.ok("stock", "export", exported)
	fresh := newStockEnv(t)
	fresh.ok("stock", "import", exported, "--replace")
	a, b := s.listJSON(), fresh.listJSON()
	for _, items := range [][]map[string]any{a, b} {
		for _, it := range items {
			delete(it, "stock_id")
		}
	}
	if !reflect.DeepEqual(a, b) {
		t.Fatalf("round trip:\n%v\n%v", a, b)
	}
	// Standard output gives the same bytes as the file.
	file, _ := os.ReadFile(exported)
	if out := s.ok("stock", "export"); out != string(file) {
		t.Fatalf("stdout export differs from file export")
	}
	if !strings.Contains(string(file), ",'+top,'=trim pot spare,,,,,,,,,,\n") || !strings.Contains(string(file), ",500V,0.30,,,'@order,,,,,\n") ||
		!strings.Contains(string(file), ",150V,0.012,50,100,reel R-4K7,,,,,\n") ||
		!strings.Contains(string(file), "opamp,bag 7 dual,,8,SO-8,,E2,,,,,,,2,10.5M,96.5,7,±5 V\n") ||
		!strings.Contains(string(file), "opamp,'=spare single,,1,,,,,,,,,,1,,,,\n") {
		t.Fatalf("formula cells not neutralised:\n%s", file)
	}
	// No temporary file is left beside the export.
	entries, _ := os.ReadDir(s.dir)
	for _, e := range entries {
		if strings.HasSuffix(e.Name(), ".tmp") {
			t.Errorf("temporary file left: %s", e.Name())
		}
	}
}

// TestStockAmplifierRows: amplifier rows through add, list --kind, set and
// history, and the refusals of bad figures naming the flag.
func TestStockAmplifierRows(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "import", s.write("drawer.csv", smallDrawer))
	out := s.ok("stock", "add", "QA-10", "--kind", "op-amp", "--qty", "6", "--channels", "dual", "--gbw", "10M", "--package", "SO-8", "--location", "E1")
	if !strings.Contains(out, "QA-10 dual 10 MHz SO-8 @E1: new row, 6 on hand") {
		t.Fatalf("add: %q", out)
	}
	// The same identity with the same figures merges; other figures refuse.
	s.ok("stock", "add", "qa-10", "--kind", "opamp", "--qty", "2", "--channels", "2", "--gbw", "10M", "--package", "SO-8", "--location", "e1")
	if msg := s.fail("stock", "add", "QA-10", "--kind", "opamp", "--qty", "1", "--channels", "4", "--gbw", "10M", "--package", "SO-8", "--location", "E1"); !strings.Contains(msg, "other figures") {
		t.Fatalf("conflicting figures: %q", msg)
	}
	for _, c := range [][]string{
		{"--channels", "3", "--channels"}, {"--gbw", "fast", "--gbw"}, {"--dc-gain", "-3", "--dc-gain"}, {"--tol", "1%", "--tol"},
	} {
		if msg := s.fail("stock", "add", "X", "--kind", "opamp", "--qty", "1", c[0], c[1]); !strings.Contains(msg, c[2]) {
			t.Errorf("%v: %q", c, msg)
		}
	}
	if msg := s.fail("stock", "add", "4k7", "--kind", "R", "--qty", "1", "--gbw", "1M"); !strings.Contains(msg, "--gbw is for amplifier rows") {
		t.Errorf("gbw on a resistor: %q", msg)
	}
	items := s.listJSON("--kind", "opamp")
	if len(items) != 1 || items[0]["label"] != "QA-10" || items[0]["quantity"] != 8.0 || items[0]["channels"] != 2.0 || items[0]["gbw_hz"] != 1e7 {
		t.Fatalf("list --kind opamp: %v", items)
	}
	id := fmt.Sprint(items[0]["stock_id"])
	s.ok("stock", "set", id, "--qty", "5", "--reason", "three used on the bench")
	hist := s.ok("stock", "history", id)
	if !strings.Contains(hist, "three used on the bench") || !strings.Contains(hist, "QA-10") {
		t.Fatalf("history:\n%s", hist)
	}
	if list := s.ok("stock", "list", "--kind", "amp"); !strings.Contains(list, "QA-10") || !strings.Contains(list, "100 dB assumed") {
		t.Fatalf("list:\n%s", list)
	}
}

func TestStockAddSetRemoveHistory(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	out := s.ok("stock", "add", "4.7k", "--kind", "resistor", "--qty", "50", "--tol", "F", "--package", "0805", "--location", "A3")
	if out != "#1 4.7 kΩ 1% 0805 @A3: new row, 50 on hand\n" {
		t.Fatalf("add: %q", out)
	}
	out = s.ok("stock", "add", "4K7", "--kind", "R", "--qty", "20", "--tol", "1%", "--package", "0805", "--location", "a3", "--reason", "order 7")
	if out != "#1 4.7 kΩ 1% 0805 @A3: +20, now 70 on hand\n" {
		t.Fatalf("merge: %q", out)
	}
	out = s.ok("stock", "set", "#1", "--qty", "64", "--reason", "used in the 1 kHz low-pass")
	if out != "#1 4.7 kΩ 1% 0805 @A3: 70 -> 64 (-6)\n" {
		t.Fatalf("set: %q", out)
	}
	out = s.ok("stock", "remove", "1")
	if !strings.Contains(out, "removed #1") || !strings.Contains(out, "64 parts") {
		t.Fatalf("remove: %q", out)
	}
	var hist []map[string]any
	if err := json.Unmarshal([]byte(s.ok("stock", "history", "1", "--json")), &hist); err != nil {
		t.Fatal(err)
	}
	wantDelta := []float64{50, 20, -6, -64}
	wantReason := []string{"added", "order 7", "used in the 1 kHz low-pass", "removed"}
	if len(hist) != 4 {
		t.Fatalf("history: %v", hist)
	}
	for i, h := range hist {
		if h["delta"] != wantDelta[i] || h["reason"] != wantReason[i] || h["recorded_at"] != "2030-03-01T09:30:00Z" || h["stock_id"] != 1.0 {
			t.Errorf("entry %d: %v", i, h)
		}
	}
	table := s.ok("stock", "history")
	if !strings.Contains(table, "2030-03-01 09:30:00\t1\t4.7 kΩ 1% 0805 @A3\t-6\t64\tused in the 1 kHz low-pass") {
		t.Fatalf("history table:\n%s", table)
	}
}

func TestStockCommandErrors(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "add", "1k", "--kind", "R", "--qty", "5")
	cases := []struct {
		name string
		args []string
		code int
		want string
	}{
		{"bad value", []string{"stock", "add", "4k7k", "--kind", "R", "--qty", "1"}, 2, `"4k7k"`},
		{"capacitor marking", []string{"stock", "add", "103", "--kind", "C", "--qty", "1"}, 2, "10 nF"},
		{"bad kind", []string{"stock", "add", "1k", "--kind", "L", "--qty", "1"}, 2, `kind "L"`},
		{"missing kind", []string{"stock", "add", "1k", "--qty", "1"}, 2, "kind"},
		{"bad tolerance", []string{"stock", "add", "1k", "--kind", "R", "--qty", "1", "--tol", "5"}, 2, "percentage"},
		{"negative add", []string{"stock", "add", "1k", "--kind", "R", "--qty", "-1"}, 2, "negative"},
		{"dielectric on resistor", []string{"stock", "add", "1k", "--kind", "R", "--qty", "1", "--dielectric", "C0G"}, 2, "no dielectric"},
		{"set without reason", []string{"stock", "set", "1", "--qty", "3"}, 2, "reason"},
		{"set blank reason", []string{"stock", "set", "1", "--qty", "3", "--reason", " "}, 2, "reason is required"},
		{"set negative", []string{"stock", "set", "1", "--qty", "-3", "--reason", "x"}, 2, "negative"},
		{"set unknown row", []string{"stock", "set", "99", "--qty", "3", "--reason", "x"}, 1, "no stock row 99"},
		{"bad id", []string{"stock", "remove", "one"}, 2, `"one"`},
		{"remove unknown", []string{"stock", "remove", "42"}, 1, "no stock row 42"},
		{"history unknown", []string{"stock", "history", "42"}, 1, "no stock row 42"},
		{"bad list kind", []string{"stock", "list", "--kind", "diode"}, 2, "diode"},
		{"too many args", []string{"stock", "export", "a", "b"}, 2, "arg"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out, errs, code := s.run("", c.args...)
			if code != c.code || !strings.Contains(errs, c.want) {
				t.Fatalf("exit %d (want %d), stderr %q (want %q), stdout %q", code, c.code, errs, c.want, out)
			}
		})
	}
	if items := s.listJSON(); len(items) != 1 || items[0]["quantity"] != 5.0 {
		t.Fatalf("failed commands changed the stock: %v", items)
	}
}

func TestStockImportFromStdin(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	_, errs, code := s.run(smallDrawer, "stock", "import", "-")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if items := s.listJSON(); len(items) != 4 {
		t.Fatalf("%d items", len(items))
	}
}

func TestOpenStoreCreatesDirectory(t *testing.T) {
	t.Parallel()
	home := t.TempDir()
	var out, errb bytes.Buffer
	env := &Env{In: strings.NewReader(""), Out: &out, Err: &errb,
		Getenv: func(k string) string {
			if k == "XDG_DATA_HOME" {
				return filepath.Join(home, "data")
			}
			return ""
		}}
	if code := Run(env, []string{"stock", "add", "1k", "--kind", "R", "--qty", "1"}); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	if _, err := os.Stat(filepath.Join(home, "data", "drawerfit", "stock.db")); err != nil {
		t.Fatal(err)
	}
}

// TestSampleStockImports checks the bundled sample drawer: it imports
// cleanly, has 120 to 200 rows, and holds what the issue asks for.
func TestSampleStockImports(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "import", filepath.Join("..", "..", "..", "sample-stock.csv"))
	items := s.listJSON()
	if n := len(items); n < 120 || n > 200 {
		t.Fatalf("sample has %d rows, want 120 to 200", n)
	}
	var res, caps, precise, avoid int
	for _, it := range items {
		switch it["kind"] {
		case "resistor":
			res++
		case "capacitor":
			caps++
			switch it["dielectric"] {
			case "C0G", "NP0", "PP", "PET", "PS", "PPS", "PEN", "mica":
				precise++
			case "X7R", "X5R", "Y5V", "electrolytic", "tantalum":
				avoid++
			}
		}
	}
	if res < caps || precise < 2*avoid || avoid == 0 {
		t.Fatalf("resistors %d, capacitors %d (precise %d, to avoid %d)", res, caps, precise, avoid)
	}
}
