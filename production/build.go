package production

import (
	"context"
	"errors"
	"fmt"
	"sort"
	"strings"
	"time"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/stock"
	"drawerfit/synth"
)

// Store keeps saved designs and builds next to the stock rows they use.
// Package drawerfit/store implements it on SQLite. Errors caused by the
// caller are fault errors: fault.NotFound for an unknown id, fault.Conflict
// for a change the stored state does not allow.
type Store interface {
	// List returns the stock rows in the inventory (as stock.Store.List).
	List(ctx context.Context, f stock.Filter) ([]stock.Item, error)
	// SaveDesigns stores the designs in one transaction, giving each a new
	// short id (collision-checked) and its creation time.
	SaveDesigns(ctx context.Context, ds []*Design) error
	// Design returns the saved design with the id (any letter case).
	Design(ctx context.Context, id string) (*Design, error)
	// Designs lists the saved designs, newest first.
	Designs(ctx context.Context) ([]DesignInfo, error)
	// RemoveDesign takes a design out of the list; its builds keep
	// referring to it.
	RemoveDesign(ctx context.Context, id string) error
	// Draw records a build and takes its parts from stock in one
	// transaction (see DrawRequest).
	Draw(ctx context.Context, req DrawRequest) (*Build, error)
	// Builds lists the builds, newest first.
	Builds(ctx context.Context) ([]*Build, error)
	// UndoBuild returns a build's parts to stock, once, in one transaction.
	UndoBuild(ctx context.Context, id int64) (*Build, error)
}

// DesignInfo is one line of the saved-design list.
type DesignInfo struct {
	ID          string
	Name        string
	Summary     string
	Filters     int
	Boards      int
	WorstError  float64
	PartCount   int
	UniqueParts int
	MeetsSpec   bool
	Created     time.Time
	// Builds counts the builds of the design that were not undone.
	Builds int
}

// DrawRequest asks the store to build a batch.
type DrawRequest struct {
	DesignID string
	Boards   int
	// Deltas take the parts out of stock (negative changes).
	Deltas []stock.Delta
	// Check, when set, is called inside the transaction with the current
	// rows the deltas touch (rows no longer in the inventory absent), before
	// anything is written; an error refuses the build.
	Check func(rows map[int64]stock.Item) error
}

// Build is a recorded batch.
type Build struct {
	ID       int64
	DesignID string
	// DesignName is the design's summary line at the time of listing.
	DesignName string
	Boards     int
	At         time.Time
	// UndoneAt is when the parts went back; zero while the build stands.
	UndoneAt time.Time
	// Moves are the ledger entries of the build (negative deltas) and, once
	// undone, of the undo (positive).
	Moves []stock.Movement
}

// Drawn returns the number of parts the build took.
func (b *Build) Drawn() int {
	n := 0
	for _, m := range b.Moves {
		if m.Delta < 0 {
			n -= m.Delta
		}
	}
	return n
}

// BuildReason is the ledger reason of a build's movements.
func BuildReason(id int64, designID string, boards int) string {
	return fmt.Sprintf("build %d: design %s × %d boards", id, designID, boards)
}

// UndoReason is the ledger reason of an undo's movements.
func UndoReason(id int64) string { return fmt.Sprintf("undo build %d", id) }

// Pick is one line of a pick list: what to take from one stock row.
type Pick struct {
	StockID int64
	// Part is the row as the design saved it (its Quantity unused);
	// Location is the row's current one when the row still exists.
	Part stock.Item
	// Quantity is the number of parts for the whole batch.
	Quantity int
	// Refs are the reference designators it fills on one board.
	Refs []string
}

// Batch is what building a number of boards of a design takes.
type Batch struct {
	Design *Design
	Boards int
	// Picks are grouped by location, then by stock id.
	Picks []Pick
}

// NewBatch works out the pick list of boards boards of d. Reference
// designators are the candidate's (R3; a pair's parts R3a and R3b, as
// report.PartRefs names them), prefixed "F2." with the filter's number on
// a board of several filters. Errors: fault.Invalid for boards < 1.
func NewBatch(d *Design, boards int) (*Batch, error) {
	if boards < 1 {
		return nil, fault.InvalidFieldf("Boards", "the number of boards must be at least 1, not %d", boards)
	}
	if boards > stock.MaxQuantity {
		return nil, fault.InvalidFieldf("Boards", "the number of boards must be at most %d (the most a stock row can hold)", stock.MaxQuantity)
	}
	b := &Batch{Design: d, Boards: boards}
	idx := map[int64]int{}
	for fi, f := range d.Filters {
		prefix := d.refPrefix(fi)
		for _, s := range f.Candidate.Sections {
			for _, comp := range s.Components {
				for pi, p := range comp.Parts {
					ref := comp.Ref
					if len(comp.Parts) > 1 {
						ref += string(rune('a' + pi))
					}
					i, ok := idx[p.StockID]
					if !ok {
						i = len(b.Picks)
						idx[p.StockID] = i
						b.Picks = append(b.Picks, Pick{StockID: p.StockID, Part: partItem(comp.Kind, p)})
					}
					b.Picks[i].Quantity += boards
					b.Picks[i].Refs = append(b.Picks[i].Refs, prefix+ref)
				}
			}
		}
	}
	// Amplifier packages: per board, shared by the filters (BoardAmps);
	// the designators are the board's channels.
	for _, ba := range d.BoardAmps() {
		b.Picks = append(b.Picks, Pick{StockID: ba.Amp.StockID, Part: ampItem(ba.Amp), Quantity: ba.Packages * boards,
			Refs: append([]string(nil), ba.Refs...)})
	}
	b.sort()
	return b, nil
}

func (b *Batch) sort() {
	sort.SliceStable(b.Picks, func(x, y int) bool {
		lx, ly := strings.ToLower(b.Picks[x].Part.Location), strings.ToLower(b.Picks[y].Part.Location)
		if lx != ly {
			return lx < ly
		}
		return b.Picks[x].StockID < b.Picks[y].StockID
	})
}

func partItem(k synth.PartKind, p optimize.Part) stock.Item {
	kind := stock.Resistor
	if k == synth.Capacitor {
		kind = stock.Capacitor
	}
	return stock.Item{ID: p.StockID, Kind: kind, Value: p.Value, Tolerance: p.Tolerance, Package: p.Package,
		Dielectric: p.Dielectric, Location: p.Location}
}

// Deltas are the stock changes that draw the batch.
func (b *Batch) Deltas() []stock.Delta {
	out := make([]stock.Delta, 0, len(b.Picks))
	for _, p := range b.Picks {
		out = append(out, stock.Delta{StockID: p.StockID, Change: -p.Quantity})
	}
	return out
}

// IssueKind says what became of a stock row a saved design uses.
type IssueKind uint8

const (
	// Missing: the row is no longer in the inventory.
	Missing IssueKind = iota
	// Changed: the row's value or dielectric differs from the saved part.
	Changed
	// Altered: the row's tolerance or package differs (the design still
	// works, its spread does not match the saved figures).
	Altered
	// Moved: the row's location differs; the pick list shows the new one.
	Moved
	// Short: the row holds fewer parts than the batch needs.
	Short
	// Readded: the row was removed and a row of the same identity (kind,
	// value, tolerance, package, dielectric, location) added since; the
	// pick list uses the new row. Not blocking.
	Readded
)

func (k IssueKind) String() string {
	return [...]string{"missing", "changed", "altered", "moved", "short", "readded"}[k]
}

// Issue is one problem of a saved design with the stock as it is now.
type Issue struct {
	Kind    IssueKind
	StockID int64
	// Saved is the part as the design saved it.
	Saved stock.Item
	// Now is the row as it is (zero for a missing row).
	Now stock.Item
	// Refs are the designators on one board that the row fills.
	Refs []string
	// Needed and OnHand are the batch's need and the row's quantity.
	Needed, OnHand int
	// Substitute is a row in the inventory with the same value,
	// tolerance, dielectric and package as a missing or changed one (0:
	// none). For Readded it is the row now used.
	Substitute int64
}

// refPrefix is what the designators of filter fi (0-based) start with on
// the design's board: "F2." on a board of several filters, nothing for a
// single filter.
func (d *Design) refPrefix(fi int) string {
	if len(d.Filters) > 1 {
		return fmt.Sprintf("F%d.", fi+1)
	}
	return ""
}

// Touches reports whether the issue concerns filter fi (0-based) of d: a
// row the issue names fills one of that filter's positions. On a design of
// one filter every issue touches it.
func (i Issue) Touches(d *Design, fi int) bool {
	prefix := d.refPrefix(fi)
	if prefix == "" {
		return true
	}
	for _, r := range i.Refs {
		if strings.HasPrefix(r, prefix) {
			return true
		}
	}
	return false
}

// Blocking reports whether the issue stops a build: a missing or changed
// row, or a short one.
func (i Issue) Blocking() bool { return i.Kind == Missing || i.Kind == Changed || i.Kind == Short }

// String says what the issue is in one sentence.
func (i Issue) String() string {
	refs := strings.Join(i.Refs, ", ")
	switch i.Kind {
	case Missing:
		s := fmt.Sprintf("row %d (%s) is no longer in stock; it fills %s", i.StockID, i.Saved.Label(), refs)
		if i.Substitute != 0 {
			s += fmt.Sprintf("; row %d holds the same part", i.Substitute)
		}
		return s
	case Changed:
		s := fmt.Sprintf("row %d is now %s, the design used %s; it fills %s", i.StockID, i.Now.Label(), i.Saved.Label(), refs)
		if i.Substitute != 0 {
			s += fmt.Sprintf("; row %d holds the saved part", i.Substitute)
		}
		return s
	case Altered:
		return fmt.Sprintf("row %d is now %s (saved as %s): %s work, but their tolerance figures differ", i.StockID, i.Now.Label(), i.Saved.Label(), refs)
	case Readded:
		return fmt.Sprintf("row %d (%s) was removed and the same part added again as row %d; the pick list uses row %d (%s)",
			i.StockID, i.Saved.Label(), i.Substitute, i.Substitute, refs)
	case Moved:
		return fmt.Sprintf("row %d moved from %s to %s (%s)", i.StockID, orDash(i.Saved.Location), orDash(i.Now.Location), refs)
	}
	return fmt.Sprintf("row %d (%s) needs %d for the batch, has %d (%s)", i.StockID, i.Saved.Label(), i.Needed, i.OnHand, refs)
}

func orDash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

// Check compares the batch with the current stock rows (rows: the
// inventory by id; every row not in it counts as missing; all: the whole
// inventory, for substitutes, may be nil) and returns its issues in pick
// order. It moves picks to the rows' current locations.
func (b *Batch) Check(rows map[int64]stock.Item, all []stock.Item) []Issue {
	var out []Issue
	for i := range b.Picks {
		p := &b.Picks[i]
		now, ok := rows[p.StockID]
		base := Issue{StockID: p.StockID, Saved: p.Part, Now: now, Refs: p.Refs, Needed: p.Quantity, OnHand: now.Quantity}
		if !ok {
			base.Kind = Missing
			base.Substitute = substitute(p.Part, all)
			out = append(out, base)
			continue
		}
		if now.Kind != p.Part.Kind || now.Value != p.Part.Value || !strings.EqualFold(now.Dielectric, p.Part.Dielectric) {
			base.Kind = Changed
			base.Substitute = substitute(p.Part, all)
			out = append(out, base)
			continue
		}
		if now.Tolerance != p.Part.Tolerance || !strings.EqualFold(now.Package, p.Part.Package) {
			base.Kind = Altered
			out = append(out, base)
		}
		if !strings.EqualFold(now.Location, p.Part.Location) {
			base.Kind = Moved
			out = append(out, base)
			p.Part.Location = now.Location
		}
		if now.Quantity < p.Quantity {
			base.Kind = Short
			out = append(out, base)
		}
	}
	b.sort()
	return out
}

// Rebind points every pick whose row is no longer in the inventory (all:
// the whole inventory) at the row of the same identity, when one was
// added since (a recount: remove, then add the same part again), and
// returns a Readded issue for each. Call it before Deltas and Check: a
// saved design keeps finding its parts by identity, not only by row id.
func (b *Batch) Rebind(all []stock.Item) []Issue {
	live := map[int64]bool{}
	byIdentity := map[stock.Identity]stock.Item{}
	for _, it := range all {
		live[it.ID] = true
		byIdentity[it.Identity()] = it
	}
	var out []Issue
	merged := map[int64]int{} // new row id -> index in b.Picks
	var keep []Pick
	for _, p := range b.Picks {
		if !live[p.StockID] {
			if now, ok := byIdentity[p.Part.Identity()]; ok {
				out = append(out, Issue{Kind: Readded, StockID: p.StockID, Saved: p.Part, Now: now, Refs: p.Refs,
					Needed: p.Quantity, OnHand: now.Quantity, Substitute: now.ID})
				p.StockID = now.ID
				p.Part.ID = now.ID
			}
		}
		// Two saved rows can now be one (both re-added as the same row).
		if i, ok := merged[p.StockID]; ok {
			keep[i].Quantity += p.Quantity
			keep[i].Refs = append(keep[i].Refs, p.Refs...)
			continue
		}
		merged[p.StockID] = len(keep)
		keep = append(keep, p)
	}
	b.Picks = keep
	b.sort()
	return out
}

// substitute finds a row holding the same part as saved.
func substitute(saved stock.Item, all []stock.Item) int64 {
	for _, it := range all {
		if it.ID != saved.ID && it.Kind == saved.Kind && it.Value == saved.Value && it.Tolerance == saved.Tolerance &&
			strings.EqualFold(it.Dielectric, saved.Dielectric) && strings.EqualFold(it.Package, saved.Package) && it.Quantity > 0 {
			return it.ID
		}
	}
	return 0
}

// Shortfall lists the short rows among issues.
func Shortfall(issues []Issue) []stock.ShortRow {
	var out []stock.ShortRow
	for _, i := range issues {
		if i.Kind == Short {
			out = append(out, stock.ShortRow{StockID: i.StockID, Needed: i.Needed, OnHand: i.OnHand})
		}
	}
	return out
}

// BuildResult is the outcome of BuildBatch or DryRun.
type BuildResult struct {
	Batch *Batch
	// Build is the recorded build; nil for a dry run or a refusal.
	Build *Build
	// Issues are the design's problems with the stock (checked inside the
	// build's transaction).
	Issues []Issue
	// Shortfall lists the rows that lack parts (the build was refused).
	Shortfall []stock.ShortRow
}

// Drawn reports whether parts were taken.
func (r *BuildResult) Drawn() bool { return r.Build != nil }

// DryRun checks a batch against the stock without drawing anything.
func DryRun(ctx context.Context, st Store, b *Batch) (*BuildResult, error) {
	all, err := st.List(ctx, stock.Filter{})
	if err != nil {
		return nil, err
	}
	rows := map[int64]stock.Item{}
	for _, it := range all {
		rows[it.ID] = it
	}
	readded := b.Rebind(all)
	issues := append(readded, b.Check(rows, all)...)
	return &BuildResult{Batch: b, Issues: issues, Shortfall: Shortfall(issues)}, nil
}

// BuildBatch draws the batch from stock and records it, all in one
// transaction: if a row the design uses is missing or changed, or any row
// lacks parts, nothing is drawn and the error is a fault.Conflict (for a
// shortfall carrying a *stock.Shortfall, as stock.Store.Adjust does); the
// result then holds the issues and the shortfall.
func BuildBatch(ctx context.Context, st Store, b *Batch) (*BuildResult, error) {
	all, err := st.List(ctx, stock.Filter{})
	if err != nil {
		return nil, err
	}
	res := &BuildResult{Batch: b}
	readded := b.Rebind(all)
	req := DrawRequest{DesignID: b.Design.ID, Boards: b.Boards, Deltas: b.Deltas(),
		Check: func(rows map[int64]stock.Item) error {
			res.Issues = append(append([]Issue(nil), readded...), b.Check(rows, all)...)
			var bad []string
			for _, i := range res.Issues {
				if i.Kind == Missing || i.Kind == Changed {
					bad = append(bad, i.String())
				}
			}
			if len(bad) > 0 {
				return fault.Conflictf("design %s no longer matches the stock: %s (fit and save the design again, or restore the rows)",
					b.Design.ID, strings.Join(bad, "; "))
			}
			return nil
		}}
	build, err := st.Draw(ctx, req)
	if err != nil {
		var sf *stock.Shortfall
		if errors.As(err, &sf) {
			res.Shortfall = sf.Rows
			// The check ran against the rows of the refused transaction;
			// make the issues agree with the store's shortfall.
			for i := range res.Issues {
				for _, r := range sf.Rows {
					if res.Issues[i].StockID == r.StockID && res.Issues[i].Kind == Short {
						res.Issues[i].OnHand = r.OnHand
					}
				}
			}
		}
		return res, err
	}
	res.Build = build
	return res, nil
}
