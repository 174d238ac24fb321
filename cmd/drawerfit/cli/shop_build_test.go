package cli

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"drawerfit/stock"
)

// savedDesign fits a 4th-order low-pass on the sample drawer, keeps the
// first candidate and returns its id.
// The design has ideal amplifiers: the sample drawer's amplifier packages
// would not cover the batches these tests build.
func savedDesign(t *testing.T, s *stockEnv) string {
	t.Helper()
	var fit struct {
		Candidates []struct {
			ID string `json:"design_id"`
		} `json:"candidates"`
	}
	// Sallen-Key sections fitted for 7 boards: the tests build batches of
	// up to seven boards of the saved design.
	if code := s.jsonOf(&fit, "fit", "lowpass", "--pass", "2k", "--order", "4", "--combine", "1", "--top", "1", "--save", "--json",
		"--opamp", "none", "--topology", "sallen-key", "--boards", "7"); code != 0 || len(fit.Candidates) == 0 {
		t.Fatalf("fit exit %d, %+v", code, fit)
	}
	return fit.Candidates[0].ID
}

// TestReorderAfterDryRunEqualsRealBuild: the rows a dry run says the
// batch leaves below minimum (and stock reorder --for) are exactly what
// stock reorder lists after the real build, with the same quantities to
// buy and costs.
func TestReorderAfterDryRunEqualsRealBuild(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	id := savedDesign(t, s)
	// Raise the minimum of every row the design uses above what a batch
	// leaves, with a pack size on one, so that the list is not empty.
	var dry struct {
		Picks []struct {
			StockID  int64 `json:"stock_id"`
			Quantity int   `json:"quantity"`
		} `json:"picks"`
		Reorder []jsonReorder `json:"reorder"`
	}
	if code := s.jsonOf(&dry, "build", id, "--boards", "3", "--dry-run", "--json"); code != 0 {
		t.Fatalf("dry run exit %d", code)
	}
	for i, p := range dry.Picks {
		if i%2 == 0 {
			args := []string{"stock", "set", itoa64(p.StockID), "--min", "40"}
			if i == 0 {
				args = append(args, "--pack", "25", "--price", "0.013")
			}
			s.ok(args...)
		}
	}
	var forList, after []jsonReorder
	s.jsonOf(&dry, "build", id, "--boards", "3", "--dry-run", "--json")
	s.jsonOf(&forList, "stock", "reorder", "--for", id, "--boards", "3", "--json")
	if !reflect.DeepEqual(dry.Reorder, forList) {
		t.Fatalf("dry run and reorder --for differ:\n%+v\n%+v", dry.Reorder, forList)
	}
	if len(forList) == 0 {
		t.Fatal("nothing below minimum; the test sets no minimum that a batch crosses")
	}
	s.ok("build", id, "--boards", "3")
	s.jsonOf(&after, "stock", "reorder", "--json")
	if len(after) != len(forList) {
		t.Fatalf("after the build %d rows, the dry run said %d:\n%+v\n%+v", len(after), len(forList), after, forList)
	}
	for i, w := range forList {
		g := after[i]
		if g.StockID != w.StockID || g.Quantity != w.After || g.ToBuy != w.ToBuy || !reflect.DeepEqual(g.Cost, w.Cost) ||
			g.Min != w.Min || g.Needed != 0 || g.After != g.Quantity {
			t.Errorf("row %d: after the build %+v, the dry run said %+v", w.StockID, g, w)
		}
		if w.Pack != nil && g.ToBuy%*w.Pack != 0 {
			t.Errorf("row %d: to buy %d is not whole packs of %d", w.StockID, g.ToBuy, *w.Pack)
		}
	}
}

// TestBuildBOM writes the purchaser's BOM of a saved design without
// building, and checks its lines against the pick list and the stock.
func TestBuildBOM(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	id := savedDesign(t, s)
	before := s.listJSON()
	var dry struct {
		Picks []struct {
			StockID  int64    `json:"stock_id"`
			Quantity int      `json:"quantity"`
			Refs     []string `json:"refs"`
		} `json:"picks"`
	}
	s.jsonOf(&dry, "build", id, "--boards", "7", "--dry-run", "--json")
	// A supplier-ref that a spreadsheet would run as a formula.
	s.ok("stock", "set", itoa64(dry.Picks[0].StockID), "--supplier-ref", "=HYPERLINK(\"x\")", "--price", "0.5")
	bom := filepath.Join(s.dir, "bom.csv")
	s.ok("build", id, "--boards", "7", "--dry-run", "--bom", bom)
	if !reflect.DeepEqual(quantitiesOf(before), s.quantities()) {
		t.Fatal("a dry run with --bom changed the stock")
	}
	f, err := os.Open(bom)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	head := strings.Join(recs[0], ",")
	if head != "stock_id,designators,qty_per_board,qty_batch,value,kind,tolerance,package,dielectric,voltage,location,supplier_ref,unit_price,extended_price" {
		t.Fatalf("header %s", head)
	}
	if len(recs)-1 != len(dry.Picks) {
		t.Fatalf("%d BOM lines for %d stock rows", len(recs)-1, len(dry.Picks))
	}
	rows := map[string]map[string]any{}
	for _, it := range s.listJSON() {
		rows[itoa64(int64(it["stock_id"].(float64)))] = it
	}
	picks := map[string][]string{}
	qty := map[string]string{}
	for _, p := range dry.Picks {
		picks[itoa64(p.StockID)] = p.Refs
		qty[itoa64(p.StockID)] = itoa64(int64(p.Quantity))
	}
	guarded := false
	for _, r := range recs[1:] {
		id, refs, per, batch, price, ext := r[0], r[1], r[2], r[3], r[12], r[13]
		if refs != strings.Join(picks[id], " ") || batch != qty[id] || per != itoa64(int64(len(picks[id]))) {
			t.Errorf("row %s: refs %q per board %s batch %s; picks %v %s", id, refs, per, batch, picks[id], qty[id])
		}
		row := rows[id]
		want, _ := row["price"].(string)
		if price != want {
			t.Errorf("row %s: unit price %q, stock %q", id, price, want)
		}
		if p, err := stock.ParsePrice(price); err == nil && p.Known() {
			n, _ := strconv.Atoi(batch)
			e, _ := p.Times(n)
			if ext != e.String() {
				t.Errorf("row %s: extended %q, %s × %d = %s", id, ext, price, n, e)
			}
		} else if ext != "" {
			t.Errorf("row %s: extended price %q without a unit price", id, ext)
		}
		if r[11] == "'=HYPERLINK(\"x\")" {
			guarded = true
		}
		for _, cell := range r {
			if cell != "" && strings.ContainsRune("=+-@", rune(cell[0])) {
				t.Errorf("row %s: cell %q would run as a formula", id, cell)
			}
		}
	}
	if !guarded {
		t.Error("the formula-looking supplier-ref was not guarded")
	}
	// An existing file is refused without --force, nothing drawn.
	if _, errOut, code := s.run("", "build", id, "--boards", "7", "--bom", bom); code == 0 || !strings.Contains(errOut, "--force") {
		t.Errorf("existing BOM file: exit %d, %q", code, errOut)
	}
	if !reflect.DeepEqual(quantitiesOf(before), s.quantities()) {
		t.Fatal("a refused build changed the stock")
	}
}

func quantitiesOf(items []map[string]any) map[float64]float64 {
	q := map[float64]float64{}
	for _, it := range items {
		q[it["stock_id"].(float64)] = it["quantity"].(float64)
	}
	return q
}

// TestPlanBoardCost: a board's cost_per_board is its stock use at the
// rows' prices (null when a row has none).
func TestPlanBoardCost(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	plan := s.write("intercom.toml", intercomPlan)
	var doc struct {
		Boards []struct {
			Cost     *string `json:"cost_per_board"`
			StockUse []struct {
				StockID  int64 `json:"stock_id"`
				PerBoard int   `json:"per_board"`
			} `json:"stock_use"`
		} `json:"candidates"`
	}
	s.jsonOf(&doc, "fit", "--plan", plan, "--combine", "1", "--top", "3", "--json")
	if len(doc.Boards) == 0 {
		t.Fatal("no boards")
	}
	price := map[int64]stock.Money{}
	for _, it := range s.listJSON() {
		p := stock.Money{}
		if ps, ok := it["price"].(string); ok {
			p, _ = stock.ParsePrice(ps)
		}
		price[int64(it["stock_id"].(float64))] = p
	}
	for i, b := range doc.Boards {
		var tl stock.Tally
		for _, u := range b.StockUse {
			tl.Add(price[u.StockID], u.PerBoard)
		}
		got := stock.Money{}
		if b.Cost != nil {
			got, _ = stock.ParsePrice(*b.Cost)
		}
		if got != tl.Total() {
			t.Errorf("board %d: cost %v, stock use at the rows' prices %q", i+1, b.Cost, tl.Total())
		}
	}
}

// TestStockReorderCSV: the reorder list as a sheet, with to_buy in whole
// packs and a formula-looking supplier-ref guarded as export does.
func TestStockReorderCSV(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "import", s.write("d.csv", "kind,value,quantity,min,pack,price,supplier-ref\n"+
		"R,4k7,30,50,100,0.012,=cmd\n"+ // 20 short of its minimum: one pack of 100
		"R,10k,80,50,,,\n")) // above its minimum: not listed
	out := filepath.Join(s.dir, "order.csv")
	s.ok("stock", "reorder", "--csv", out)
	f, err := os.Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 2 {
		t.Fatalf("%d records:\n%v", len(recs), recs)
	}
	col := map[string]string{}
	for i, h := range recs[0] {
		col[h] = recs[1][i]
	}
	if col["to_buy"] != "100" || col["cost"] != "1.20" || col["supplier_ref"] != "'=cmd" || col["quantity"] != "30" || col["min"] != "50" {
		t.Errorf("reorder line %v", col)
	}
}
