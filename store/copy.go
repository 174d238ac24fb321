package store

import (
	"context"
	"fmt"
	"strings"

	"drawerfit/fault"
	"drawerfit/migrations"
)

// copyTables are the tables Copy moves, parents before children, each
// with the column that orders its rows.
var copyTables = []struct{ name, order string }{
	{"stock", "id"},
	{"movement", "id"},
	{"design", "created_at, id"},
	{"design_stock", "design_id, stock_id"},
	{"build", "id"},
	{"build_movement", "build_id, movement_id"},
}

// identityColumns are the generated id columns whose sequences follow the
// copied ids on PostgreSQL.
var identityColumns = [][2]string{{"stock", "id"}, {"movement", "id"}, {"build", "id"}, {"design", "seq"}}

// CopySummary counts the rows Copy moved, per table.
type CopySummary map[string]int

// Copy moves everything in from (stock, ledger, saved designs and builds,
// with their ids) into to, which must hold a stock database with no rows
// (new, or just made by OpenMode with Create), in one transaction of to:
// a failure leaves to as empty as it was. Both must be at this binary's
// schema version. from is only read.
func Copy(ctx context.Context, from, to *DB) (CopySummary, error) {
	sum := CopySummary{}
	for _, db := range []*DB{from, to} {
		v, err := db.SchemaVersion(ctx)
		if err != nil {
			return sum, err
		}
		if want := latestVersion(); v != want {
			return sum, fault.Conflictf("the stock database at %s has schema version %d, not %d; upgrade it first (drawerfit stock upgrade)", db.path, v, want)
		}
	}
	err := to.Tx(ctx, func(tx *Tx) error {
		for _, t := range copyTables {
			var n int
			if err := tx.QueryRowContext(ctx, `SELECT COUNT(*) FROM `+t.name).Scan(&n); err != nil {
				return fmt.Errorf("copy: count %s: %w", t.name, err)
			}
			if n > 0 {
				return fault.Conflictf("the stock database at %s is not empty (its table %s has %d rows); copy only into an empty database", to.path, t.name, n)
			}
		}
		for _, t := range copyTables {
			n, err := copyTable(ctx, from, tx, t.name, t.order)
			if err != nil {
				return err
			}
			sum[t.name] = n
		}
		if tx.pg {
			for _, c := range identityColumns {
				// The next generated id follows the highest copied one.
				q := fmt.Sprintf(`SELECT setval(pg_get_serial_sequence('%s', '%s'), COALESCE(MAX(%s), 0) + 1, false) FROM %s`,
					c[0], c[1], c[1], c[0])
				if _, err := tx.ExecContext(ctx, q); err != nil {
					return fmt.Errorf("copy: continue the ids of %s: %w", c[0], err)
				}
			}
		}
		return nil
	})
	return sum, err
}

// copyTable copies the rows of table, in order, by column name.
func copyTable(ctx context.Context, from *DB, tx *Tx, table, order string) (int, error) {
	rows, err := from.sql.QueryContext(ctx, `SELECT * FROM `+table+` ORDER BY `+order)
	if err != nil {
		return 0, fmt.Errorf("copy: read %s: %w", table, err)
	}
	defer rows.Close()
	cols, err := rows.Columns()
	if err != nil {
		return 0, fmt.Errorf("copy: read %s: %w", table, err)
	}
	// design.seq exists only on PostgreSQL, where its default numbers the
	// rows in the order they are copied (the saving order).
	marks := strings.TrimSuffix(strings.Repeat("?, ", len(cols)), ", ")
	insert := `INSERT INTO ` + table + ` (` + strings.Join(cols, ", ") + `) VALUES (` + marks + `)`
	if tx.pg && (table == "stock" || table == "movement" || table == "build") {
		insert = `INSERT INTO ` + table + ` (` + strings.Join(cols, ", ") + `) OVERRIDING SYSTEM VALUE VALUES (` + marks + `)`
	}
	vals := make([]any, len(cols))
	ptrs := make([]any, len(cols))
	for i := range vals {
		ptrs[i] = &vals[i]
	}
	n := 0
	for rows.Next() {
		if err := rows.Scan(ptrs...); err != nil {
			return n, fmt.Errorf("copy: read %s: %w", table, err)
		}
		if _, err := tx.ExecContext(ctx, insert, vals...); err != nil {
			return n, fmt.Errorf("copy: write %s row %d: %w", table, n+1, err)
		}
		n++
	}
	return n, rows.Err()
}

func latestVersion() int { return migrations.Latest() }
