package store

import (
	"context"
	"fmt"
	"time"

	"drawerfit/fault"
	"drawerfit/production"
	"drawerfit/stock"
)

// Draw records a build of req.Boards boards of design req.DesignID and
// applies req.Deltas in one write transaction, whose ledger entries carry
// production.BuildReason. The transaction holds the database's write lock
// from its start, so two builds at once are applied one after the other
// and the second sees the first's quantities. Refusals leave nothing
// behind: an unknown or removed design is fault.NotFound, an error from
// req.Check is returned as it is, and rows that would go below zero give
// the fault.Conflict of Adjust carrying a *stock.Shortfall.
func (db *DB) Draw(ctx context.Context, req production.DrawRequest) (*production.Build, error) {
	if req.Boards < 1 {
		return nil, fault.Invalidf("a build needs at least one board, not %d", req.Boards)
	}
	if len(req.Deltas) == 0 {
		return nil, fault.Invalidf("a build needs parts to draw")
	}
	var b *production.Build
	err := db.Tx(ctx, func(tx *Tx) error {
		id := normalizeID(req.DesignID)
		var n int
		if err := tx.QueryRowContext(ctx, `SELECT COUNT(*) FROM design WHERE id = ? AND removed_at IS NULL`, id).Scan(&n); err != nil {
			return fmt.Errorf("build: %w", err)
		}
		if n == 0 {
			return fault.NotFoundf("no saved design %q (list them with `drawerfit designs`)", id)
		}
		var buildID int64
		if err := tx.QueryRowContext(ctx, `INSERT INTO build (design_id, boards, built_at) VALUES (?, ?, ?) RETURNING id`,
			id, req.Boards, formatTime(tx.at)).Scan(&buildID); err != nil {
			return fmt.Errorf("record build: %w", err)
		}
		if req.Check != nil {
			rows := map[int64]stock.Item{}
			for _, d := range req.Deltas {
				it, err := get(ctx, tx, d.StockID)
				if fault.KindOf(err) == fault.NotFound {
					continue
				}
				if err != nil {
					return err
				}
				rows[it.ID] = it
			}
			if err := req.Check(rows); err != nil {
				return err
			}
		}
		if err := tx.adjustLinked(ctx, buildID, req.Deltas, production.BuildReason(buildID, id, req.Boards), false); err != nil {
			return err
		}
		var err error
		b, err = build(ctx, tx, buildID)
		return err
	})
	if err != nil {
		return nil, err
	}
	return b, nil
}

// adjustLinked applies deltas with reason and links the ledger entries it
// writes to the build: exactly the ids its own INSERTs returned (a MAX(id)
// read before would also catch another writer's entries wherever writers
// do not take turns).
func (tx *Tx) adjustLinked(ctx context.Context, buildID int64, deltas []stock.Delta, reason string, undo bool) error {
	first := len(tx.moves)
	if err := tx.Adjust(ctx, deltas, reason); err != nil {
		return err
	}
	u := 0
	if undo {
		u = 1
	}
	for _, mid := range tx.moves[first:] {
		if _, err := tx.ExecContext(ctx, `INSERT INTO build_movement (build_id, movement_id, undo) VALUES (?, ?, ?)`,
			buildID, mid, u); err != nil {
			return fmt.Errorf("link build %d to the ledger: %w", buildID, err)
		}
	}
	return nil
}

// Builds lists every build, newest first, with its ledger entries.
func (db *DB) Builds(ctx context.Context) ([]*production.Build, error) {
	rows, err := db.sql.QueryContext(ctx, `SELECT id FROM build ORDER BY id DESC`)
	if err != nil {
		return nil, fmt.Errorf("list builds: %w", err)
	}
	var ids []int64
	for rows.Next() {
		var id int64
		if err := rows.Scan(&id); err != nil {
			rows.Close()
			return nil, fmt.Errorf("list builds: %w", err)
		}
		ids = append(ids, id)
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("list builds: %w", err)
	}
	out := make([]*production.Build, 0, len(ids))
	for _, id := range ids {
		b, err := build(ctx, db.sql, id)
		if err != nil {
			return nil, err
		}
		out = append(out, b)
	}
	return out, nil
}

// GetBuild returns one build; an unknown id is fault.NotFound.
func (db *DB) GetBuild(ctx context.Context, id int64) (*production.Build, error) {
	return build(ctx, db.sql, id)
}

func build(ctx context.Context, q querier, id int64) (*production.Build, error) {
	b := &production.Build{ID: id}
	var at string
	var undone *string
	err := q.QueryRowContext(ctx, `SELECT b.design_id, b.boards, b.built_at, b.undone_at, d.summary
		FROM build b JOIN design d ON d.id = b.design_id WHERE b.id = ?`, id).
		Scan(&b.DesignID, &b.Boards, &at, &undone, &b.DesignName)
	if isNoRows(err) {
		return nil, fault.NotFoundf("no build %d (list them with `drawerfit builds`)", id)
	}
	if err != nil {
		return nil, fmt.Errorf("read build %d: %w", id, err)
	}
	if b.At, err = parseTime(at); err != nil {
		return nil, fmt.Errorf("build %d has time %q", id, at)
	}
	if undone != nil {
		if b.UndoneAt, err = parseTime(*undone); err != nil {
			return nil, fmt.Errorf("build %d has undo time %q", id, *undone)
		}
	}
	rows, err := q.QueryContext(ctx, `SELECT m.id, m.stock_id, m.delta, m.balance, m.reason, m.at,
		s.id, s.kind, s.value, s.tolerance, s.quantity, s.package, s.dielectric, s.location, s.note
		FROM build_movement bm JOIN movement m ON m.id = bm.movement_id JOIN stock s ON s.id = m.stock_id
		WHERE bm.build_id = ? ORDER BY m.id`, id)
	if err != nil {
		return nil, fmt.Errorf("read build %d: %w", id, err)
	}
	defer rows.Close()
	for rows.Next() {
		var m stock.Movement
		var mat, kind string
		p := &m.Part
		if err := rows.Scan(&m.ID, &m.StockID, &m.Delta, &m.Balance, &m.Reason, &mat,
			&p.ID, &kind, &p.Value, &p.Tolerance, &p.Quantity, &p.Package, &p.Dielectric, &p.Location, &p.Note); err != nil {
			return nil, fmt.Errorf("read build %d: %w", id, err)
		}
		if p.Kind, err = stock.ParseKind(kind); err != nil {
			return nil, fmt.Errorf("read build %d: row %d has kind %q", id, p.ID, kind)
		}
		if m.At, err = parseTime(mat); err != nil {
			return nil, fmt.Errorf("read build %d: entry %d has time %q", id, m.ID, mat)
		}
		b.Moves = append(b.Moves, m)
	}
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("read build %d: %w", id, err)
	}
	return b, nil
}

// UndoBuild returns the parts build id took to their rows in one
// transaction, with ledger entries of reason production.UndoReason, and
// marks the build undone. A build undone before is fault.Conflict, and so
// is one whose rows have been removed from the inventory since with no
// live row of the same identity to take the parts (nothing is returned
// then; add the part back first).
func (db *DB) UndoBuild(ctx context.Context, id int64) (*production.Build, error) {
	var b *production.Build
	err := db.Tx(ctx, func(tx *Tx) error {
		cur, err := build(ctx, tx, id)
		if err != nil {
			return err
		}
		if !cur.UndoneAt.IsZero() {
			return fault.Conflictf("build %d was undone already (%s); its parts went back then", id, cur.UndoneAt.Format(time.RFC3339))
		}
		var deltas []stock.Delta
		for _, m := range cur.Moves {
			if m.Delta >= 0 {
				continue
			}
			target := m.StockID
			if _, err := get(ctx, tx, m.StockID); fault.KindOf(err) == fault.NotFound {
				// The row was removed; a live row of the same identity
				// (the part added back) takes the parts instead.
				same, ok, err := findIdentity(ctx, tx, m.Part)
				if err != nil {
					return err
				}
				if !ok {
					return fault.Conflictf("build %d cannot be undone: stock row %d (%s) has been removed since and no row holds that part; add it back (stock add with the same value, tolerance, package, dielectric and location), then undo again",
						id, m.StockID, m.Part.Label())
				}
				target = same.ID
			} else if err != nil {
				return err
			}
			deltas = append(deltas, stock.Delta{StockID: target, Change: -m.Delta})
		}
		if len(deltas) > 0 {
			if err := tx.adjustLinked(ctx, id, deltas, production.UndoReason(id), true); err != nil {
				return err
			}
		}
		if _, err := tx.ExecContext(ctx, `UPDATE build SET undone_at = ? WHERE id = ?`, formatTime(tx.at), id); err != nil {
			return fmt.Errorf("mark build %d undone: %w", id, err)
		}
		b, err = build(ctx, tx, id)
		return err
	})
	if err != nil {
		return nil, err
	}
	return b, nil
}
