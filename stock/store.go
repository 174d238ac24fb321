package stock

import (
	"context"
	"fmt"
	"strings"
	"time"
)

// Filter selects stock rows. The zero Filter selects every row.
type Filter struct {
	// Kind, when not nil, keeps only rows of that kind.
	Kind *Kind
}

// Movement is one entry of the ledger: a change of one row's quantity.
type Movement struct {
	// ID is the entry's number; entries are numbered in the order written.
	ID int64
	// StockID is the row whose quantity changed.
	StockID int64
	// Delta is the signed change of quantity.
	Delta int
	// Balance is the row's quantity after the change.
	Balance int
	// Reason says why ("import", "built filter #3", "counted the drawer").
	Reason string
	// At is when the change was written (UTC).
	At time.Time
	// Part is the row as it is now (its last state if it was removed);
	// its Quantity is the current one, not the one after this change.
	Part Item
}

// Delta is a signed change of one row's quantity, for Store.Adjust.
type Delta struct {
	StockID int64
	Change  int
}

// ShortRow is one row that an adjustment would take below zero.
type ShortRow struct {
	StockID int64 `json:"stock_id"`
	// Needed is how many parts the adjustment takes out of the row (the
	// negated sum of its changes).
	Needed int `json:"needed"`
	// OnHand is the row's quantity.
	OnHand int `json:"on_hand"`
}

// Shortfall is the cause carried by the fault.Conflict error that
// Store.Adjust returns when rows would go below zero. Get it with
// errors.As(err, &sf) where sf is a *Shortfall.
type Shortfall struct {
	Rows []ShortRow
}

// Error lists the short rows.
func (s *Shortfall) Error() string {
	var b strings.Builder
	b.WriteString("not enough stock: ")
	for i, r := range s.Rows {
		if i > 0 {
			b.WriteString("; ")
		}
		fmt.Fprintf(&b, "row %d needs %d, has %d", r.StockID, r.Needed, r.OnHand)
	}
	return b.String()
}

// ImportSummary says what an import did.
type ImportSummary struct {
	// Rows is the number of items given.
	Rows int
	// Added is the number of new stock rows created.
	Added int
	// Merged is the number of items whose identity already existed (in the
	// store, or earlier in the same import) and whose quantity was added to
	// that row. With replace only duplicates within the items count here.
	Merged int
	// Kept is the number of rows that a replacing import found already in
	// the store and set to the items' quantity.
	Kept int
	// Removed is the number of rows that a replacing import took out
	// because the items do not have them.
	Removed int
	// Units is the total number of parts added (negative if a replacing
	// import lowered the total).
	Units int
}

// Store is the persistent inventory. Package drawerfit/store implements it
// on SQLite. Errors caused by the caller are fault errors: fault.NotFound
// for an unknown row id, fault.Invalid for an invalid item or empty reason,
// fault.Conflict for a change the stored state does not allow.
type Store interface {
	// List returns the rows that f selects, ordered by kind, value and id.
	List(ctx context.Context, f Filter) ([]Item, error)
	// Get returns one row.
	Get(ctx context.Context, id int64) (Item, error)
	// Add stores an item (normalised and validated first). If a row with
	// the same identity exists, its quantity grows by item.Quantity and
	// merged is true. The change is written to the ledger with reason.
	Add(ctx context.Context, item Item, reason string) (stored Item, merged bool, err error)
	// SetQuantity sets a row's quantity, writing the change and reason
	// (required) to the ledger, and returns the row.
	SetQuantity(ctx context.Context, id int64, qty int, reason string) (Item, error)
	// Remove takes a row out of the inventory; its ledger entries stay,
	// closed by one that takes its quantity to zero.
	Remove(ctx context.Context, id int64) error
	// Import adds all items in one transaction, or none if any is invalid.
	// Items whose identity exists (in the store or earlier in items) add
	// their quantity to it. With replace, the inventory becomes exactly
	// items: rows not among them are removed and matching rows take the
	// file's quantity.
	Import(ctx context.Context, items []Item, replace bool) (ImportSummary, error)
	// History returns the ledger entries of one row, or of all rows when
	// id is 0, oldest first.
	History(ctx context.Context, id int64) ([]Movement, error)
	// Adjust applies several signed quantity changes in one transaction.
	// If any row would go below zero nothing changes and the error is a
	// fault.Conflict carrying a *Shortfall. An unknown row is
	// fault.NotFound.
	Adjust(ctx context.Context, deltas []Delta, reason string) error
}
