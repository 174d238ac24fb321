package store

import (
	"context"
	"database/sql"
	"net/url"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"drawerfit/migrations"
	"drawerfit/stock"
)

// buildAtVersion creates a database file at schema version v (0 means a
// file with only the schema table) by applying the first v migrations, and
// puts the seed data of every version up to v into it.
func buildAtVersion(t *testing.T, path string, v int) {
	t.Helper()
	u := url.URL{Scheme: "file", Path: filepath.ToSlash(path), RawQuery: dsnQuery() + "&_pragma=journal_mode(WAL)"}
	sdb, err := sql.Open("sqlite", u.String())
	if err != nil {
		t.Fatal(err)
	}
	defer sdb.Close()
	ctx := context.Background()
	if err := migrate(ctx, sdb, path, migrations.All()[:v]); err != nil {
		t.Fatalf("build version %d: %v", v, err)
	}
	if v == 0 {
		if _, err := sdb.Exec(schemaTable); err != nil {
			t.Fatal(err)
		}
	}
	for i := 1; i <= v; i++ {
		if seed := seeds[i]; seed != "" {
			if _, err := sdb.Exec(seed); err != nil {
				t.Fatalf("seed for version %d: %v", i, err)
			}
		}
	}
}

// seeds holds, per schema version, SQL that fills the tables of that
// version as a user of that version would have left them. A new migration
// adds its own seed here, written against its own schema.
var seeds = map[int]string{
	1: `INSERT INTO stock (kind, value, tolerance, quantity, package, dielectric, location, note, created_at, updated_at)
	        VALUES ('resistor', 4700, 0.01, 48, '0805', '', 'A1', 'seed', '2029-05-01T10:00:00.000000000Z', '2029-05-01T10:00:00.000000000Z'),
	               ('capacitor', 2.2e-9, 0.05, 20, '0805', 'C0G', 'C1', '', '2029-05-01T10:00:00.000000000Z', '2029-05-01T10:00:00.000000000Z');
	    INSERT INTO movement (stock_id, delta, balance, reason, at)
	        VALUES (1, 50, 50, 'import', '2029-05-01T10:00:00.000000000Z'),
	               (1, -2, 48, 'used', '2029-05-02T10:00:00.000000000Z'),
	               (2, 20, 20, 'import', '2029-05-01T10:00:00.000000000Z');`,
	// A saved first-order low-pass of the two seed rows, built once.
	2: `INSERT INTO design (id, name, summary, filters, boards, worst_error, part_count, unique_parts, meets_spec, document, created_at)
	        VALUES ('seed2a', '', 'Butterworth low-pass, fp 15.39 kHz, order 1', 1, 2, 0.001, 2, 2, 1, '` + seedDesignDoc + `',
	                '2029-05-03T10:00:00.000000000Z');
	    INSERT INTO design_stock (design_id, stock_id, per_board) VALUES ('seed2a', 1, 1), ('seed2a', 2, 1);
	    INSERT INTO build (design_id, boards, built_at) VALUES ('seed2a', 2, '2029-05-04T10:00:00.000000000Z');
	    INSERT INTO build_movement (build_id, movement_id, undo) VALUES (1, 2, 0);`,
	// The shop's attributes: a price, minimum, pack and supplier-ref on the
	// resistor, a rating on the capacitor.
	shopVersion: `UPDATE stock SET price_micros = 12000, min_stock = 40, pack = 100, supplier_ref = 'bag 4K7' WHERE id = 1;
	    UPDATE stock SET voltage = 50 WHERE id = 2;`,
	// An amplifier row (invented label) with its first ledger entry.
	shopVersion + 1: `INSERT INTO stock (kind, value, quantity, package, location, label, channels, gbw, dc_gain, created_at, updated_at)
	        VALUES ('opamp', 0, 5, 'SO-8', 'E1', 'seed dual', 2, 1e7, 110, '2029-05-05T10:00:00.000000000Z', '2029-05-05T10:00:00.000000000Z');
	    INSERT INTO movement (stock_id, delta, balance, reason, at)
	        VALUES (3, 5, 5, 'import', '2029-05-05T10:00:00.000000000Z');`,
}

// shopVersion is the schema version that added the shop's attributes.
const shopVersion = 3

// seedDesignDoc is a design document of format 1 (production.EncodeDesign)
// for the version-2 seed: R1 from row 1, C1 from row 2.
const seedDesignDoc = `{"format":1,"name":"","boards":2,"rank":1,"settings":{"combine":2,"boards":2,"max_order":0,"rank":"balanced","top":10,"good_enough_db":0.05,"r_min":1000,"r_max":1000000,"c_min":1e-10,"c_max":1e-05,"allow_dielectric":null,"odd":""},` +
	`"filters":[{"label":"","spec":{"kind":"lowpass","response":"butterworth","pass_hz":15392.0,"pass_atten_db":3.0103,"stop_hz":0,"stop_atten_db":0,"ripple_db":0,"order":1,"odd":"1pole","bessel_norm":"mag"},` +
	`"candidate":{"order":1,"odd":"1pole","response_error_db":0.001,"pass_atten_db":3.01,"stop_atten_db":null,"meets_spec":true,"part_count":2,"unique_parts":2,"boards_buildable":20,"pareto":true,` +
	`"sections":[{"topology":"rc-lowpass","f0_hz":15392.0,"q":0,"real_f0_hz":0,"components":[` +
	`{"ref":"R1","symbol":"R","kind":"resistor","value":4700,"arrangement":"single","parts":[{"stock_id":1,"value":4700,"tolerance":0.01,"location":"A1","dielectric":"","package":"0805"}]},` +
	`{"ref":"C1","symbol":"C","kind":"capacitor","value":2.2e-9,"arrangement":"single","parts":[{"stock_id":2,"value":2.2e-9,"tolerance":0.05,"location":"C1","dielectric":"C0G","package":"0805"}]}]}],` +
	`"stock_use":[{"stock_id":1,"per_board":1},{"stock_id":2,"per_board":1}]}}]}`

// TestMigrationsFromEveryVersion opens a database at each earlier schema
// version (and a brand-new file) and checks that Open brings it to the
// current version with its data intact and usable.
func TestMigrationsFromEveryVersion(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	latest := migrations.Latest()
	t.Run("new file", func(t *testing.T) {
		db, err := Open(filepath.Join(t.TempDir(), "new.db"))
		if err != nil {
			t.Fatal(err)
		}
		defer db.Close()
		if v, _ := db.SchemaVersion(ctx); v != latest {
			t.Fatalf("version %d, want %d", v, latest)
		}
	})
	for v := 0; v < latest; v++ {
		t.Run("from version "+strconv.Itoa(v), func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "old.db")
			buildAtVersion(t, path, v)
			db, err := Open(path)
			if err != nil {
				t.Fatalf("Open: %v", err)
			}
			defer db.Close()
			if got, _ := db.SchemaVersion(ctx); got != latest {
				t.Fatalf("version %d after Open, want %d", got, latest)
			}
			var applied int
			db.SQL().QueryRow(`SELECT COUNT(*) FROM schema_version`).Scan(&applied)
			if applied != latest {
				t.Fatalf("%d migrations recorded, want %d", applied, latest)
			}
			items, err := db.List(ctx, stock.Filter{})
			if err != nil {
				t.Fatal(err)
			}
			if v >= shopVersion+1 {
				// The version-4 amplifier row survives every later migration.
				if len(items) != 3 || items[2].Name != "seed dual" || items[2].Channels != 2 || items[2].GBW != 1e7 || items[2].DCGain != 110 {
					t.Fatalf("seed amplifier after migrating: %+v", items)
				}
				items = items[:2]
			}
			if v >= 1 {
				// The version-1 seed survives every later migration.
				if len(items) != 2 || items[0].Quantity != 48 || items[0].Note != "seed" || items[1].Dielectric != "C0G" {
					t.Fatalf("seed rows after migrating: %+v", items)
				}
				h, _ := db.History(ctx, items[0].ID)
				if len(h) != 2 || h[1].Balance != 48 {
					t.Fatalf("seed ledger after migrating: %+v", h)
				}
			}
			if v >= shopVersion {
				if it := items[0]; it.Price.String() != "0.012" || it.Min != 40 || it.Pack != 100 || it.SupplierRef != "bag 4K7" || items[1].Voltage != 50 {
					t.Fatalf("shop attributes after migrating: %+v", items)
				}
			}
			// The migrated file works like a new one.
			if _, _, err := db.Add(ctx, res(t, "4k7", 2, "A1"), "after migrating"); err != nil {
				t.Fatal(err)
			}
			if v >= 1 {
				if it, _ := db.Get(ctx, items[0].ID); it.Quantity != 50 {
					t.Fatalf("merge into migrated row: %+v", it)
				}
			}
			var fkBad bool
			rows, _ := db.SQL().Query(`PRAGMA foreign_key_check`)
			fkBad = rows.Next()
			rows.Close()
			if fkBad {
				t.Fatal("foreign key violations after migrating")
			}
		})
	}
	t.Run("reopening applies nothing", func(t *testing.T) {
		path := filepath.Join(t.TempDir(), "twice.db")
		for i := 0; i < 2; i++ {
			db, err := Open(path)
			if err != nil {
				t.Fatal(err)
			}
			var n int
			db.SQL().QueryRow(`SELECT COUNT(*) FROM schema_version`).Scan(&n)
			db.Close()
			if n != latest {
				t.Fatalf("open %d: %d migrations recorded", i+1, n)
			}
		}
	})
}

// TestMigrationBreakingForeignKeysRefused: steps run with enforcement off
// (to allow table rebuilds), so the runner's check must refuse a step that
// leaves the ledger pointing at a row that is gone.
func TestMigrationBreakingForeignKeysRefused(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "dangling.db")
	buildAtVersion(t, path, migrations.Latest())
	u := url.URL{Scheme: "file", Path: filepath.ToSlash(path), RawQuery: dsnQuery() + "&_pragma=journal_mode(WAL)"}
	sdb, err := sql.Open("sqlite", u.String())
	if err != nil {
		t.Fatal(err)
	}
	defer sdb.Close()
	dangling := append(migrations.All(), migrations.Migration{
		Version: migrations.Latest() + 1, Name: "9999_dangling.sql",
		SQL: `DELETE FROM build_movement; DELETE FROM design_stock; DELETE FROM stock WHERE id = 1;`,
	})
	if err := migrate(ctx, sdb, path, dangling); err == nil || !strings.Contains(err.Error(), "foreign keys") {
		t.Fatalf("migration leaving dangling ledger rows: %v", err)
	}
	var v, rows int
	sdb.QueryRow(`SELECT MAX(version) FROM schema_version`).Scan(&v)
	sdb.QueryRow(`SELECT COUNT(*) FROM stock WHERE id = 1`).Scan(&rows)
	if v != migrations.Latest() || rows != 1 {
		t.Fatalf("after the refused step: version %d, row 1 present %d", v, rows)
	}
	// Enforcement is back on for the connections the pool hands out.
	var fk int
	sdb.QueryRow(`PRAGMA foreign_keys`).Scan(&fk)
	if fk != 1 {
		t.Fatalf("foreign_keys = %d after migrating", fk)
	}
}

// TestMigrationFailureRollsBack applies a broken migration after the real
// ones and checks that the file stays at the last good version.
func TestMigrationFailureRollsBack(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "broken.db")
	buildAtVersion(t, path, migrations.Latest())
	u := url.URL{Scheme: "file", Path: filepath.ToSlash(path), RawQuery: dsnQuery() + "&_pragma=journal_mode(WAL)"}
	sdb, err := sql.Open("sqlite", u.String())
	if err != nil {
		t.Fatal(err)
	}
	defer sdb.Close()
	broken := append(migrations.All(), migrations.Migration{
		Version: migrations.Latest() + 1, Name: "9999_broken.sql",
		SQL: `CREATE TABLE half_done (x); INSERT INTO no_such_table VALUES (1);`,
	})
	if err := migrate(ctx, sdb, path, broken); err == nil {
		t.Fatal("broken migration applied")
	}
	var v, half int
	sdb.QueryRow(`SELECT MAX(version) FROM schema_version`).Scan(&v)
	sdb.QueryRow(`SELECT COUNT(*) FROM sqlite_schema WHERE name = 'half_done'`).Scan(&half)
	if v != migrations.Latest() || half != 0 {
		t.Fatalf("after a failed migration: version %d, half-done table %d", v, half)
	}
}
