package production

import (
	"encoding/csv"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"

	"drawerfit/stock"
)

// BOMLine is one line of a purchaser's bill of materials: one distinct
// stock row of a batch.
type BOMLine struct {
	StockID int64
	// Part is the stock row as it is now (price, rating, supplier-ref
	// included); when the row is no longer in the inventory it is the part
	// as the design saved it, without those, and Current is false.
	Part    stock.Item
	Current bool
	// Refs are the designators the row fills on one board.
	Refs []string
	// PerBoard and Batch are the quantities for one board and the batch.
	PerBoard, Batch int
	// Extended is Batch at the row's unit price; unknown without a price.
	Extended stock.Money
}

// BOM lists the batch's parts one line per distinct stock row, with the
// rows' current attributes from rows (by id), ordered by kind, value and
// id.
func (b *Batch) BOM(rows map[int64]stock.Item) []BOMLine {
	out := make([]BOMLine, 0, len(b.Picks))
	for _, p := range b.Picks {
		l := BOMLine{StockID: p.StockID, Part: p.Part, Refs: append([]string(nil), p.Refs...),
			PerBoard: p.Quantity / b.Boards, Batch: p.Quantity}
		if r, ok := rows[p.StockID]; ok {
			l.Part, l.Current = r, true
		}
		if c, ok := l.Part.Price.Times(l.Batch); ok {
			l.Extended = c
		}
		out = append(out, l)
	}
	sort.SliceStable(out, func(i, j int) bool {
		a, c := out[i].Part, out[j].Part
		if a.Kind != c.Kind {
			return a.Kind < c.Kind
		}
		if a.Value != c.Value {
			return a.Value < c.Value
		}
		return out[i].StockID < out[j].StockID
	})
	return out
}

// BOMColumns are the columns WriteBOMCSV writes, in order.
var BOMColumns = []string{"stock_id", "designators", "qty_per_board", "qty_batch", "value", "kind", "tolerance",
	"package", "dielectric", "voltage", "location", "supplier_ref", "unit_price", "extended_price"}

// WriteBOMCSV writes the lines as CSV with a header (BOMColumns): values
// with their unit (4.7 kΩ, 2.2 nF), prices as exact decimals in the
// stock's one currency (empty when unknown; no conversion). Every text cell
// goes through stock.GuardCell, the guard stock export uses, so that a
// spreadsheet runs no formula from a designator, location or supplier-ref.
func WriteBOMCSV(w io.Writer, lines []BOMLine) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(BOMColumns); err != nil {
		return fmt.Errorf("write BOM: %w", err)
	}
	g := stock.GuardCell
	for _, l := range lines {
		p := l.Part
		rec := []string{
			strconv.FormatInt(l.StockID, 10),
			g(strings.Join(l.Refs, " ")),
			strconv.Itoa(l.PerBoard),
			strconv.Itoa(l.Batch),
			g(partValue(p)),
			g(p.Kind.String()),
			g(stock.FormatTolerance(p.Tolerance)),
			g(p.Package),
			g(p.Dielectric),
			g(stock.FormatVoltage(p.Voltage)),
			g(p.Location),
			g(p.SupplierRef),
			p.Price.String(),
			l.Extended.String(),
		}
		if err := cw.Write(rec); err != nil {
			return fmt.Errorf("write BOM: %w", err)
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("write BOM: %w", err)
	}
	return nil
}

// partValue is the value with its unit for a passive, or the row's label
// for a part valued otherwise.
func partValue(p stock.Item) string {
	if p.Kind == stock.Resistor || p.Kind == stock.Capacitor {
		return stock.FormatValue(p.Value, p.Kind)
	}
	p.Location = ""
	return p.Label()
}

// BOMTotal is the batch's cost over the priced lines and how many lines
// have no price.
func BOMTotal(lines []BOMLine) (priced stock.Money, unpriced int) {
	var t stock.Tally
	for _, l := range lines {
		t.Add(l.Part.Price, l.Batch)
	}
	p, ok := t.Partial()
	if !ok {
		p = stock.Money{}
	}
	return p, t.Missing()
}
