package cli

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"

	"github.com/spf13/cobra"

	"drawerfit/fault"
	"drawerfit/production"
	"drawerfit/stock"
)

// ---- stock reorder ----

type stockReorderOptions struct {
	For    string
	Boards int
	CSV    string
	Force  bool
	JSON   bool
}

func newStockReorderCmd(env *Env) *cobra.Command {
	var o stockReorderOptions
	cmd := &cobra.Command{
		Use:   "reorder [--for DESIGN --boards N] [--csv FILE] [--json]",
		Short: "List the rows below their minimum stock, now or after a batch, with what to buy",
		Long: `reorder lists the stock rows whose quantity is below their minimum (set it
with stock set ID --min N, or the min column of a CSV file). With --for and
--boards it lists what a batch of a saved design (a single filter or a
board) would leave below minimum, and every row the batch would take below
zero even without a minimum: the same list stock reorder prints after that
build.

To buy is what brings a row back to its minimum (or covers the batch),
rounded up to whole packs when the row has a pack size (stock set ID --pack
100). Cost is that quantity at the row's unit price, in the stock's one
currency (no conversion); rows without a price are counted, not guessed.

--json prints an array of objects with the keys stock_id, part, kind,
location, supplier_ref, quantity (on hand now), needed (what the batch
takes; 0 without --for), after, min, pack, to_buy, unit_price and cost
(decimal strings, null when unknown). --csv FILE writes the same columns
for a spreadsheet ("-" is standard output; an existing file needs --force).`,
		Example: `  # What has run low in the drawer?
  drawerfit stock reorder

  # Before building 50 bat-detector boards (design k4w9zp): what to order,
  # as a sheet for purchasing
  drawerfit stock reorder --for k4w9zp --boards 50 --csv order-k4w9zp.csv`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if cmd.Flags().Changed("boards") != (o.For != "") {
				return usageError{fmt.Errorf("--for DESIGN and --boards N go together")}
			}
			return runStockReorder(env, o)
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.For, "for", "", "a saved design (see drawerfit designs) to build")
	f.IntVar(&o.Boards, "boards", 0, "the number of boards in that batch")
	f.StringVar(&o.CSV, "csv", "", "also write the list to this CSV file (- for standard output)")
	f.BoolVar(&o.Force, "force", false, forceHelp)
	f.BoolVar(&o.JSON, "json", false, "print JSON")
	return cmd
}

func runStockReorder(env *Env, o stockReorderOptions) error {
	if o.For != "" && o.Boards < 1 {
		return fault.Invalidf("--boards must be at least 1, not %d", o.Boards)
	}
	if err := checkOutputFile(o.CSV, o.Force); err != nil {
		return err
	}
	db, err := env.openStoreForReading()
	if err != nil {
		return err
	}
	defer db.Close()
	var take map[int64]int
	if o.For != "" {
		d, err := db.Design(env.Ctx, o.For)
		if err != nil {
			return err
		}
		b, err := production.NewBatch(d, o.Boards)
		if err != nil {
			return err
		}
		take = b.Takes()
	}
	items, err := db.List(env.Ctx, stock.Filter{})
	if err != nil {
		return err
	}
	lines := production.Reorder(items, take)
	if o.CSV != "" {
		if err := env.writeOutputFile(o.CSV, o.Force, func(w io.Writer) error { return writeReorderCSV(w, lines) }); err != nil {
			return fmt.Errorf("write reorder list: %w", err)
		}
		if o.CSV == "-" {
			return nil
		}
	}
	if o.JSON {
		return writeJSON(env.Out, reorderJSON(lines))
	}
	what := "below their minimum"
	if o.For != "" {
		what = fmt.Sprintf("below their minimum after %d boards of design %s", o.Boards, o.For)
	}
	if len(lines) == 0 {
		fmt.Fprintf(env.Out, "No rows %s.\n", what)
		return nil
	}
	fmt.Fprintf(env.Out, "%s %s:\n", plural(len(lines), "row"), what)
	printReorder(env, env.Out, lines, o.For != "")
	return nil
}

// printReorder writes the reorder lines as a table with the total cost.
func printReorder(env *Env, w io.Writer, lines []production.ReorderLine, batch bool) {
	head := []string{"row", "part", "bin", "on hand"}
	if batch {
		head = append(head, "batch takes", "after")
	}
	head = append(head, "min", "pack", "to buy", "unit price", "cost", "supplier-ref")
	g := newGrid(head...)
	n := len(head)
	g.right(0, 3, n-6, n-5, n-4, n-3, n-2)
	if batch {
		g.right(4, 5)
	}
	for _, l := range lines {
		r := l.Row
		cells := []string{strconv.FormatInt(r.ID, 10), partText(r), orDash(r.Location), strconv.Itoa(r.Quantity)}
		if batch {
			cells = append(cells, strconv.Itoa(l.Needed), strconv.Itoa(l.After))
		}
		cells = append(cells, countText(r.Min), countText(r.Pack), strconv.Itoa(l.ToBuy), orDash(r.Price.String()),
			orDash(l.Cost.String()), r.SupplierRef)
		g.add(cells...)
	}
	g.render(env, w)
	priced, unpriced := production.ReorderCost(lines)
	total := "Total " + priced.String()
	if unpriced > 0 {
		total += fmt.Sprintf(" for the priced rows; %s without a price", plural(unpriced, "row"))
	}
	fmt.Fprintln(w, total+" (the stock's currency, no conversion).")
}

// jsonReorder is one line of stock reorder --json and build's reorder list.
type jsonReorder struct {
	StockID     int64   `json:"stock_id"`
	Part        string  `json:"part"`
	Kind        string  `json:"kind"`
	Location    string  `json:"location"`
	SupplierRef string  `json:"supplier_ref"`
	Quantity    int     `json:"quantity"`
	Needed      int     `json:"needed"`
	After       int     `json:"after"`
	Min         int     `json:"min"`
	Pack        *int    `json:"pack"`
	ToBuy       int     `json:"to_buy"`
	UnitPrice   *string `json:"unit_price"`
	Cost        *string `json:"cost"`
}

func reorderJSON(lines []production.ReorderLine) []jsonReorder {
	out := []jsonReorder{}
	for _, l := range lines {
		r := l.Row
		out = append(out, jsonReorder{StockID: r.ID, Part: partText(r), Kind: r.Kind.String(), Location: r.Location,
			SupplierRef: r.SupplierRef, Quantity: r.Quantity, Needed: l.Needed, After: l.After, Min: r.Min,
			Pack: nonZero(r.Pack), ToBuy: l.ToBuy, UnitPrice: moneyJSON(r.Price), Cost: moneyJSON(l.Cost)})
	}
	return out
}

// writeReorderCSV writes the reorder lines with the JSON keys as header;
// text cells go through stock.GuardCell.
func writeReorderCSV(w io.Writer, lines []production.ReorderLine) error {
	cw := csv.NewWriter(w)
	head := []string{"stock_id", "part", "kind", "location", "supplier_ref", "quantity", "needed", "after", "min", "pack",
		"to_buy", "unit_price", "cost"}
	if err := cw.Write(head); err != nil {
		return err
	}
	g := stock.GuardCell
	for _, l := range lines {
		r := l.Row
		rec := []string{strconv.FormatInt(r.ID, 10), g(partText(r)), r.Kind.String(), g(r.Location), g(r.SupplierRef),
			strconv.Itoa(r.Quantity), strconv.Itoa(l.Needed), strconv.Itoa(l.After), strconv.Itoa(r.Min), countText(r.Pack),
			strconv.Itoa(l.ToBuy), r.Price.String(), l.Cost.String()}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// bomSummary says what the BOM file holds and what the batch costs.
func bomSummary(lines []production.BOMLine, boards int) string {
	priced, unpriced := production.BOMTotal(lines)
	s := fmt.Sprintf("%s for %d boards, parts cost %s", plural(len(lines), "line"), boards, priced)
	if unpriced > 0 {
		s += fmt.Sprintf(" for the priced lines (%s without a price)", plural(unpriced, "line"))
	}
	return s
}
