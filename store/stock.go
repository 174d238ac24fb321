package store

import (
	"context"
	"database/sql"
	"fmt"
	"strings"

	"drawerfit/fault"
	"drawerfit/stock"
)

const itemColumns = `id, kind, value, tolerance, quantity, package, dielectric, location, note,
	voltage, price_micros, min_stock, pack, supplier_ref,
	label, channels, gbw, dc_gain, slew, supply`

// itemColumnsOf is itemColumns of the table aliased a.
func itemColumnsOf(a string) string {
	cols := strings.Split(itemColumns, ",")
	for i, c := range cols {
		cols[i] = a + "." + strings.TrimSpace(c)
	}
	return strings.Join(cols, ", ")
}

// scanner is *sql.Row or *sql.Rows.
type scanner interface{ Scan(dest ...any) error }

func scanItem(s scanner, before ...any) (stock.Item, error) {
	var it stock.Item
	var kind string
	var price sql.NullInt64
	dest := append(before, &it.ID, &kind, &it.Value, &it.Tolerance, &it.Quantity,
		&it.Package, &it.Dielectric, &it.Location, &it.Note,
		&it.Voltage, &price, &it.Min, &it.Pack, &it.SupplierRef,
		&it.Name, &it.Channels, &it.GBW, &it.DCGain, &it.Slew, &it.Supply)
	if err := s.Scan(dest...); err != nil {
		return it, err
	}
	if price.Valid {
		if price.Int64 < 0 {
			return it, fmt.Errorf("row %d has price %d", it.ID, price.Int64)
		}
		it.Price = stock.MoneyFromMicros(price.Int64)
	}
	k, err := stock.ParseKind(kind)
	if err != nil {
		return it, fmt.Errorf("row %d has kind %q", it.ID, kind)
	}
	it.Kind = k
	return it, nil
}

// querier is *sql.DB or *sql.Tx.
type querier interface {
	QueryContext(ctx context.Context, q string, args ...any) (*sql.Rows, error)
	QueryRowContext(ctx context.Context, q string, args ...any) *sql.Row
	isPG() bool
}

// List returns the rows in the inventory that f selects: resistors, then
// capacitors, then amplifiers, each by value (amplifiers by label),
// tolerance, package, dielectric, location and id.
func (db *DB) List(ctx context.Context, f stock.Filter) ([]stock.Item, error) {
	return list(ctx, db.sql, f)
}

func list(ctx context.Context, q querier, f stock.Filter) ([]stock.Item, error) {
	query := `SELECT ` + itemColumns + ` FROM stock WHERE removed_at IS NULL`
	var args []any
	if f.Kind != nil {
		query += ` AND kind = ?`
		args = append(args, f.Kind.String())
	}
	pg := q.isPG()
	query += ` ORDER BY CASE kind WHEN 'resistor' THEN 0 WHEN 'capacitor' THEN 1 ELSE 2 END, value, ` +
		nocaseOrder(pg, "label") + `, tolerance, ` + nocaseOrder(pg, "package") + `, ` +
		nocaseOrder(pg, "dielectric") + `, ` + nocaseOrder(pg, "location") + `, id`
	rows, err := q.QueryContext(ctx, query, args...)
	if err != nil {
		return nil, fmt.Errorf("list stock: %w", err)
	}
	defer rows.Close()
	var out []stock.Item
	for rows.Next() {
		it, err := scanItem(rows)
		if err != nil {
			return nil, fmt.Errorf("list stock: %w", err)
		}
		out = append(out, it)
	}
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("list stock: %w", err)
	}
	return out, nil
}

// Get returns the row with the given id; a removed or unknown id is
// fault.NotFound.
func (db *DB) Get(ctx context.Context, id int64) (stock.Item, error) { return get(ctx, db.sql, id) }

// Get is DB.Get inside the transaction.
func (tx *Tx) Get(ctx context.Context, id int64) (stock.Item, error) { return get(ctx, tx, id) }

func get(ctx context.Context, q querier, id int64) (stock.Item, error) {
	it, err := scanItem(q.QueryRowContext(ctx,
		`SELECT `+itemColumns+` FROM stock WHERE id = ? AND removed_at IS NULL`, id))
	if isNoRows(err) {
		return it, fault.NotFoundf("no stock row %d", id)
	}
	if err != nil {
		return it, fmt.Errorf("read stock row %d: %w", id, err)
	}
	return it, nil
}

// findIdentity returns the row in the inventory with it's identity, if any.
func findIdentity(ctx context.Context, q querier, it stock.Item) (stock.Item, bool, error) {
	pg := q.isPG()
	got, err := scanItem(q.QueryRowContext(ctx, `SELECT `+itemColumns+` FROM stock
		WHERE removed_at IS NULL AND kind = ? AND value = ? AND `+nocaseEq(pg, "label")+` AND tolerance = ?
		  AND `+nocaseEq(pg, "package")+` AND `+nocaseEq(pg, "dielectric")+` AND `+nocaseEq(pg, "location"),
		it.Kind.String(), it.Value, it.Name, it.Tolerance, it.Package, it.Dielectric, it.Location))
	if isNoRows(err) {
		return stock.Item{}, false, nil
	}
	if err != nil {
		return stock.Item{}, false, fmt.Errorf("look up %s: %w", it.Label(), err)
	}
	return got, true, nil
}

// sameFigures refuses to merge an amplifier row into a stored row of the
// same identity whose figures differ: adding the quantity would silently
// keep the one and drop the other.
func sameFigures(old, it stock.Item) error {
	if old.Kind != stock.OpAmp || stock.SameAmpFigures(old, it) {
		return nil
	}
	return fault.Conflictf("row %d (%s) has the same label, package and location as %s but other figures; "+
		"give the new parts another label or location, or correct the row", old.ID, old.Label(), it.Label())
}

// prepare normalises and validates an item for storing.
func prepare(it stock.Item) (stock.Item, error) {
	it = it.Normalize()
	if err := it.Validate(); err != nil {
		return it, err
	}
	return it, nil
}

func cleanReason(reason, def string) (string, error) {
	r := strings.TrimSpace(reason)
	if r == "" {
		if def == "" {
			return "", fault.Invalidf("a reason is required")
		}
		r = def
	}
	if p := stock.TextProblem(r, false); p != "" {
		return "", fault.Invalidf("reason %s: %s", stock.Excerpt(r, 40), p)
	}
	return r, nil
}

// insert writes a new row and its first ledger entry.
func (tx *Tx) insert(ctx context.Context, it stock.Item, reason string) (stock.Item, error) {
	at := formatTime(tx.at)
	err := tx.QueryRowContext(ctx, `INSERT INTO stock
		(kind, value, tolerance, quantity, package, dielectric, location, note,
		 voltage, price_micros, min_stock, pack, supplier_ref, created_at, updated_at,
		 label, channels, gbw, dc_gain, slew, supply)
		VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING id`,
		it.Kind.String(), it.Value, it.Tolerance, it.Quantity, it.Package, it.Dielectric, it.Location, it.Note,
		it.Voltage, priceArg(it.Price), it.Min, it.Pack, it.SupplierRef, at, at,
		it.Name, it.Channels, it.GBW, it.DCGain, it.Slew, it.Supply).Scan(&it.ID)
	if err != nil {
		return it, fmt.Errorf("add %s: %w", it.Label(), err)
	}
	// The first entry records the row's creation even when it holds none.
	if err := tx.record(ctx, it.ID, it.Quantity, it.Quantity, reason); err != nil {
		return it, err
	}
	return it, nil
}

// priceArg is the price_micros column's value: NULL when not known.
func priceArg(m stock.Money) any {
	if !m.Known() {
		return nil
	}
	return m.Micros()
}

// writeAttrs stores the shop attributes of next on row old (same id) and,
// when any changed, writes a ledger note (a movement of 0 at the row's
// quantity) that says what changed, with reason. It returns the row as
// stored.
func (tx *Tx) writeAttrs(ctx context.Context, old, next stock.Item, reason string) (stock.Item, error) {
	changes := stock.AttrChanges(old, next)
	if len(changes) == 0 {
		return old, nil
	}
	if _, err := tx.ExecContext(ctx, `UPDATE stock SET voltage = ?, price_micros = ?, min_stock = ?, pack = ?,
		supplier_ref = ?, updated_at = ? WHERE id = ?`,
		next.Voltage, priceArg(next.Price), next.Min, next.Pack, next.SupplierRef, formatTime(tx.at), old.ID); err != nil {
		return old, fmt.Errorf("update row %d: %w", old.ID, err)
	}
	old.Voltage, old.Price, old.Min, old.Pack, old.SupplierRef = next.Voltage, next.Price, next.Min, next.Pack, next.SupplierRef
	return old, tx.record(ctx, old.ID, 0, old.Quantity, strings.Join(changes, "; ")+" ("+reason+")")
}

// SetAttrs changes the shop attributes of row id (voltage, price, minimum,
// pack size, supplier-ref) and writes what changed to the ledger as a note
// with reason ("set" when empty). Changing nothing writes nothing. Errors:
// fault.NotFound for an unknown row, fault.Invalid for a bad value.
func (db *DB) SetAttrs(ctx context.Context, id int64, a stock.Attrs, reason string) (stock.Item, error) {
	var it stock.Item
	err := db.Tx(ctx, func(tx *Tx) error {
		var err error
		it, err = tx.SetAttrs(ctx, id, a, reason)
		return err
	})
	return it, err
}

// SetAttrs is DB.SetAttrs inside the transaction.
func (tx *Tx) SetAttrs(ctx context.Context, id int64, a stock.Attrs, reason string) (stock.Item, error) {
	reason, err := cleanReason(reason, "set")
	if err != nil {
		return stock.Item{}, err
	}
	old, err := get(ctx, tx, id)
	if err != nil {
		return old, err
	}
	next, err := prepare(a.Apply(old))
	if err != nil {
		return old, err
	}
	return tx.writeAttrs(ctx, old, next, reason)
}

// record appends a ledger entry.
func (tx *Tx) record(ctx context.Context, id int64, delta, balance int, reason string) error {
	var mid int64
	if err := tx.QueryRowContext(ctx, `INSERT INTO movement (stock_id, delta, balance, reason, at) VALUES (?, ?, ?, ?, ?) RETURNING id`,
		id, delta, balance, reason, formatTime(tx.at)).Scan(&mid); err != nil {
		return fmt.Errorf("write ledger for row %d: %w", id, err)
	}
	tx.moves = append(tx.moves, mid)
	return nil
}

// setQuantity writes a row's new quantity and, when it changed, the ledger
// entry.
func (tx *Tx) setQuantity(ctx context.Context, it stock.Item, qty int, reason string) (stock.Item, error) {
	if qty < 0 || qty > stock.MaxQuantity {
		return it, fault.Invalidf("quantity %d for row %d is outside 0 to %d", qty, it.ID, stock.MaxQuantity)
	}
	delta := qty - it.Quantity
	if delta == 0 {
		return it, nil
	}
	if _, err := tx.ExecContext(ctx, `UPDATE stock SET quantity = ?, updated_at = ? WHERE id = ?`,
		qty, formatTime(tx.at), it.ID); err != nil {
		return it, fmt.Errorf("set quantity of row %d: %w", it.ID, err)
	}
	it.Quantity = qty
	return it, tx.record(ctx, it.ID, delta, qty, reason)
}

// Add stores item after normalising and validating it. When a row with the
// same identity is in the inventory its quantity grows by item.Quantity
// (and it takes item's note if it has none) and merged is true; otherwise a
// new row is created. The change is written to the ledger with reason
// ("added" when empty).
func (db *DB) Add(ctx context.Context, item stock.Item, reason string) (stored stock.Item, merged bool, err error) {
	err = db.Tx(ctx, func(tx *Tx) error {
		stored, merged, err = tx.Add(ctx, item, reason)
		return err
	})
	return stored, merged, err
}

// Add is DB.Add inside the transaction.
func (tx *Tx) Add(ctx context.Context, item stock.Item, reason string) (stock.Item, bool, error) {
	it, err := prepare(item)
	if err != nil {
		return it, false, err
	}
	if reason, err = cleanReason(reason, "added"); err != nil {
		return it, false, err
	}
	old, found, err := findIdentity(ctx, tx, it)
	if err != nil {
		return it, false, err
	}
	if !found {
		it, err = tx.insert(ctx, it, reason)
		return it, false, err
	}
	if err := sameFigures(old, it); err != nil {
		return old, true, err
	}
	if old.Quantity+it.Quantity > stock.MaxQuantity {
		return old, true, fault.Invalidf("row %d would hold more than %d parts", old.ID, stock.MaxQuantity)
	}
	filled, err := stock.FillAttrs(old, it)
	if err != nil {
		return old, true, err
	}
	if old.Note == "" && it.Note != "" {
		if _, err := tx.ExecContext(ctx, `UPDATE stock SET note = ?, updated_at = ? WHERE id = ?`,
			it.Note, formatTime(tx.at), old.ID); err != nil {
			return old, true, fmt.Errorf("update note of row %d: %w", old.ID, err)
		}
		old.Note = it.Note
	}
	if old, err = tx.writeAttrs(ctx, old, filled, reason); err != nil {
		return old, true, err
	}
	old, err = tx.setQuantity(ctx, old, old.Quantity+it.Quantity, reason)
	return old, true, err
}

// SetQuantity sets row id's quantity (0 to stock.MaxQuantity) and writes
// the change with reason, which is required, to the ledger. Setting the
// quantity it already has writes nothing. It returns the row.
func (db *DB) SetQuantity(ctx context.Context, id int64, qty int, reason string) (stock.Item, error) {
	var it stock.Item
	err := db.Tx(ctx, func(tx *Tx) error {
		var err error
		it, err = tx.SetQuantity(ctx, id, qty, reason)
		return err
	})
	return it, err
}

// SetQuantity is DB.SetQuantity inside the transaction.
func (tx *Tx) SetQuantity(ctx context.Context, id int64, qty int, reason string) (stock.Item, error) {
	reason, err := cleanReason(reason, "")
	if err != nil {
		return stock.Item{}, err
	}
	it, err := get(ctx, tx, id)
	if err != nil {
		return it, err
	}
	return tx.setQuantity(ctx, it, qty, reason)
}

// Remove takes row id out of the inventory. The row stays in the file for
// the ledger, which gets a closing entry "removed" that takes its quantity
// to zero; its identity is free for a new row.
func (db *DB) Remove(ctx context.Context, id int64) error {
	return db.Tx(ctx, func(tx *Tx) error { return tx.Remove(ctx, id, "removed") })
}

// Remove is DB.Remove inside the transaction, with a reason for the
// ledger ("removed" when empty).
func (tx *Tx) Remove(ctx context.Context, id int64, reason string) error {
	reason, err := cleanReason(reason, "removed")
	if err != nil {
		return err
	}
	it, err := get(ctx, tx, id)
	if err != nil {
		return err
	}
	return tx.remove(ctx, it, reason)
}

func (tx *Tx) remove(ctx context.Context, it stock.Item, reason string) error {
	at := formatTime(tx.at)
	if _, err := tx.ExecContext(ctx, `UPDATE stock SET quantity = 0, updated_at = ?, removed_at = ? WHERE id = ?`,
		at, at, it.ID); err != nil {
		return fmt.Errorf("remove row %d: %w", it.ID, err)
	}
	return tx.record(ctx, it.ID, -it.Quantity, 0, reason)
}

// Adjust applies signed quantity changes to several rows in one
// transaction, writing one ledger entry with reason (required) per row that
// changes. Changes to the same row are summed first. If any row would go
// below zero nothing is written and the error is a fault.Conflict whose
// chain holds a *stock.Shortfall listing every short row; an unknown or
// removed row is fault.NotFound.
func (db *DB) Adjust(ctx context.Context, deltas []stock.Delta, reason string) error {
	return db.Tx(ctx, func(tx *Tx) error { return tx.Adjust(ctx, deltas, reason) })
}

// Adjust is DB.Adjust inside the transaction. On a shortfall it writes
// nothing, but the caller's transaction stays open: return the error from
// the function given to DB.Tx to roll everything back.
func (tx *Tx) Adjust(ctx context.Context, deltas []stock.Delta, reason string) error {
	reason, err := cleanReason(reason, "")
	if err != nil {
		return err
	}
	var order []int64
	sum := map[int64]int{}
	for _, d := range deltas {
		if _, seen := sum[d.StockID]; !seen {
			order = append(order, d.StockID)
		}
		if d.Change > stock.MaxQuantity || d.Change < -stock.MaxQuantity {
			return fault.Invalidf("change %d for row %d is too large", d.Change, d.StockID)
		}
		sum[d.StockID] += d.Change
	}
	type change struct {
		it  stock.Item
		qty int
	}
	var changes []change
	var short []stock.ShortRow
	var labels []string
	for _, id := range order {
		it, err := get(ctx, tx, id)
		if err != nil {
			return err
		}
		qty := it.Quantity + sum[id]
		switch {
		case qty < 0:
			short = append(short, stock.ShortRow{StockID: id, Needed: -sum[id], OnHand: it.Quantity})
			labels = append(labels, fmt.Sprintf("row %d (%s) needs %d, has %d", id, it.Label(), -sum[id], it.Quantity))
		case qty > stock.MaxQuantity:
			return fault.Invalidf("row %d would hold more than %d parts", id, stock.MaxQuantity)
		case qty != it.Quantity:
			changes = append(changes, change{it, qty})
		}
	}
	if len(short) > 0 {
		return &fault.Error{Kind: fault.Conflict,
			Msg: "not enough stock: " + strings.Join(labels, "; "),
			Err: &stock.Shortfall{Rows: short}}
	}
	for _, c := range changes {
		if _, err := tx.setQuantity(ctx, c.it, c.qty, reason); err != nil {
			return err
		}
	}
	return nil
}

// Import stores items in one transaction: all of them or, if any is
// invalid, none (a fault.Invalid error naming the first bad item by its
// position, counting from 1). Items are normalised first. An item whose
// identity is in the inventory, or earlier in items, adds its quantity to
// that row (counted in Merged). With replace the inventory becomes exactly
// items: rows whose identity is not among them are removed, matching rows
// take the items' summed quantity and note (counted in Kept), and the rest
// are added. Ledger entries carry the reason "import" or "import
// (replace)".
func (db *DB) Import(ctx context.Context, items []stock.Item, replace bool) (stock.ImportSummary, error) {
	var sum stock.ImportSummary
	err := db.Tx(ctx, func(tx *Tx) error {
		var err error
		sum, err = tx.Import(ctx, items, replace)
		return err
	})
	return sum, err
}

// Import is DB.Import inside the transaction.
func (tx *Tx) Import(ctx context.Context, items []stock.Item, replace bool) (stock.ImportSummary, error) {
	sum := stock.ImportSummary{Rows: len(items)}
	reason := "import"
	if replace {
		reason = "import (replace)"
	}
	// Normalise, validate and fold duplicates before touching the file.
	var order []stock.Identity
	merged := map[stock.Identity]stock.Item{}
	for i, item := range items {
		it, err := prepare(item)
		if err != nil {
			return sum, fault.Invalidf("item %d (%s): %w", i+1, it.Label(), err)
		}
		id := it.Identity()
		if prev, ok := merged[id]; ok {
			if err := sameFigures(prev, it); err != nil {
				return sum, fault.Invalidf("item %d (%s): an earlier item has the same label, package and location but other figures", i+1, it.Label())
			}
			prev.Quantity += it.Quantity
			if prev.Quantity > stock.MaxQuantity {
				return sum, fault.Invalidf("item %d (%s): the rows of this identity hold more than %d parts", i+1, it.Label(), stock.MaxQuantity)
			}
			if prev.Note == "" {
				prev.Note = it.Note
			}
			filled, err := stock.FillAttrs(prev, it)
			if err != nil {
				return sum, fault.Invalidf("item %d: %v", i+1, err)
			}
			prev.Voltage, prev.Price, prev.Min, prev.Pack, prev.SupplierRef = filled.Voltage, filled.Price, filled.Min, filled.Pack, filled.SupplierRef
			merged[id] = prev
			sum.Merged++
			continue
		}
		merged[id] = it
		order = append(order, id)
	}

	if replace {
		current, err := list(ctx, tx, stock.Filter{})
		if err != nil {
			return sum, err
		}
		for _, old := range current {
			id := old.Identity()
			it, ok := merged[id]
			if !ok {
				if err := tx.remove(ctx, old, reason); err != nil {
					return sum, err
				}
				sum.Removed++
				sum.Units -= old.Quantity
				continue
			}
			if it.Note != old.Note {
				if _, err := tx.ExecContext(ctx, `UPDATE stock SET note = ?, updated_at = ? WHERE id = ?`,
					it.Note, formatTime(tx.at), old.ID); err != nil {
					return sum, fmt.Errorf("update note of row %d: %w", old.ID, err)
				}
			}
			// Replacing: the file's attributes are the truth.
			if old, err = tx.writeAttrs(ctx, old, it, reason); err != nil {
				return sum, err
			}
			if old.Kind == stock.OpAmp && !stock.SameAmpFigures(old, it) {
				// The file is the inventory now: its figures win.
				if _, err := tx.ExecContext(ctx, `UPDATE stock SET channels = ?, gbw = ?, dc_gain = ?, slew = ?, supply = ?,
					updated_at = ? WHERE id = ?`, it.Channels, it.GBW, it.DCGain, it.Slew, it.Supply, formatTime(tx.at), old.ID); err != nil {
					return sum, fmt.Errorf("update figures of row %d: %w", old.ID, err)
				}
			}
			if _, err := tx.setQuantity(ctx, old, it.Quantity, reason); err != nil {
				return sum, err
			}
			sum.Kept++
			sum.Units += it.Quantity - old.Quantity
			delete(merged, id)
		}
	}

	for _, id := range order {
		it, ok := merged[id]
		if !ok {
			continue // kept by replace
		}
		old, found, err := findIdentity(ctx, tx, it)
		if err != nil {
			return sum, err
		}
		if found {
			if err := sameFigures(old, it); err != nil {
				return sum, err
			}
			if old.Quantity+it.Quantity > stock.MaxQuantity {
				return sum, fault.Invalidf("row %d (%s) would hold more than %d parts", old.ID, old.Label(), stock.MaxQuantity)
			}
			if old.Note == "" && it.Note != "" {
				// The file's note fills an empty one; a note already in
				// the database is kept.
				if _, err := tx.ExecContext(ctx, `UPDATE stock SET note = ?, updated_at = ? WHERE id = ?`,
					it.Note, formatTime(tx.at), old.ID); err != nil {
					return sum, fmt.Errorf("update note of row %d: %w", old.ID, err)
				}
			}
			// Likewise an attribute the row lacks comes from the file; one
			// it has is kept (stock set, or import --replace, changes it).
			filled, err := stock.FillAttrs(old, it)
			if err != nil {
				return sum, err
			}
			if old, err = tx.writeAttrs(ctx, old, filled, reason); err != nil {
				return sum, err
			}
			if _, err := tx.setQuantity(ctx, old, old.Quantity+it.Quantity, reason); err != nil {
				return sum, err
			}
			sum.Merged++
		} else {
			if _, err := tx.insert(ctx, it, reason); err != nil {
				return sum, err
			}
			sum.Added++
		}
		sum.Units += it.Quantity
	}
	return sum, nil
}

// History returns the ledger entries of row id (which may have been
// removed), or of every row when id is 0, oldest first. An id that never
// existed is fault.NotFound.
func (db *DB) History(ctx context.Context, id int64) ([]stock.Movement, error) {
	query := `SELECT m.id, m.stock_id, m.delta, m.balance, m.reason, m.at, ` + itemColumnsOf("s") + `
		FROM movement m JOIN stock s ON s.id = m.stock_id`
	var args []any
	if id != 0 {
		var n int
		if err := db.sql.QueryRowContext(ctx, `SELECT COUNT(*) FROM stock WHERE id = ?`, id).Scan(&n); err != nil {
			return nil, fmt.Errorf("read history: %w", err)
		}
		if n == 0 {
			return nil, fault.NotFoundf("no stock row %d", id)
		}
		query += ` WHERE m.stock_id = ?`
		args = append(args, id)
	}
	query += ` ORDER BY m.id`
	rows, err := db.sql.QueryContext(ctx, query, args...)
	if err != nil {
		return nil, fmt.Errorf("read history: %w", err)
	}
	defer rows.Close()
	var out []stock.Movement
	for rows.Next() {
		var m stock.Movement
		var at string
		if m.Part, err = scanItem(rows, &m.ID, &m.StockID, &m.Delta, &m.Balance, &m.Reason, &at); err != nil {
			return nil, fmt.Errorf("read history: %w", err)
		}
		if m.At, err = parseTime(at); err != nil {
			return nil, fmt.Errorf("read history: entry %d has time %q", m.ID, at)
		}
		out = append(out, m)
	}
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("read history: %w", err)
	}
	return out, nil
}
