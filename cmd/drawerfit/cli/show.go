package cli

import (
	"fmt"
	"io"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"drawerfit/optimize"
	"drawerfit/production"
	"drawerfit/report"
	"drawerfit/respplot"
	"drawerfit/stock"
)

// showOptions are the flags of `drawerfit show`.
type showOptions struct {
	id   string // the saved design
	json bool
}

// NewCmdShow builds `drawerfit show`; runF replaces the run (nil: the real
// one).
func NewCmdShow(env *Env, runF func(*showOptions) error) *cobra.Command {
	o := &showOptions{}
	cmd := &cobra.Command{
		Use:   "show ID",
		Short: "Show a saved design in full, and what has changed in stock since",
		Long: `show prints a saved design: for each filter its sections, components,
parts and bins, and a sketch of its response against the ideal and the
specification; then it checks the stock rows the design uses as they are
now, for the batch size it was fitted for. A row that is no longer in the
inventory, holds another value or dielectric, has another tolerance or
package, has moved to another bin, or lacks parts for the batch is named
with the reference designators it fills.

With --json the output is the fit's candidate object with the design's id
(a board of several filters: the plan fit's board object), the
specification, and stock_issues.`,
		Example: `  # A beekeeper's hive-noise monitor: check saved design ID (as fit --save printed it) before a batch
  drawerfit show ID

  # The same for a script
  drawerfit show ID --json`,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) != 1 {
				return usageError{fmt.Errorf("show needs one design id (got %d arguments)", len(args))}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			o.id = args[0]
			if runF != nil {
				return runF(o)
			}
			return runShow(env, o, o.id)
		},
	}
	cmd.Flags().BoolVar(&o.json, "json", false, "print one JSON object")
	return cmd
}

type jsonIssue struct {
	Kind       string   `json:"kind"`
	StockID    int64    `json:"stock_id"`
	Refs       []string `json:"refs"`
	Needed     int      `json:"needed"`
	OnHand     int      `json:"on_hand"`
	Substitute *int64   `json:"substitute"`
	Message    string   `json:"message"`
}

func issuesJSON(is []production.Issue) []jsonIssue {
	out := []jsonIssue{}
	for _, i := range is {
		ji := jsonIssue{Kind: i.Kind.String(), StockID: i.StockID, Refs: i.Refs, Needed: i.Needed, OnHand: i.OnHand, Message: i.String()}
		if i.Substitute != 0 {
			s := i.Substitute
			ji.Substitute = &s
		}
		out = append(out, ji)
	}
	return out
}

// jsonShowFilter is a one-filter design: the fit's candidate object.
type jsonShowFilter struct {
	jsonCandidate
	Spec        jsonSpec    `json:"spec"`
	Saved       string      `json:"saved_at"`
	Boards      int         `json:"boards"`
	StockIssues []jsonIssue `json:"stock_issues"`
}

// jsonShowBoard is a board design: the plan fit's board object.
type jsonShowBoard struct {
	jsonBoard
	Saved       string      `json:"saved_at"`
	Boards      int         `json:"boards"`
	StockIssues []jsonIssue `json:"stock_issues"`
}

func runShow(env *Env, o *showOptions, id string) error {
	db, d, err := env.openDesign(id, false)
	if err != nil {
		return err
	}
	defer db.Close()
	batch, err := production.NewBatch(d, d.Boards)
	if err != nil {
		return err
	}
	check, err := production.DryRun(env.Ctx, db, batch)
	if err != nil {
		return err
	}
	if o.json {
		items, err := db.List(env.Ctx, stock.Filter{})
		if err != nil {
			return err
		}
		return writeJSON(env.Out, showJSON(d, check.Issues, items))
	}
	printShow(env, env.Out, d, check)
	return nil
}

func showJSON(d *production.Design, issues []production.Issue, items []stock.Item) any {
	saved := d.Created.Format(time.RFC3339)
	if len(d.Filters) == 1 && d.Name == "" {
		f := d.Filters[0]
		jc := candidateJSON(f.Candidate, d.Rank)
		jc.ID = d.ID
		jc.BoardsBuildable = d.BoardsBuildable(items)
		// At the stock's prices now (a saved design keeps no prices).
		jc.CostPerBoard = moneyJSON(production.UseCost(f.Candidate.StockUse, items))
		return jsonShowFilter{jsonCandidate: jc, Spec: specJSON(f.Spec, f.Spec.Order), Saved: saved, Boards: d.Boards,
			StockIssues: issuesJSON(issues)}
	}
	var specs []production.PlanFilter
	for _, f := range d.Filters {
		specs = append(specs, production.PlanFilter{Label: f.Label, Spec: f.Spec})
	}
	b := designBoard(d, items)
	jb := boardJSON(b.Filters, specs, b, d.Rank)
	jb.ID, jb.Name = d.ID, d.Name
	jb.CostPerBoard = moneyJSON(production.UseCost(b.StockUse, items))
	return jsonShowBoard{jsonBoard: jb, Saved: saved, Boards: d.Boards, StockIssues: issuesJSON(issues)}
}

func printShow(env *Env, w io.Writer, d *production.Design, check *production.BuildResult) {
	fmt.Fprintf(w, "Design %s: %s\n", d.ID, d.Summary())
	fmt.Fprintf(w, "Saved %s (rank %d of its fit), fitted for %s: %s from %s per board, worst response error %s dB\n",
		d.Created.Local().Format("2006-01-02 15:04"), d.Rank, plural(d.Boards, "board"), plural(d.PartCount(), "part"), plural(d.UniqueParts(), "stock row"), fmtErr(d.WorstError()))
	for i, f := range d.Filters {
		dup := 0
		for j := 0; j < i; j++ {
			if d.Filters[j].Candidate == f.Candidate || sameParts(d.Filters[j].Candidate.StockUse, f.Candidate.StockUse) {
				dup = j + 1
				break
			}
		}
		if len(d.Filters) > 1 {
			fmt.Fprintf(w, "\nFilter %d, %s: %s\n", i+1, f.Label, production.SpecText(f.Spec, f.Candidate))
			if dup > 0 {
				fmt.Fprintf(w, "The same parts as filter %d (designators F%d.*).\n", dup, i+1)
				continue
			}
		} else {
			fmt.Fprintln(w, report.SpecLine(f.Candidate.Design))
		}
		printCandidateDetail(env, w, f.Candidate, d.Rank)
		if sk, err := respplot.Sketch(report.Response(f.Candidate, respplot.Limits{}), 60, 12); err == nil {
			fmt.Fprintln(w)
			fmt.Fprint(w, sk)
		}
	}
	fmt.Fprintf(w, "\nStock check for %s:", plural(d.Boards, "board"))
	if len(check.Issues) == 0 {
		fmt.Fprintln(w, " every row is as saved and holds enough.")
		return
	}
	fmt.Fprintln(w)
	for _, i := range check.Issues {
		mark := " "
		if i.Blocking() {
			mark = "!"
		}
		fmt.Fprintf(w, " %s %s\n", mark, i.String())
	}
	fmt.Fprintln(w, "('!' stops a build: fit and save the design again, restock, or restore the row.)")
}

func sameParts(a, b []optimize.StockUse) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// normalizeDesignID folds a typed design id as the store does.
func normalizeDesignID(id string) string { return strings.ToLower(strings.TrimSpace(id)) }
