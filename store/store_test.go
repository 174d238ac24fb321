package store

import (
	"context"
	"database/sql"
	"errors"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"drawerfit/fault"
	"drawerfit/stock"
)

// clock is a test clock that advances one second per reading.
type clock struct{ t time.Time }

func (c *clock) now() time.Time {
	c.t = c.t.Add(time.Second)
	return c.t
}

// openTest opens a fresh database file in a temporary directory with a
// test clock that starts at 2030-01-01 00:00:00 UTC.
func openTest(t *testing.T) *DB {
	t.Helper()
	db, err := Open(filepath.Join(t.TempDir(), "stock.db"))
	if err != nil {
		t.Fatal(err)
	}
	c := &clock{t: time.Date(2030, 1, 1, 0, 0, 0, 0, time.UTC)}
	db.Now = c.now
	t.Cleanup(func() { db.Close() })
	return db
}

func mustParse(t *testing.T, s string, k stock.Kind) float64 {
	t.Helper()
	v, err := stock.ParseValue(s, k)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

func res(t *testing.T, v string, qty int, loc string) stock.Item {
	return stock.Item{Kind: stock.Resistor, Value: mustParse(t, v, stock.Resistor), Tolerance: 0.01, Quantity: qty, Package: "0805", Location: loc}
}

func capa(t *testing.T, v string, qty int, diel, loc string) stock.Item {
	return stock.Item{Kind: stock.Capacitor, Value: mustParse(t, v, stock.Capacitor), Tolerance: 0.05, Quantity: qty, Package: "0805", Dielectric: diel, Location: loc}
}

func TestAddMergesSameIdentity(t *testing.T) { eachDialect(t, testAddMergesSameIdentity) }

func testAddMergesSameIdentity(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	a, merged, err := db.Add(ctx, res(t, "4k7", 50, "A1"), "bought a strip")
	if err != nil || merged || a.ID == 0 || a.Quantity != 50 {
		t.Fatalf("first add: %+v merged=%v err=%v", a, merged, err)
	}
	// Same identity written differently: bin in lower case, value as 4700.
	b, merged, err := db.Add(ctx, res(t, "4700", 20, "a1"), "")
	if err != nil || !merged || b.ID != a.ID || b.Quantity != 70 || b.Location != "A1" {
		t.Fatalf("second add: %+v merged=%v err=%v", b, merged, err)
	}
	// Another bin is another row.
	c, merged, err := db.Add(ctx, res(t, "4k7", 5, "A2"), "")
	if err != nil || merged || c.ID == a.ID {
		t.Fatalf("other bin: %+v merged=%v err=%v", c, merged, err)
	}
	h, err := db.History(ctx, a.ID)
	if err != nil {
		t.Fatal(err)
	}
	if len(h) != 2 || h[0].Delta != 50 || h[0].Reason != "bought a strip" || h[1].Delta != 20 || h[1].Balance != 70 || h[1].Reason != "added" {
		t.Fatalf("history: %+v", h)
	}
	if !h[1].At.After(h[0].At) {
		t.Errorf("ledger times not increasing: %v then %v", h[0].At, h[1].At)
	}
}

func TestAddRefusesInvalidItems(t *testing.T) { eachDialect(t, testAddRefusesInvalidItems) }

func testAddRefusesInvalidItems(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	cases := []struct {
		name string
		it   stock.Item
		want string
	}{
		{"zero value", stock.Item{Kind: stock.Resistor, Value: 0, Quantity: 1}, "value"},
		{"negative quantity", stock.Item{Kind: stock.Resistor, Value: 100, Quantity: -1}, "negative"},
		{"dielectric on resistor", stock.Item{Kind: stock.Resistor, Value: 100, Quantity: 1, Dielectric: "C0G"}, "dielectric"},
		{"control character", stock.Item{Kind: stock.Resistor, Value: 100, Quantity: 1, Location: "A\x001"}, "control"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, _, err := db.Add(ctx, c.it, "")
			if !fault.Is(err, fault.Invalid) || !strings.Contains(err.Error(), c.want) {
				t.Fatalf("Add: %v, want an invalid-input error about %q", err, c.want)
			}
		})
	}
	if items, _ := db.List(ctx, stock.Filter{}); len(items) != 0 {
		t.Fatalf("rows stored after refusals: %+v", items)
	}
}

func TestSetQuantityRemoveAndHistory(t *testing.T) { eachDialect(t, testSetQuantityRemoveAndHistory) }

func testSetQuantityRemoveAndHistory(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	a, _, _ := db.Add(ctx, res(t, "10k", 100, "B2"), "")
	if _, err := db.SetQuantity(ctx, a.ID, 90, ""); !fault.Is(err, fault.Invalid) {
		t.Fatalf("set without reason: %v", err)
	}
	if _, err := db.SetQuantity(ctx, a.ID, -1, "oops"); !fault.Is(err, fault.Invalid) {
		t.Fatalf("negative set: %v", err)
	}
	if _, err := db.SetQuantity(ctx, 999, 1, "x"); !fault.Is(err, fault.NotFound) {
		t.Fatalf("set unknown id: %v", err)
	}
	got, err := db.SetQuantity(ctx, a.ID, 93, "counted the bin")
	if err != nil || got.Quantity != 93 {
		t.Fatalf("set: %+v %v", got, err)
	}
	if _, err := db.SetQuantity(ctx, a.ID, 93, "counted again"); err != nil {
		t.Fatal(err)
	}
	if err := db.Remove(ctx, a.ID); err != nil {
		t.Fatal(err)
	}
	if _, err := db.Get(ctx, a.ID); !fault.Is(err, fault.NotFound) {
		t.Fatalf("get removed: %v", err)
	}
	if err := db.Remove(ctx, a.ID); !fault.Is(err, fault.NotFound) {
		t.Fatalf("second remove: %v", err)
	}
	h, err := db.History(ctx, a.ID)
	if err != nil {
		t.Fatal(err)
	}
	// add +100, set -7, (unchanged set writes nothing), remove -93.
	want := []struct {
		delta, balance int
		reason         string
	}{{100, 100, "added"}, {-7, 93, "counted the bin"}, {-93, 0, "removed"}}
	if len(h) != len(want) {
		t.Fatalf("history has %d entries: %+v", len(h), h)
	}
	for i, w := range want {
		if h[i].Delta != w.delta || h[i].Balance != w.balance || h[i].Reason != w.reason || h[i].StockID != a.ID {
			t.Errorf("entry %d = %+v, want %+v", i, h[i], w)
		}
	}
	if h[0].Part.Label() != "10 kΩ 1% 0805 @B2" {
		t.Errorf("part label %q", h[0].Part.Label())
	}
	// The identity is free again.
	b, merged, err := db.Add(ctx, res(t, "10k", 3, "B2"), "")
	if err != nil || merged || b.ID == a.ID {
		t.Fatalf("re-add after remove: %+v %v %v", b, merged, err)
	}
	if _, err := db.History(ctx, 12345); !fault.Is(err, fault.NotFound) {
		t.Fatalf("history of unknown id: %v", err)
	}
	all, err := db.History(ctx, 0)
	if err != nil || len(all) != 4 {
		t.Fatalf("all history: %d entries, %v", len(all), err)
	}
}

func TestAdjustIsAllOrNothing(t *testing.T) { eachDialect(t, testAdjustIsAllOrNothing) }

func testAdjustIsAllOrNothing(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	r, _, _ := db.Add(ctx, res(t, "1k", 10, "A1"), "")
	c, _, _ := db.Add(ctx, capa(t, "10n", 4, "C0G", "C1"), "")

	// Row c is asked for 3 + 2 = 5 but holds 4: nothing may change.
	err := db.Adjust(ctx, []stock.Delta{{StockID: r.ID, Change: -2}, {StockID: c.ID, Change: -3}, {StockID: c.ID, Change: -2}}, "build 1")
	if !fault.Is(err, fault.Conflict) {
		t.Fatalf("Adjust: %v, want a conflict", err)
	}
	var sf *stock.Shortfall
	if !errors.As(err, &sf) {
		t.Fatalf("no *stock.Shortfall in %v", err)
	}
	if len(sf.Rows) != 1 || sf.Rows[0] != (stock.ShortRow{StockID: c.ID, Needed: 5, OnHand: 4}) {
		t.Fatalf("shortfall %+v", sf.Rows)
	}
	if !strings.Contains(err.Error(), "10 nF") {
		t.Errorf("message does not name the part: %v", err)
	}
	for _, id := range []int64{r.ID, c.ID} {
		it, _ := db.Get(ctx, id)
		if h, _ := db.History(ctx, id); len(h) != 1 {
			t.Errorf("row %d has %d ledger entries after a refused adjust", id, len(h))
		}
		if (id == r.ID && it.Quantity != 10) || (id == c.ID && it.Quantity != 4) {
			t.Errorf("row %d changed to %d", id, it.Quantity)
		}
	}

	if err := db.Adjust(ctx, []stock.Delta{{StockID: r.ID, Change: -2}, {StockID: c.ID, Change: -4}, {StockID: r.ID, Change: 1}}, "build 2"); err != nil {
		t.Fatal(err)
	}
	gr, _ := db.Get(ctx, r.ID)
	gc, _ := db.Get(ctx, c.ID)
	if gr.Quantity != 9 || gc.Quantity != 0 {
		t.Fatalf("after adjust: %d, %d", gr.Quantity, gc.Quantity)
	}
	if h, _ := db.History(ctx, r.ID); len(h) != 2 || h[1].Delta != -1 || h[1].Reason != "build 2" {
		t.Fatalf("one summed entry expected: %+v", h)
	}
	if err := db.Adjust(ctx, []stock.Delta{{StockID: 999, Change: -1}}, "x"); !fault.Is(err, fault.NotFound) {
		t.Fatalf("unknown row: %v", err)
	}
	if err := db.Adjust(ctx, []stock.Delta{{StockID: r.ID, Change: -1}}, " "); !fault.Is(err, fault.Invalid) {
		t.Fatalf("empty reason: %v", err)
	}
}

func TestTxSharesOneTransaction(t *testing.T) { eachDialect(t, testTxSharesOneTransaction) }

func testTxSharesOneTransaction(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	r, _, _ := db.Add(ctx, res(t, "2k2", 10, "A1"), "")
	boom := errors.New("later step failed")
	err := db.Tx(ctx, func(tx *Tx) error {
		if err := tx.Adjust(ctx, []stock.Delta{{StockID: r.ID, Change: -5}}, "build"); err != nil {
			return err
		}
		if _, err := tx.ExecContext(ctx, `CREATE TABLE scratch (x INTEGER)`); err != nil {
			return err
		}
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("Tx: %v", err)
	}
	if got, _ := db.Get(ctx, r.ID); got.Quantity != 10 {
		t.Fatalf("rolled-back adjust left quantity %d", got.Quantity)
	}
	var n int
	q := `SELECT COUNT(*) FROM sqlite_schema WHERE name = 'scratch'`
	if db.sql.pg {
		q = `SELECT COUNT(*) FROM information_schema.tables WHERE table_name = 'scratch'`
	}
	db.SQL().QueryRow(q).Scan(&n)
	if n != 0 {
		t.Fatal("rolled-back table exists")
	}
	if err := db.Tx(ctx, func(tx *Tx) error {
		return tx.Adjust(ctx, []stock.Delta{{StockID: r.ID, Change: -5}}, "build")
	}); err != nil {
		t.Fatal(err)
	}
	if got, _ := db.Get(ctx, r.ID); got.Quantity != 5 {
		t.Fatalf("committed adjust left quantity %d", got.Quantity)
	}
}

func TestImport(t *testing.T) { eachDialect(t, testImport) }

func testImport(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	t.Run("merges duplicates and existing rows", func(t *testing.T) {
		db := open(t)
		db.Add(ctx, res(t, "1k", 10, "A1"), "")
		sum, err := db.Import(ctx, []stock.Item{
			res(t, "1k", 5, "A1"),          // exists
			res(t, "2k2", 7, "A2"),         // new
			res(t, "2.2k", 3, "a2"),        // duplicate of the line above
			capa(t, "1n", 20, "NP0", "C1"), // new
		}, false)
		if err != nil {
			t.Fatal(err)
		}
		want := stock.ImportSummary{Rows: 4, Added: 2, Merged: 2, Units: 35}
		if sum != want {
			t.Fatalf("summary %+v, want %+v", sum, want)
		}
		items, _ := db.List(ctx, stock.Filter{})
		if len(items) != 3 || items[0].Quantity != 15 || items[1].Quantity != 10 || items[2].Kind != stock.Capacitor {
			t.Fatalf("items %+v", items)
		}
		k := stock.Capacitor
		caps, _ := db.List(ctx, stock.Filter{Kind: &k})
		if len(caps) != 1 || caps[0].Dielectric != "NP0" {
			t.Fatalf("capacitors %+v", caps)
		}
	})
	t.Run("one bad item stores nothing", func(t *testing.T) {
		db := open(t)
		db.Add(ctx, res(t, "1k", 10, "A1"), "")
		bad := res(t, "3k3", 1, "A3")
		bad.Quantity = -4
		_, err := db.Import(ctx, []stock.Item{res(t, "1k", 5, "A1"), res(t, "2k2", 7, "A2"), bad}, false)
		if !fault.Is(err, fault.Invalid) || !strings.Contains(err.Error(), "item 3") {
			t.Fatalf("Import: %v", err)
		}
		items, _ := db.List(ctx, stock.Filter{})
		if len(items) != 1 || items[0].Quantity != 10 {
			t.Fatalf("items changed: %+v", items)
		}
		if h, _ := db.History(ctx, 0); len(h) != 1 {
			t.Fatalf("ledger changed: %+v", h)
		}
	})
	t.Run("replace swaps the inventory", func(t *testing.T) {
		db := open(t)
		keep, _, _ := db.Add(ctx, res(t, "1k", 10, "A1"), "")
		gone, _, _ := db.Add(ctx, res(t, "3k3", 4, "A3"), "")
		sum, err := db.Import(ctx, []stock.Item{res(t, "1k", 6, "A1"), res(t, "2k2", 7, "A2")}, true)
		if err != nil {
			t.Fatal(err)
		}
		want := stock.ImportSummary{Rows: 2, Added: 1, Kept: 1, Removed: 1, Units: -4 - 4 + 7}
		if sum != want {
			t.Fatalf("summary %+v, want %+v", sum, want)
		}
		items, _ := db.List(ctx, stock.Filter{})
		if len(items) != 2 || items[0].ID != keep.ID || items[0].Quantity != 6 || items[1].Quantity != 7 {
			t.Fatalf("items %+v", items)
		}
		if _, err := db.Get(ctx, gone.ID); !fault.Is(err, fault.NotFound) {
			t.Fatalf("replaced row still there: %v", err)
		}
	})
}

func TestOpenRefusesNewerSchema(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "stock.db")
	db, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	v, _ := db.SchemaVersion(context.Background())
	if _, err := db.SQL().Exec(`INSERT INTO schema_version (version, name, applied_at) VALUES (?, 'from the future', '')`, v+1); err != nil {
		t.Fatal(err)
	}
	db.Close()
	_, err = Open(path)
	if !fault.Is(err, fault.Conflict) || !strings.Contains(err.Error(), "newer drawerfit") {
		t.Fatalf("Open: %v", err)
	}
}

func TestOpenRefusesForeignDatabase(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "other.db")
	db, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	db.SQL().Exec(`DROP TABLE schema_version`)
	db.Close()
	if _, err := Open(path); !fault.Is(err, fault.Conflict) || !strings.Contains(err.Error(), "not a drawerfit") {
		t.Fatalf("Open: %v", err)
	}
}

func TestOpenMemory(t *testing.T) {
	t.Parallel()
	db, err := OpenMemory()
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	ctx := context.Background()
	if _, _, err := db.Add(ctx, res(t, "1k", 1, ""), ""); err != nil {
		t.Fatal(err)
	}
	items, err := db.List(ctx, stock.Filter{})
	if err != nil || len(items) != 1 {
		t.Fatalf("%v %v", items, err)
	}
}

// TestConnectionSettings checks SQLite's connection pragmas (PostgreSQL
// has none of them).
func TestConnectionSettings(t *testing.T) {
	t.Parallel()
	db := openTest(t)
	ctx := context.Background()
	// Ask on several connections at once so that pooled ones are checked
	// too, not only the first.
	conns := make([]*sql.Conn, 3)
	for i := range conns {
		c, err := db.SQL().Conn(ctx)
		if err != nil {
			t.Fatal(err)
		}
		defer c.Close()
		conns[i] = c
	}
	for i, c := range conns {
		var mode string
		var fk, busy, sync int
		c.QueryRowContext(ctx, `PRAGMA journal_mode`).Scan(&mode)
		c.QueryRowContext(ctx, `PRAGMA foreign_keys`).Scan(&fk)
		c.QueryRowContext(ctx, `PRAGMA busy_timeout`).Scan(&busy)
		c.QueryRowContext(ctx, `PRAGMA synchronous`).Scan(&sync)
		// synchronous 2 is FULL (SQLite documentation of PRAGMA synchronous).
		if mode != "wal" || fk != 1 || busy != int(BusyTimeout.Milliseconds()) || sync != 2 {
			t.Errorf("connection %d: journal_mode=%s foreign_keys=%d busy_timeout=%d synchronous=%d", i, mode, fk, busy, sync)
		}
	}
}

func TestForeignKeysAreEnforced(t *testing.T) { eachDialect(t, testForeignKeysAreEnforced) }

func testForeignKeysAreEnforced(t *testing.T, open opener) {
	t.Parallel()
	db := open(t)
	_, err := db.SQL().Exec(`INSERT INTO movement (stock_id, delta, balance, reason, at) VALUES (4242, 1, 1, 'x', '')`)
	if err == nil || !strings.Contains(strings.ToUpper(err.Error()), "FOREIGN KEY") {
		t.Fatalf("ledger entry for a missing row: %v", err)
	}
}

// TestImportMergeKeepsNotes: merging a file row into a row of the same
// identity fills an empty note from the file and keeps a note already held.
func TestImportMergeKeepsNotes(t *testing.T) { eachDialect(t, testImportMergeKeepsNotes) }

func testImportMergeKeepsNotes(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	a := stock.Item{Kind: stock.Resistor, Value: 10e3, Tolerance: 0.01, Quantity: 5, Location: "A1"}
	b := stock.Item{Kind: stock.Resistor, Value: 22e3, Tolerance: 0.01, Quantity: 5, Location: "A1", Note: "from the old drawer"}
	if _, err := db.Import(ctx, []stock.Item{a, b}, false); err != nil {
		t.Fatal(err)
	}
	a.Note, b.Note = "reel ends", "a newer note"
	if _, err := db.Import(ctx, []stock.Item{a, b}, false); err != nil {
		t.Fatal(err)
	}
	items, err := db.List(ctx, stock.Filter{})
	if err != nil {
		t.Fatal(err)
	}
	got := map[float64]stock.Item{}
	for _, it := range items {
		got[it.Value] = it
	}
	if it := got[10e3]; it.Note != "reel ends" || it.Quantity != 10 {
		t.Errorf("10 kΩ: %+v", it)
	}
	if it := got[22e3]; it.Note != "from the old drawer" || it.Quantity != 10 {
		t.Errorf("22 kΩ: %+v", it)
	}
}
