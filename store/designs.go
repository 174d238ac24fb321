package store

import (
	"context"
	"crypto/rand"
	"fmt"
	"strings"

	"drawerfit/fault"
	"drawerfit/production"
)

var _ production.Store = (*DB)(nil)

// idAlphabet is the lower-case base32 alphabet of RFC 4648: no 0, 1, 8 or
// 9, so an id is never misread as a build number's digits 0/1 or as O/I.
const idAlphabet = "abcdefghijklmnopqrstuvwxyz234567"

// idLength gives 32^6 ≈ 1.07e9 ids: a collision among a shop's few
// thousand designs is about one in 500 (birthday bound), and each is
// detected and retried.
const idLength = 6

// newDesignID returns a random id; tests replace it to force collisions.
var newDesignID = func() (string, error) {
	for {
		var b [idLength]byte
		if _, err := rand.Read(b[:]); err != nil {
			return "", fmt.Errorf("make a design id: %w", err)
		}
		letters := false
		for i := range b {
			b[i] = idAlphabet[int(b[i])%len(idAlphabet)]
			letters = letters || b[i] >= 'a'
		}
		// An id of digits only would read like a build number.
		if letters {
			return string(b[:]), nil
		}
	}
}

// maxIDTries bounds the collision retries; 20 misses in a row mean the
// generator is broken, not unlucky.
const maxIDTries = 20

// normalizeID folds what a person types to the stored form.
func normalizeID(id string) string { return strings.ToLower(strings.TrimSpace(id)) }

// SaveDesigns stores the designs in one transaction: every one gets a new
// id (checked against every id ever given, removed designs included) and
// the transaction's time. Every stock row a design uses must be a row of
// this database (fault.Conflict otherwise: a design fitted against a CSV
// file refers to that file's rows).
func (db *DB) SaveDesigns(ctx context.Context, ds []*production.Design) error {
	return db.Tx(ctx, func(tx *Tx) error {
		for _, d := range ds {
			if err := tx.saveDesign(ctx, d); err != nil {
				return err
			}
		}
		return nil
	})
}

func (tx *Tx) saveDesign(ctx context.Context, d *production.Design) error {
	doc, err := production.EncodeDesign(d)
	if err != nil {
		return err
	}
	use := d.StockUse()
	for _, u := range use {
		var n int
		if err := tx.QueryRowContext(ctx, `SELECT COUNT(*) FROM stock WHERE id = ? AND removed_at IS NULL`, u.StockID).Scan(&n); err != nil {
			return fmt.Errorf("save design: %w", err)
		}
		if n == 0 {
			return fault.Conflictf("the design uses stock row %d, which this database's inventory does not hold; save designs fitted against the database, not a --stock file", u.StockID)
		}
	}
	var id string
	for try := 0; ; try++ {
		if try == maxIDTries {
			return fmt.Errorf("save design: no free id after %d tries", maxIDTries)
		}
		if id, err = newDesignID(); err != nil {
			return err
		}
		var n int
		if err := tx.QueryRowContext(ctx, `SELECT COUNT(*) FROM design WHERE id = ?`, id).Scan(&n); err != nil {
			return fmt.Errorf("save design: %w", err)
		}
		if n == 0 {
			break
		}
	}
	meets := 0
	if d.MeetsSpec() {
		meets = 1
	}
	if _, err := tx.ExecContext(ctx, `INSERT INTO design
		(id, name, summary, filters, boards, worst_error, part_count, unique_parts, meets_spec, document, created_at)
		VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
		id, d.Name, d.Summary(), len(d.Filters), d.Boards, d.WorstError(), d.PartCount(), len(use), meets,
		string(doc), formatTime(tx.at)); err != nil {
		return fmt.Errorf("save design: %w", err)
	}
	for _, u := range use {
		if _, err := tx.ExecContext(ctx, `INSERT INTO design_stock (design_id, stock_id, per_board) VALUES (?, ?, ?)`,
			id, u.StockID, u.PerBoard); err != nil {
			return fmt.Errorf("save design: %w", err)
		}
	}
	d.ID, d.Created = id, tx.at
	return nil
}

// Design returns the saved design with the id (letter case and
// surrounding spaces ignored). A removed or unknown id is fault.NotFound.
func (db *DB) Design(ctx context.Context, id string) (*production.Design, error) {
	return design(ctx, db.sql, id)
}

func design(ctx context.Context, q querier, id string) (*production.Design, error) {
	id = normalizeID(id)
	var doc, created string
	err := q.QueryRowContext(ctx, `SELECT document, created_at FROM design WHERE id = ? AND removed_at IS NULL`, id).Scan(&doc, &created)
	if isNoRows(err) {
		return nil, fault.NotFoundf("no saved design %q (list them with `drawerfit designs`)", id)
	}
	if err != nil {
		return nil, fmt.Errorf("read design %s: %w", id, err)
	}
	d, err := production.DecodeDesign([]byte(doc))
	if err != nil {
		return nil, fmt.Errorf("design %s: %w", id, err)
	}
	d.ID = id
	if d.Created, err = parseTime(created); err != nil {
		return nil, fmt.Errorf("design %s has time %q", id, created)
	}
	return d, nil
}

// Designs lists the saved designs that are not removed, newest first.
func (db *DB) Designs(ctx context.Context) ([]production.DesignInfo, error) {
	// Saving order breaks ties: SQLite's rowid, PostgreSQL's seq column.
	order := "d.rowid"
	if db.sql.pg {
		order = "d.seq"
	}
	rows, err := db.sql.QueryContext(ctx, `SELECT d.id, d.name, d.summary, d.filters, d.boards, d.worst_error,
		d.part_count, d.unique_parts, d.meets_spec, d.created_at,
		(SELECT COUNT(*) FROM build b WHERE b.design_id = d.id AND b.undone_at IS NULL)
		FROM design d WHERE d.removed_at IS NULL ORDER BY d.created_at DESC, `+order)
	if err != nil {
		return nil, fmt.Errorf("list designs: %w", err)
	}
	defer rows.Close()
	var out []production.DesignInfo
	for rows.Next() {
		var di production.DesignInfo
		var created string
		var meets int
		if err := rows.Scan(&di.ID, &di.Name, &di.Summary, &di.Filters, &di.Boards, &di.WorstError,
			&di.PartCount, &di.UniqueParts, &meets, &created, &di.Builds); err != nil {
			return nil, fmt.Errorf("list designs: %w", err)
		}
		di.MeetsSpec = meets == 1
		if di.Created, err = parseTime(created); err != nil {
			return nil, fmt.Errorf("list designs: design %s has time %q", di.ID, created)
		}
		out = append(out, di)
	}
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("list designs: %w", err)
	}
	return out, nil
}

// RemoveDesign takes the design out of the list. Its builds keep their
// reference (and can still be undone); its id is not given out again.
func (db *DB) RemoveDesign(ctx context.Context, id string) error {
	id = normalizeID(id)
	return db.Tx(ctx, func(tx *Tx) error {
		res, err := tx.ExecContext(ctx, `UPDATE design SET removed_at = ? WHERE id = ? AND removed_at IS NULL`, formatTime(tx.at), id)
		if err != nil {
			return fmt.Errorf("remove design %s: %w", id, err)
		}
		if n, err := res.RowsAffected(); err != nil {
			return fmt.Errorf("remove design %s: %w", id, err)
		} else if n == 0 {
			return fault.NotFoundf("no saved design %q (list them with `drawerfit designs`)", id)
		}
		return nil
	})
}

// DesignsUsing returns the ids of the listed designs that use stock row
// id, in id order.
func (db *DB) DesignsUsing(ctx context.Context, stockID int64) ([]string, error) {
	rows, err := db.sql.QueryContext(ctx, `SELECT d.id FROM design_stock s JOIN design d ON d.id = s.design_id
		WHERE s.stock_id = ? AND d.removed_at IS NULL ORDER BY d.id`, stockID)
	if err != nil {
		return nil, fmt.Errorf("designs using row %d: %w", stockID, err)
	}
	defer rows.Close()
	var out []string
	for rows.Next() {
		var id string
		if err := rows.Scan(&id); err != nil {
			return nil, fmt.Errorf("designs using row %d: %w", stockID, err)
		}
		out = append(out, id)
	}
	return out, rows.Err()
}

// RowUse says which live designs and standing builds use a stock row.
type RowUse struct {
	// Designs are the ids of listed (not removed) designs that use the
	// row, in id order.
	Designs []string
	// Builds are the ids of builds not undone that drew from the row, in
	// id order.
	Builds []int64
}

// Empty reports whether nothing uses the row.
func (u RowUse) Empty() bool { return len(u.Designs) == 0 && len(u.Builds) == 0 }

// RowUse returns what uses stock row id, read inside the transaction (so
// that a removal can refuse on it without a race).
func (tx *Tx) RowUse(ctx context.Context, stockID int64) (RowUse, error) {
	var u RowUse
	rows, err := tx.QueryContext(ctx, `SELECT d.id FROM design_stock s JOIN design d ON d.id = s.design_id
		WHERE s.stock_id = ? AND d.removed_at IS NULL ORDER BY d.id`, stockID)
	if err != nil {
		return u, fmt.Errorf("designs using row %d: %w", stockID, err)
	}
	for rows.Next() {
		var id string
		if err := rows.Scan(&id); err != nil {
			rows.Close()
			return u, fmt.Errorf("designs using row %d: %w", stockID, err)
		}
		u.Designs = append(u.Designs, id)
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return u, err
	}
	rows, err = tx.QueryContext(ctx, `SELECT DISTINCT b.id FROM build b
		JOIN build_movement bm ON bm.build_id = b.id AND bm.undo = 0
		JOIN movement m ON m.id = bm.movement_id
		WHERE m.stock_id = ? AND b.undone_at IS NULL ORDER BY b.id`, stockID)
	if err != nil {
		return u, fmt.Errorf("builds using row %d: %w", stockID, err)
	}
	defer rows.Close()
	for rows.Next() {
		var id int64
		if err := rows.Scan(&id); err != nil {
			return u, fmt.Errorf("builds using row %d: %w", stockID, err)
		}
		u.Builds = append(u.Builds, id)
	}
	return u, rows.Err()
}
