package cli

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"drawerfit/fault"
	"drawerfit/production"
	"drawerfit/stock"
)

// buildOptions are the flags of `drawerfit build`.
type buildOptions struct {
	id     string // the saved design
	boards int
	dryRun bool
	csv    string
	bom    string
	force  bool
	json   bool
}

// NewCmdBuild builds `drawerfit build`; runF replaces the run (nil: the
// real one) so that tests can check the parsed options without drawing.
func NewCmdBuild(env *Env, runF func(*buildOptions) error) *cobra.Command {
	o := &buildOptions{}
	cmd := &cobra.Command{
		Use:   "build ID --boards N [--dry-run] [--csv FILE]",
		Short: "Draw the parts for a batch of boards of a saved design, with its pick list",
		Long: `build takes the parts for --boards boards of a saved design out of
stock in one transaction and records the build: every ledger entry it
writes says "build N: design ID × B boards" (see drawerfit stock history).
If any row lacks parts, nothing is drawn: the command exits 1 and lists the
shortfall per row. Two builds started at once are applied one after the
other, so together they never take a row below zero. A design whose rows
have been removed from the inventory or now hold another value is refused
the same way, naming the parts affected.

The pick list groups the parts by bin: for each stock row its value, the
quantity for the whole batch and the reference designators it fills on one
board (F2.R3 is R3 of the board's second filter; R3a and R3b are the two
parts of a pair). --csv writes it as a file. --dry-run prints the same
without drawing. drawerfit build undo returns a build's parts.

After the pick list comes the reorder list: the rows below their minimum
stock once the batch is drawn (with a dry run, once it would be), with what
to buy, as drawerfit stock reorder prints it.

--bom FILE writes a purchaser's bill of materials as CSV: one line per
distinct stock row with its designators, quantity per board and for the
batch, value with its unit, kind, tolerance, package, dielectric, voltage
rating, location, supplier-ref, unit price and extended price (prices in
the stock's one currency, no conversion; empty when unknown). Text cells
that a spreadsheet would run as a formula get a leading apostrophe, as in
stock export. With --dry-run it is the BOM of a saved design without
building it.`,
		Example: `  # A school's weather-station kit: pick list for 25 anemometer boards first
  drawerfit build ID --boards 25 --dry-run --csv picks-25.csv

  # Then draw the parts
  drawerfit build ID --boards 25

  # The bill of materials purchasing orders 100 boards from, nothing drawn
  drawerfit build q3vx7m --boards 100 --dry-run --bom bom-q3vx7m.csv

  # Undo build 4 (the parts go back to their rows)
  drawerfit build undo 4`,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) != 1 {
				return usageError{fmt.Errorf("build needs one design id (got %d arguments)", len(args))}
			}
			if !cmd.Flags().Changed("boards") {
				return usageError{fmt.Errorf("build needs --boards N, the number of boards in the batch")}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			o.id = args[0]
			if runF != nil {
				return runF(o)
			}
			return runBuild(env, o, o.id)
		},
	}
	f := cmd.Flags()
	f.IntVar(&o.boards, "boards", 0, "number of boards in the batch (required)")
	f.BoolVar(&o.dryRun, "dry-run", false, "print the pick list and any shortfall without drawing")
	f.StringVar(&o.csv, "csv", "", "also write the pick list to this CSV file (- for standard output)")
	f.StringVar(&o.bom, "bom", "", "also write a purchaser's bill of materials to this CSV file (- for standard output)")
	f.BoolVar(&o.force, "force", false, forceHelp)
	f.BoolVar(&o.json, "json", false, "print one JSON object")
	cmd.AddCommand(newBuildUndoCmd(env))
	return cmd
}

type jsonPick struct {
	StockID  int64    `json:"stock_id"`
	Location string   `json:"location"`
	Kind     string   `json:"kind"`
	Value    float64  `json:"value"`
	Part     string   `json:"part"`
	Quantity int      `json:"quantity"`
	Refs     []string `json:"refs"`
}

type jsonBuild struct {
	ID        *int64           `json:"build_id"`
	DesignID  string           `json:"design_id"`
	Boards    int              `json:"boards"`
	Drawn     bool             `json:"drawn"`
	Picks     []jsonPick       `json:"picks"`
	Shortfall []stock.ShortRow `json:"shortfall"`
	Issues    []jsonIssue      `json:"issues"`
	// Reorder lists the rows below their minimum once the batch is drawn.
	Reorder []jsonReorder `json:"reorder"`
	Error   string        `json:"error"`
}

func runBuild(env *Env, o *buildOptions, id string) error {
	if o.boards < 1 || o.boards > stock.MaxQuantity {
		return fault.Invalidf("--boards must be from 1 to %d, not %d", stock.MaxQuantity, o.boards)
	}
	// Refuse an output file that cannot be written before drawing parts.
	if err := checkOutputFile(o.csv, o.force); err != nil {
		return err
	}
	if err := checkOutputFile(o.bom, o.force); err != nil {
		return err
	}
	if o.csv != "" && o.csv == o.bom {
		return fault.Invalidf("--csv and --bom name the same file %s", o.csv)
	}
	if o.json && (o.csv == "-" || o.bom == "-") {
		return fault.Invalidf("--json and a CSV file on standard output (-) cannot share it; give the CSV a file name")
	}
	db, d, err := env.openDesign(id, !o.dryRun)
	if err != nil {
		return err
	}
	defer db.Close()
	batch, err := production.NewBatch(d, o.boards)
	if err != nil {
		return err
	}
	var res *production.BuildResult
	var buildErr error
	if o.dryRun {
		res, err = production.DryRun(env.Ctx, db, batch)
		if err != nil {
			return err
		}
	} else {
		res, buildErr = production.BuildBatch(env.Ctx, db, batch)
		if res == nil {
			return buildErr
		}
		if buildErr != nil && fault.KindOf(buildErr) != fault.Conflict {
			return buildErr
		}
	}
	refused := buildErr != nil || len(res.Shortfall) > 0 || blocking(res.Issues)
	if o.csv != "" {
		if err := env.writeOutputFile(o.csv, o.force, func(w io.Writer) error { return writePicksCSV(w, res.Batch) }); err != nil {
			return fmt.Errorf("write pick list: %w", err)
		}
	}
	// The rows as they are now: after the build when it drew, else before
	// it, with the batch's takes still to come.
	now, err := db.List(env.Ctx, stock.Filter{})
	if err != nil {
		return err
	}
	var reorder []production.ReorderLine
	if res.Drawn() {
		reorder = production.Reorder(now, nil)
	} else {
		reorder = production.Reorder(now, batch.Takes())
	}
	var bomLines []production.BOMLine
	if o.bom != "" {
		rows := map[int64]stock.Item{}
		for _, it := range now {
			rows[it.ID] = it
		}
		bomLines = batch.BOM(rows)
		if err := env.writeOutputFile(o.bom, o.force, func(w io.Writer) error { return production.WriteBOMCSV(w, bomLines) }); err != nil {
			return fmt.Errorf("write bill of materials: %w", err)
		}
	}
	if o.json {
		jb := jsonBuild{DesignID: d.ID, Boards: o.boards, Drawn: res.Drawn(), Picks: picksJSON(res.Batch), Issues: issuesJSON(res.Issues),
			Reorder: reorderJSON(reorder)}
		if res.Build != nil {
			bid := res.Build.ID
			jb.ID = &bid
		}
		if len(res.Shortfall) > 0 {
			jb.Shortfall = res.Shortfall
		}
		if buildErr != nil {
			jb.Error = buildErr.Error()
		}
		if len(jb.Issues) == 0 {
			jb.Issues = nil
		}
		if err := writeJSON(env.Out, jb); err != nil {
			return err
		}
	} else {
		// A file written to standard output ("-") keeps it to itself.
		textOut := env.Out
		if o.csv == "-" || o.bom == "-" {
			textOut = env.Err
		}
		printBuild(env, textOut, d, o, res, buildErr)
		if len(reorder) > 0 {
			fmt.Fprintf(textOut, "\nTo reorder once the batch is drawn (%s below minimum or short; stock reorder lists the same):\n", plural(len(reorder), "row"))
			printReorder(env, textOut, reorder, !res.Drawn())
		}
		if o.bom != "" && o.bom != "-" {
			fmt.Fprintf(textOut, "\nBill of materials written to %s: %s.\n", o.bom, bomSummary(bomLines, o.boards))
		}
	}
	if refused {
		msg := ""
		if o.json {
			msg = "" // the JSON says why
		} else if buildErr != nil && len(res.Shortfall) == 0 {
			msg = buildErr.Error()
		}
		return exitError{code: 1, msg: msg}
	}
	return nil
}

func blocking(is []production.Issue) bool {
	for _, i := range is {
		if i.Blocking() {
			return true
		}
	}
	return false
}

func picksJSON(b *production.Batch) []jsonPick {
	out := []jsonPick{}
	for _, p := range b.Picks {
		out = append(out, jsonPick{StockID: p.StockID, Location: p.Part.Location, Kind: p.Part.Kind.String(), Value: p.Part.Value,
			Part: partText(p.Part), Quantity: p.Quantity, Refs: p.Refs})
	}
	return out
}

// partText is a part as people read it without its bin: "4.7 kΩ 1% 0805".
func partText(it stock.Item) string {
	it.Location = ""
	return it.Label()
}

func printBuild(env *Env, w io.Writer, d *production.Design, o *buildOptions, res *production.BuildResult, buildErr error) {
	switch {
	case res.Drawn():
		b := res.Build
		fmt.Fprintf(w, "Build %d: design %s × %s — %s drawn from %s (ledger reason %q).\n",
			b.ID, d.ID, plural(b.Boards, "board"), plural(b.Drawn(), "part"), plural(len(res.Batch.Picks), "stock row"), production.BuildReason(b.ID, d.ID, b.Boards))
	case o.dryRun:
		fmt.Fprintf(w, "Dry run: design %s × %s — nothing drawn.\n", d.ID, plural(o.boards, "board"))
	default:
		fmt.Fprintf(w, "Refused: design %s × %s — nothing drawn.\n", d.ID, plural(o.boards, "board"))
	}
	fmt.Fprintf(w, "%s\n\nPick list:\n", d.Summary())
	g := newGrid("bin", "row", "part", "qty", "refs (one board)")
	g.right(1, 3).wrap(16, 4).wrap(14, 2).optional(dropLater, 1)
	last := "\x00"
	for _, p := range res.Batch.Picks {
		bin := p.Part.Location
		if bin == "" {
			bin = "-"
		}
		shown := bin
		if bin == last && isTerminal(w) {
			shown = "" // grouped by bin on a terminal; every line complete when piped
		}
		last = bin
		g.add(shown, strconv.FormatInt(p.StockID, 10), partText(p.Part), strconv.Itoa(p.Quantity), strings.Join(p.Refs, " "))
	}
	g.render(env, w)
	if len(res.Shortfall) > 0 {
		fmt.Fprintln(w, "\nNot enough stock (nothing was drawn):")
		sg := newGrid("row", "part", "needed", "on hand", "short")
		sg.right(0, 2, 3, 4)
		parts := map[int64]stock.Item{}
		for _, p := range res.Batch.Picks {
			parts[p.StockID] = p.Part
		}
		for _, r := range res.Shortfall {
			sg.add(strconv.FormatInt(r.StockID, 10), parts[r.StockID].Label(), strconv.Itoa(r.Needed), strconv.Itoa(r.OnHand),
				strconv.Itoa(r.Needed-r.OnHand))
		}
		sg.render(env, w)
		fmt.Fprintln(w, "Restock these rows, build fewer boards, or fit again (fit --boards N --suggest lists purchases).")
	}
	var notes []production.Issue
	for _, i := range res.Issues {
		if i.Kind != production.Short {
			notes = append(notes, i)
		}
	}
	if len(notes) > 0 {
		fmt.Fprintln(w, "\nStock changes since the design was saved:")
		for _, i := range notes {
			fmt.Fprintln(w, "  - "+i.String())
		}
	}
	if buildErr != nil && len(res.Shortfall) == 0 {
		var sf *stock.Shortfall
		if !errors.As(buildErr, &sf) {
			fmt.Fprintln(w, "\nThe build was refused: the design no longer matches the stock.")
		}
	}
}

// writePicksCSV writes the pick list with a header line.
func writePicksCSV(w io.Writer, b *production.Batch) error {
	cw := csv.NewWriter(w)
	if err := cw.Write([]string{"location", "stock_id", "kind", "value", "part", "quantity", "refs"}); err != nil {
		return err
	}
	g := stock.GuardCell // the one guard against spreadsheet formulas, as stock export uses
	for _, p := range b.Picks {
		if err := cw.Write([]string{g(p.Part.Location), strconv.FormatInt(p.StockID, 10), p.Part.Kind.String(),
			g(p.Part.ValueText()), g(partText(p.Part)), strconv.Itoa(p.Quantity), g(strings.Join(p.Refs, " "))}); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// ---- build undo ----

type undoOptions struct {
	json bool
}

func newBuildUndoCmd(env *Env) *cobra.Command {
	o := &undoOptions{}
	cmd := &cobra.Command{
		Use:   "undo BUILD_ID",
		Short: "Return the parts of a build to stock (once)",
		Long: `undo puts the parts a build drew back into their rows in one
transaction, writing ledger entries "undo build N", and marks the build
undone; a second undo of the same build is refused. If a row has been
removed from the inventory since, its parts go to the row that holds the
same part now (the part added back with stock add); if there is none,
nothing is returned.`,
		Example: `  # The bat-detector batch was called off: return build 4's parts
  drawerfit build undo 4`,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) != 1 {
				return usageError{fmt.Errorf("build undo needs one build id (got %d arguments)", len(args))}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			id, err := strconv.ParseInt(strings.TrimPrefix(strings.TrimSpace(args[0]), "#"), 10, 64)
			if err != nil || id <= 0 {
				return fault.Invalidf("build id %q is not a positive whole number (see drawerfit builds)", args[0])
			}
			db, err := env.openStore()
			if err != nil {
				return err
			}
			defer db.Close()
			b, err := db.UndoBuild(env.Ctx, id)
			if err != nil {
				return err
			}
			returned := 0
			for _, m := range b.Moves {
				if m.Delta > 0 {
					returned += m.Delta
				}
			}
			if o.json {
				return writeJSON(env.Out, jsonUndo{BuildID: b.ID, DesignID: b.DesignID, Boards: b.Boards, Undone: true, Returned: returned})
			}
			fmt.Fprintf(env.Out, "Build %d undone: %d parts returned to their rows (ledger reason %q).\n", b.ID, returned, production.UndoReason(b.ID))
			return nil
		},
	}
	cmd.Flags().BoolVar(&o.json, "json", false, "print one JSON object")
	return cmd
}

// jsonUndo is build undo --json.
type jsonUndo struct {
	BuildID  int64  `json:"build_id"`
	DesignID string `json:"design_id"`
	Boards   int    `json:"boards"`
	Undone   bool   `json:"undone"`
	// Returned is the number of parts put back into their rows.
	Returned int `json:"returned"`
}
