package store

import (
	"context"
	"errors"
	"fmt"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"drawerfit/fault"
	"drawerfit/migrations"
	"drawerfit/optimize"
	"drawerfit/production"
	"drawerfit/stock"
	"drawerfit/synth"
)

// fixtureDesign stores rows for a 4th-order Butterworth low-pass at 1 kHz
// (an invented bird-song recorder's anti-alias filter) with the values of
// the hand procedure, and returns a design built from them. Each row
// holds qty parts; both sections share their capacitor rows where the
// values agree, so a board's use per row is 1 or 2.
func fixtureDesign(t *testing.T, db *DB, qty int) *production.Design {
	t.Helper()
	ctx := context.Background()
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: 4}
	if err := spec.Normalize(); err != nil {
		t.Fatal(err)
	}
	sd, err := synth.NewDesign(spec, 4, synth.OddOnePole)
	if err != nil {
		t.Fatal(err)
	}
	stages, err := sd.Scale(synth.Scaling{})
	if err != nil {
		t.Fatal(err)
	}
	c := &optimize.Candidate{Design: sd, ResponseError: 0.0002, PassAtten: 3.01, StopAtten: 0, MeetsSpec: true, Pareto: true}
	use := map[int64]int{}
	nr, nc := 0, 0
	for i, st := range stages {
		sf := optimize.SectionFit{Target: sd.Sections[i], F0: sd.Sections[i].F0, Q: sd.Sections[i].Q}
		for k, e := range st.Topology.Elements() {
			v := st.Positions[k].Parts[0]
			it := stock.Item{Kind: stock.Resistor, Value: v, Tolerance: 0.01, Quantity: qty, Package: "0805", Location: "R-drawer"}
			ref := ""
			if e.Kind == synth.Capacitor {
				it.Kind, it.Tolerance, it.Dielectric, it.Location = stock.Capacitor, 0.05, "C0G", "C-drawer"
				nc++
				ref = fmt.Sprintf("C%d", nc)
			} else {
				nr++
				ref = fmt.Sprintf("R%d", nr)
			}
			row, _, err := db.Add(ctx, it, "fixture")
			if err != nil {
				t.Fatal(err)
			}
			if row.Quantity != qty {
				// Same value as an earlier position: keep the row at qty.
				if row, err = db.SetQuantity(ctx, row.ID, qty, "fixture"); err != nil {
					t.Fatal(err)
				}
			}
			use[row.ID]++
			sf.Components = append(sf.Components, optimize.Component{Ref: ref, Symbol: e.Symbol, Kind: e.Kind, Value: v,
				Parts: []optimize.Part{{StockID: row.ID, Value: v, Tolerance: it.Tolerance, Location: it.Location,
					Dielectric: it.Dielectric, Package: it.Package}}})
			c.PartCount++
		}
		c.Sections = append(c.Sections, sf)
	}
	for id, n := range use {
		c.StockUse = append(c.StockUse, optimize.StockUse{StockID: id, PerBoard: n})
	}
	c.UniqueParts = len(use)
	return &production.Design{Boards: 5, Rank: 1, Settings: production.SettingsOf(optimize.DefaultOptions()),
		Filters: []production.Filter{{Spec: spec, Candidate: c}}}
}

func quantities(t *testing.T, db *DB) map[int64]int {
	t.Helper()
	items, err := db.List(context.Background(), stock.Filter{})
	if err != nil {
		t.Fatal(err)
	}
	q := map[int64]int{}
	for _, it := range items {
		q[it.ID] = it.Quantity
	}
	return q
}

func TestDesignRoundTrip(t *testing.T) { eachDialect(t, testDesignRoundTrip) }

func testDesignRoundTrip(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	d := fixtureDesign(t, db, 40)
	if err := db.SaveDesigns(ctx, []*production.Design{d}); err != nil {
		t.Fatal(err)
	}
	if len(d.ID) != idLength || strings.Trim(d.ID, idAlphabet) != "" {
		t.Fatalf("id %q is not %d characters of %s", d.ID, idLength, idAlphabet)
	}
	got, err := db.Design(ctx, strings.ToUpper(d.ID))
	if err != nil {
		t.Fatal(err)
	}
	if got.ID != d.ID || !got.Created.Equal(d.Created) || got.Boards != 5 || got.Rank != 1 {
		t.Fatalf("header: got %+v", got)
	}
	if !reflect.DeepEqual(got.Settings, d.Settings) {
		t.Fatalf("settings: %+v, want %+v", got.Settings, d.Settings)
	}
	a, b := d.Filters[0], got.Filters[0]
	if a.Spec != b.Spec {
		t.Fatalf("spec: %+v, want %+v", b.Spec, a.Spec)
	}
	if !reflect.DeepEqual(a.Candidate.Sections, b.Candidate.Sections) {
		t.Fatalf("sections differ:\n%+v\n%+v", b.Candidate.Sections, a.Candidate.Sections)
	}
	if !reflect.DeepEqual(a.Candidate.StockUse, b.Candidate.StockUse) || a.Candidate.ResponseError != b.Candidate.ResponseError ||
		a.Candidate.PartCount != b.Candidate.PartCount || a.Candidate.MeetsSpec != b.Candidate.MeetsSpec {
		t.Fatalf("figures differ: %+v vs %+v", b.Candidate, a.Candidate)
	}
	list, err := db.Designs(ctx)
	if err != nil || len(list) != 1 || list[0].ID != d.ID || list[0].PartCount != 8 || list[0].Filters != 1 {
		t.Fatalf("list: %+v %v", list, err)
	}
	using, _ := db.DesignsUsing(ctx, a.Candidate.StockUse[0].StockID)
	if len(using) != 1 || using[0] != d.ID {
		t.Fatalf("designs using a row: %v", using)
	}
	if err := db.RemoveDesign(ctx, d.ID); err != nil {
		t.Fatal(err)
	}
	if _, err := db.Design(ctx, d.ID); fault.KindOf(err) != fault.NotFound {
		t.Fatalf("removed design: %v", err)
	}
	if err := db.RemoveDesign(ctx, d.ID); fault.KindOf(err) != fault.NotFound {
		t.Fatalf("second remove: %v", err)
	}
}

func TestDesignIDCollisionsAreRetried(t *testing.T) { eachDialect(t, testDesignIDCollisionsAreRetried) }

func testDesignIDCollisionsAreRetried(t *testing.T, open opener) {
	ctx := context.Background()
	db := open(t)
	old := newDesignID
	t.Cleanup(func() { newDesignID = old })
	// The generator repeats itself: the second design must skip the taken id.
	seq := []string{"aaaaaa", "aaaaaa", "aaaaaa", "bbbbbb"}
	newDesignID = func() (string, error) {
		id := seq[0]
		seq = seq[1:]
		return id, nil
	}
	d1, d2 := fixtureDesign(t, db, 10), fixtureDesign(t, db, 10)
	if err := db.SaveDesigns(ctx, []*production.Design{d1}); err != nil {
		t.Fatal(err)
	}
	if err := db.SaveDesigns(ctx, []*production.Design{d2}); err != nil {
		t.Fatal(err)
	}
	if d1.ID != "aaaaaa" || d2.ID != "bbbbbb" {
		t.Fatalf("ids %q and %q", d1.ID, d2.ID)
	}
	// A removed design's id is not given out again either.
	db.RemoveDesign(ctx, "aaaaaa")
	seq = []string{"aaaaaa", "cccccc"}
	d3 := fixtureDesign(t, db, 10)
	if err := db.SaveDesigns(ctx, []*production.Design{d3}); err != nil || d3.ID != "cccccc" {
		t.Fatalf("after removal: id %q, %v", d3.ID, err)
	}
}

func TestSaveRefusesRowsOfAnotherStock(t *testing.T) {
	eachDialect(t, testSaveRefusesRowsOfAnotherStock)
}

func testSaveRefusesRowsOfAnotherStock(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	d := fixtureDesign(t, db, 10)
	d.Filters[0].Candidate.Sections[0].Components[0].Parts[0].StockID = 999
	d.Filters[0].Candidate.StockUse = append(d.Filters[0].Candidate.StockUse, optimize.StockUse{StockID: 999, PerBoard: 1})
	err := db.SaveDesigns(ctx, []*production.Design{d})
	if fault.KindOf(err) != fault.Conflict || !strings.Contains(err.Error(), "999") {
		t.Fatalf("save with a foreign row: %v", err)
	}
	if list, _ := db.Designs(ctx); len(list) != 0 {
		t.Fatalf("a refused save left %d designs", len(list))
	}
}

func TestBuildAndUndoRestoreQuantitiesExactly(t *testing.T) {
	eachDialect(t, testBuildAndUndoRestoreQuantitiesExactly)
}

func testBuildAndUndoRestoreQuantitiesExactly(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	d := fixtureDesign(t, db, 40)
	if err := db.SaveDesigns(ctx, []*production.Design{d}); err != nil {
		t.Fatal(err)
	}
	before := quantities(t, db)
	batch, err := production.NewBatch(d, 7)
	if err != nil {
		t.Fatal(err)
	}
	res, err := production.BuildBatch(ctx, db, batch)
	if err != nil {
		t.Fatal(err)
	}
	after := quantities(t, db)
	for _, u := range d.StockUse() {
		if want := before[u.StockID] - 7*u.PerBoard; after[u.StockID] != want {
			t.Errorf("row %d: %d after the build, want %d", u.StockID, after[u.StockID], want)
		}
	}
	b := res.Build
	if b.Boards != 7 || b.DesignID != d.ID || b.Drawn() != 7*8 || len(b.Moves) != len(d.StockUse()) {
		t.Fatalf("build %+v drew %d", b, b.Drawn())
	}
	for _, m := range b.Moves {
		if m.Reason != production.BuildReason(b.ID, d.ID, 7) {
			t.Fatalf("ledger reason %q", m.Reason)
		}
	}
	u, err := db.UndoBuild(ctx, b.ID)
	if err != nil {
		t.Fatal(err)
	}
	if u.UndoneAt.IsZero() || len(u.Moves) != 2*len(d.StockUse()) {
		t.Fatalf("undone build: %+v", u)
	}
	if got := quantities(t, db); !reflect.DeepEqual(got, before) {
		t.Fatalf("after undo %v, before the build %v", got, before)
	}
	if _, err := db.UndoBuild(ctx, b.ID); fault.KindOf(err) != fault.Conflict {
		t.Fatalf("second undo: %v", err)
	}
	if got := quantities(t, db); !reflect.DeepEqual(got, before) {
		t.Fatalf("a refused undo changed stock: %v", got)
	}
	builds, err := db.Builds(ctx)
	if err != nil || len(builds) != 1 || builds[0].UndoneAt.IsZero() {
		t.Fatalf("builds: %+v %v", builds, err)
	}
	h, _ := db.History(ctx, 0)
	var undos int
	for _, m := range h {
		if m.Reason == production.UndoReason(b.ID) {
			undos++
		}
	}
	if undos != len(d.StockUse()) {
		t.Fatalf("%d undo entries in the ledger", undos)
	}
}

func TestRefusedBuildDrawsNothing(t *testing.T) { eachDialect(t, testRefusedBuildDrawsNothing) }

func testRefusedBuildDrawsNothing(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	d := fixtureDesign(t, db, 20)
	if err := db.SaveDesigns(ctx, []*production.Design{d}); err != nil {
		t.Fatal(err)
	}
	// One row short by three parts for 15 boards.
	short := d.Filters[0].Candidate.StockUse[0]
	if _, err := db.SetQuantity(ctx, short.StockID, 15*short.PerBoard-3, "count"); err != nil {
		t.Fatal(err)
	}
	before := quantities(t, db)
	hBefore, _ := db.History(ctx, 0)
	batch, _ := production.NewBatch(d, 15)
	res, err := production.BuildBatch(ctx, db, batch)
	var sf *stock.Shortfall
	if fault.KindOf(err) != fault.Conflict || !errors.As(err, &sf) {
		t.Fatalf("build: %v", err)
	}
	// Rows of two parts per board lack 10 of 30 too (20 on hand).
	if res.Drawn() || len(res.Shortfall) == 0 {
		t.Fatalf("result %+v", res)
	}
	found := false
	for _, r := range res.Shortfall {
		if r.StockID == short.StockID {
			found = r.Needed == 15*short.PerBoard && r.OnHand == 15*short.PerBoard-3
		}
	}
	if !found {
		t.Fatalf("shortfall %+v lacks row %d", res.Shortfall, short.StockID)
	}
	if got := quantities(t, db); !reflect.DeepEqual(got, before) {
		t.Fatalf("refused build changed stock: %v -> %v", before, got)
	}
	if h, _ := db.History(ctx, 0); len(h) != len(hBefore) {
		t.Fatalf("refused build wrote %d ledger entries", len(h)-len(hBefore))
	}
	if bs, _ := db.Builds(ctx); len(bs) != 0 {
		t.Fatalf("refused build was recorded: %+v", bs)
	}
}

func TestBuildRefusesMissingRow(t *testing.T) { eachDialect(t, testBuildRefusesMissingRow) }

func testBuildRefusesMissingRow(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	d := fixtureDesign(t, db, 20)
	if err := db.SaveDesigns(ctx, []*production.Design{d}); err != nil {
		t.Fatal(err)
	}
	gone := d.Filters[0].Candidate.Sections[1].Components[0].Parts[0]
	if err := db.Remove(ctx, gone.StockID); err != nil {
		t.Fatal(err)
	}
	// The same part under another bin: offered as a substitute.
	sub, _, err := db.Add(ctx, stock.Item{Kind: stock.Resistor, Value: gone.Value, Tolerance: gone.Tolerance, Quantity: 30,
		Package: gone.Package, Location: "overflow box"}, "moved")
	if err != nil {
		t.Fatal(err)
	}
	before := quantities(t, db)
	batch, _ := production.NewBatch(d, 2)
	res, err := production.BuildBatch(ctx, db, batch)
	if fault.KindOf(err) != fault.Conflict || !strings.Contains(err.Error(), fmt.Sprintf("row %d", gone.StockID)) {
		t.Fatalf("build with a removed row: %v", err)
	}
	var missing *production.Issue
	for i := range res.Issues {
		if res.Issues[i].Kind == production.Missing {
			missing = &res.Issues[i]
		}
	}
	if missing == nil || missing.Substitute != sub.ID || len(missing.Refs) == 0 {
		t.Fatalf("issues %+v", res.Issues)
	}
	if got := quantities(t, db); !reflect.DeepEqual(got, before) {
		t.Fatal("refused build changed stock")
	}
}

func TestUndoRefusedWhenRowRemoved(t *testing.T) { eachDialect(t, testUndoRefusedWhenRowRemoved) }

func testUndoRefusedWhenRowRemoved(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	d := fixtureDesign(t, db, 20)
	db.SaveDesigns(ctx, []*production.Design{d})
	batch, _ := production.NewBatch(d, 1)
	res, err := production.BuildBatch(ctx, db, batch)
	if err != nil {
		t.Fatal(err)
	}
	db.Remove(ctx, d.Filters[0].Candidate.StockUse[0].StockID)
	before := quantities(t, db)
	if _, err := db.UndoBuild(ctx, res.Build.ID); fault.KindOf(err) != fault.Conflict {
		t.Fatalf("undo onto a removed row: %v", err)
	}
	if got := quantities(t, db); !reflect.DeepEqual(got, before) {
		t.Fatal("refused undo changed stock")
	}
	if b, _ := db.GetBuild(ctx, res.Build.ID); !b.UndoneAt.IsZero() {
		t.Fatal("refused undo marked the build undone")
	}
}

// TestSeedDesignSurvivesMigration opens a version-2 file with its seed
// and reads the seeded design and build through the current code.
func TestSeedDesignSurvivesMigration(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "v2.db")
	buildAtVersion(t, path, 2)
	db, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if v, _ := db.SchemaVersion(ctx); v != migrations.Latest() {
		t.Fatalf("version %d", v)
	}
	d, err := db.Design(ctx, "seed2a")
	if err != nil {
		t.Fatal(err)
	}
	c := d.Filters[0].Candidate
	if c.Order() != 1 || len(c.Sections) != 1 || c.Sections[0].Components[1].Parts[0].Dielectric != "C0G" {
		t.Fatalf("seed design: %+v", c)
	}
	b, err := db.GetBuild(ctx, 1)
	if err != nil || b.Drawn() != 2 || b.DesignID != "seed2a" {
		t.Fatalf("seed build: %+v %v", b, err)
	}
}

// TestUndoOntoTheRowAddedBack: after a used row is removed and the same part
// is added again (a new row of the same identity), undo returns the parts
// to that row.
func TestUndoOntoTheRowAddedBack(t *testing.T) { eachDialect(t, testUndoOntoTheRowAddedBack) }

func testUndoOntoTheRowAddedBack(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	d := fixtureDesign(t, db, 20)
	if err := db.SaveDesigns(ctx, []*production.Design{d}); err != nil {
		t.Fatal(err)
	}
	batch, _ := production.NewBatch(d, 2)
	res, err := production.BuildBatch(ctx, db, batch)
	if err != nil {
		t.Fatal(err)
	}
	use := d.Filters[0].Candidate.StockUse[0]
	old, err := db.Get(ctx, use.StockID)
	if err != nil {
		t.Fatal(err)
	}
	if err := db.Remove(ctx, use.StockID); err != nil {
		t.Fatal(err)
	}
	again := old
	again.ID, again.Quantity = 0, 3
	added, _, err := db.Add(ctx, again, "found the reel")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := db.UndoBuild(ctx, res.Build.ID); err != nil {
		t.Fatalf("undo: %v", err)
	}
	got, err := db.Get(ctx, added.ID)
	if err != nil {
		t.Fatal(err)
	}
	if want := 3 + 2*use.PerBoard; got.Quantity != want {
		t.Errorf("row added back holds %d, want %d", got.Quantity, want)
	}
}
