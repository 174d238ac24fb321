package cli

import (
	"drawerfit/report"
	"drawerfit/synth"
	"fmt"
	"io"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"drawerfit/fault"
	"drawerfit/production"
	"drawerfit/stock"
	"drawerfit/tolerance"
)

// reportOptions are the flags of `drawerfit report`.
type reportOptions struct {
	id     string // the saved design
	output string
	png    string
	filter string
	title  string
	notes  []string
	split  bool
	checks fitCheckOptions
}

// NewCmdReport builds `drawerfit report`; runF replaces the run (nil: the
// real one) so that tests can check the parsed options without writing.
func NewCmdReport(env *Env, runF func(*reportOptions) error) *cobra.Command {
	o := &reportOptions{}
	cmd := &cobra.Command{
		Use:   "report ID -o FILE.html [--png DIR]",
		Short: "Write the build sheet of a saved design as one self-contained HTML file",
		Long: `report writes the build sheet of a saved design (see fit --save): one
HTML file with everything inline, so that it opens offline and prints on A4
or Letter. It holds the job in one line (specification, boards, date, stock
database), the response plots (ideal target, nominal parts and, with --yield,
the Monte Carlo envelope, with the specification's limits), phase and group
delay, a schematic of every section with designators, values, what each
value is made of and the bin of every part, the parts list, the pick list by
bin, the warnings and cautions, and the SPICE netlist.

--yield adds the simulated yield with the stock's tolerances, what the
failures come from and the computed advice; --gbw checks an op-amp against
the rule of Op Amps for Everyone, section 16.8.4; --bias-resistor adds the
bias-current compensation resistors fitted from the stock. --note adds your
own remarks, printed as written. --png DIR also writes the plots as PNG files.

A design kept from a board plan carries several filters: report writes one
sheet for the board (its pick list for the whole batch first, then each
filter's sheet on its own pages); --split writes one file per filter
(FILE-1.html, FILE-2.html, ...) and --filter picks one.`,
		Example: `  # The build sheet of a saved design (ID: the id fit --save printed) for the club's bat-detector boards
  drawerfit report ID -o bat-detector.html

  # With the yield (and the forecast for the batch the design was saved for),
  # a 1 MHz op-amp, a note and PNG plots for the wiki
  drawerfit report ID -o bat-detector.html --yield --gbw 1M \
    --note "Fit C3 before the op-amp socket" --png plots/

  # Only the right-channel filter of a saved board plan
  drawerfit report ID -o right.html --filter "right channel"`,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) != 1 {
				return usageError{fmt.Errorf("report needs one saved design ID (got %d arguments)", len(args))}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			if strings.TrimSpace(o.output) == "" {
				return fault.Invalidf("report needs the output file: -o FILE.html")
			}
			if err := o.checks.validate(cmd.Flags()); err != nil {
				return err
			}
			for _, t := range append([]string{o.title}, o.notes...) {
				if p := stock.TextProblem(t, false); p != "" {
					return fault.Invalidf("--title or --note %s: %s", stock.Excerpt(t, 40), p)
				}
			}
			if !o.split {
				if err := checkOutputFile(o.output, o.checks.force); err != nil {
					return err
				}
			}
			o.id = args[0]
			if runF != nil {
				return runF(o)
			}
			return runReport(env, o, o.id)
		},
	}
	f := cmd.Flags()
	f.StringVarP(&o.output, "output", "o", "", "the HTML file to write (required)")
	f.StringVar(&o.png, "png", "", "also write the plots as PNG files into this directory")
	f.StringVar(&o.filter, "filter", "", "for a board plan: the filter to report, by number (1, 2, ...) or label")
	f.BoolVar(&o.split, "split", false, "for a board plan: one file per filter (FILE-1.html, ...) instead of one board sheet")
	f.StringVar(&o.title, "title", "", "title of the sheet (default: made from the specification)")
	f.StringArrayVar(&o.notes, "note", nil, "a remark to print on the sheet (repeatable)")
	addCheckFlags(f, &o.checks, "simulate building the design from parts drawn within their stock tolerances and show the yield")
	return cmd
}

// runReport loads saved design id and writes its sheets.
func runReport(env *Env, o *reportOptions, id string) error {
	db, d, err := env.openDesign(id, false)
	if err != nil {
		return err
	}
	defer db.Close()
	// The stock as it is now, for the bias resistors and the refit.
	items, err := db.List(env.Ctx, stock.Filter{})
	if err != nil {
		return err
	}
	source, _ := env.DefaultDBPath()
	opt, err := d.Settings.Options()
	if err != nil {
		return err
	}
	opt.Boards = max(d.Boards, 1)
	run := &fitRun{opts: opt, items: items, source: source, ctx: env.Ctx}

	picked, err := pickFilters(d, o.filter)
	if err != nil {
		return err
	}
	co := &o.checks
	op, err := co.opAmp()
	if err != nil {
		return err
	}
	var topt tolerance.Options
	if co.yield {
		if d.Boards > 1 {
			co.tol.boards = d.Boards
		}
		if topt, err = co.tol.tolOptions(); err != nil {
			return err
		}
	}
	// What changed in stock since the design was saved, as show reports it.
	// A sheet without these warnings would claim the stock still matches,
	// so a failure to check is an error, not an empty list.
	batch, err := production.NewBatch(d, max(d.Boards, 1))
	if err != nil {
		return err
	}
	check, err := production.DryRun(env.Ctx, db, batch)
	if err != nil {
		return fmt.Errorf("compare the design with the stock: %w", err)
	}
	stockWarnings := func(n int) []string {
		var out []string
		for _, is := range check.Issues {
			if is.Touches(d, n) {
				out = append(out, "stock: "+is.String())
			}
		}
		return out
	}
	board := len(picked) > 1 && !o.split
	var sheets []*report.Sheet
	var labels []string
	for _, n := range picked {
		f := d.Filters[n]
		c := f.Candidate
		t := topt
		if co.yield {
			t.Refit = refitFor(run, c)
		}
		cc, err := co.check(c, f.Spec, op, run)
		if err != nil {
			return fmt.Errorf("filter %d: %w", n+1, err)
		}
		if co.yield {
			if cc.yield, err = tolerance.Run(run.context(), c, f.Spec, t); err != nil {
				return fmt.Errorf("filter %d: yield analysis: %w", n+1, err)
			}
		}
		s := checkSheet(env, c, cc, d.Boards, source)
		s.Warnings = append(stockWarnings(n), s.Warnings...)
		s.DesignID = d.ID
		s.Title = sheetTitle(o.title, d.Name, f.Label)
		s.Notes = append(append([]string(nil), o.notes...), s.Notes...)
		if board {
			s.Title = fmt.Sprintf("Filter %d: %s", n+1, sheetTitle("", "", f.Label))
			sheets = append(sheets, s)
			labels = append(labels, filterLabel(n, f.Label, f.Spec))
			continue
		}
		path, prefix := o.output, ""
		if len(picked) > 1 {
			ext := filepath.Ext(o.output)
			path = strings.TrimSuffix(o.output, ext) + "-" + strconv.Itoa(n+1) + ext
			prefix = "filter-" + strconv.Itoa(n+1)
		}
		if err := writeSheetFiles(env, s, path, o.png, prefix, o.checks.force); err != nil {
			return err
		}
		what := "design " + d.ID
		if len(d.Filters) > 1 {
			what += fmt.Sprintf(", filter %d", n+1)
			if f.Label != "" {
				what += " (" + f.Label + ")"
			}
		}
		fmt.Fprintf(summaryOut(env, path), "%s: %s\n", path, what)
	}
	if board {
		batch, err := production.NewBatch(d, max(d.Boards, 1))
		if err != nil {
			return err
		}
		b := &report.Board{Title: sheetTitle(o.title, d.Name, ""), Boards: max(d.Boards, 1), Date: env.Now(),
			StockDB: source, DesignID: d.ID, Labels: labels, Sheets: sheets}
		if b.Title == "" {
			b.Title = "Board " + d.ID
		}
		for _, p := range batch.Picks {
			b.Picks = append(b.Picks, report.PickLine{Location: p.Part.Location, StockID: p.StockID,
				Value: partText(p.Part), Quantity: p.Quantity, Refs: p.Refs})
		}
		page, err := report.BoardHTML(b)
		if err != nil {
			return fmt.Errorf("build sheet: %w", err)
		}
		if err := env.writeOutputFile(o.output, o.checks.force, func(w io.Writer) error { _, err := w.Write(page); return err }); err != nil {
			return err
		}
		if o.output != "-" {
			fmt.Fprintln(env.Err, "build sheet written to "+o.output)
		}
		if o.png != "" {
			for i, s := range sheets {
				if err := writeSheetFiles(env, s, "", o.png, "filter-"+strconv.Itoa(picked[i]+1), o.checks.force); err != nil {
					return err
				}
			}
		}
		fmt.Fprintf(summaryOut(env, o.output), "%s: design %s, a board of %d filters\n", o.output, d.ID, len(sheets))
	}
	return nil
}

// filterLabel names a filter of a board for the board sheet's contents.
func filterLabel(n int, label string, _ synth.Spec) string {
	if strings.TrimSpace(label) == "" {
		return fmt.Sprintf("filter %d", n+1)
	}
	return label
}

// sheetTitle is the title of a filter's sheet: the --title, else the
// design's name, with the filter's label when it has one; empty means the
// title made from the specification.
func sheetTitle(title, name, label string) string {
	var parts []string
	for _, p := range []string{title, name} {
		if p = strings.TrimSpace(p); p != "" {
			parts = append(parts, p)
			break
		}
	}
	if label = strings.TrimSpace(label); label != "" {
		parts = append(parts, label)
	}
	return strings.Join(parts, ": ")
}

// pickFilters returns the indexes of the filters of d to report: all, or
// the one --filter names by number or label.
func pickFilters(d *production.Design, sel string) ([]int, error) {
	if len(d.Filters) == 0 {
		return nil, fault.Invalidf("design %s holds no filter", d.ID)
	}
	sel = strings.TrimSpace(sel)
	if sel == "" {
		out := make([]int, len(d.Filters))
		for i := range out {
			out[i] = i
		}
		return out, nil
	}
	if n, err := strconv.Atoi(sel); err == nil {
		if n < 1 || n > len(d.Filters) {
			return nil, fault.Invalidf("--filter %d: design %s has filters 1 to %d", n, d.ID, len(d.Filters))
		}
		return []int{n - 1}, nil
	}
	var labels []string
	for i, f := range d.Filters {
		if strings.EqualFold(strings.TrimSpace(f.Label), sel) {
			return []int{i}, nil
		}
		labels = append(labels, strconv.Quote(f.Label))
	}
	return nil, fault.NotFoundf("design %s has no filter labelled %q (labels: %s)", d.ID, sel, strings.Join(labels, ", "))
}

// summaryOut is where a line about a written file goes: standard output,
// unless the file itself went there ("-").
func summaryOut(env *Env, path string) io.Writer {
	if path == "-" {
		return env.Err
	}
	return env.Out
}
