package cli

import (
	"fmt"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/cobra"
)

// designsOptions are the flags of `drawerfit designs`.
type designsOptions struct {
	json bool
}

// NewCmdDesigns builds `drawerfit designs` and its remove subcommand; runF
// replaces the listing's run (nil: the real one).
func NewCmdDesigns(env *Env, runF func(*designsOptions) error) *cobra.Command {
	o := &designsOptions{}
	cmd := &cobra.Command{
		Use:   "designs",
		Short: "List the saved designs (fit --save), or remove one",
		Long: `designs lists the designs kept with fit --save (one filter) or
fit --plan FILE --save (a board of several filters), newest first: the
short id that show, build, yield and report take, when it was saved, what
it is, how many boards it was fitted for, its worst response error, its
parts and distinct stock rows per board, and how many builds of it stand.`,
		Example: `  # A model-railway club keeps the best three fits of its sound-card smoother
  drawerfit fit lowpass --pass 8k --order 5 --response bessel --top 3 --save
  drawerfit designs

  # Drop one that will not be built
  drawerfit designs remove ID`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if runF != nil {
				return runF(o)
			}
			return runDesigns(env, o)
		},
	}
	cmd.Flags().BoolVar(&o.json, "json", false, "print a JSON array")
	cmd.AddCommand(newDesignsRemoveCmd(env))
	return cmd
}

type jsonDesignInfo struct {
	ID          string  `json:"design_id"`
	Name        string  `json:"name"`
	Summary     string  `json:"summary"`
	Filters     int     `json:"filter_count"`
	Boards      int     `json:"boards"`
	WorstError  float64 `json:"worst_error_db"`
	PartCount   int     `json:"part_count"`
	UniqueParts int     `json:"unique_parts"`
	MeetsSpec   bool    `json:"meets_spec"`
	Created     string  `json:"saved_at"`
	Builds      int     `json:"builds"`
}

func runDesigns(env *Env, o *designsOptions) error {
	db, err := env.openStoreForReading()
	if err != nil {
		return err
	}
	defer db.Close()
	list, err := db.Designs(env.Ctx)
	if err != nil {
		return err
	}
	if o.json {
		out := []jsonDesignInfo{}
		for _, d := range list {
			out = append(out, jsonDesignInfo{ID: d.ID, Name: d.Name, Summary: d.Summary, Filters: d.Filters, Boards: d.Boards,
				WorstError: d.WorstError, PartCount: d.PartCount, UniqueParts: d.UniqueParts, MeetsSpec: d.MeetsSpec,
				Created: d.Created.Format(time.RFC3339), Builds: d.Builds})
		}
		return writeJSON(env.Out, out)
	}
	if len(list) == 0 {
		fmt.Fprintln(env.Out, "No saved designs yet: keep the candidates of a fit with `drawerfit fit ... --save`.")
		return nil
	}
	g := newGrid("id", "saved", "design", "filters", "boards", "error dB", "parts", "unique", "builds")
	g.right(3, 4, 5, 6, 7, 8)
	// Narrow terminal: the design's description wraps; the counts a glance
	// does without go first.
	g.wrap(24, 2).abbrev(5, "err dB").abbrev(7, "uniq").abbrev(3, "filt").abbrev(8, "built")
	g.optional(dropFirst, 3, 7).optional(dropLater, 1, 8).optional(dropLast, 4)
	for _, d := range list {
		sum := d.Summary
		if !d.MeetsSpec {
			sum += " (fails spec)"
		}
		g.add(d.ID, d.Created.Local().Format("2006-01-02 15:04"), sum, strconv.Itoa(d.Filters), strconv.Itoa(d.Boards),
			fmtErr(d.WorstError), strconv.Itoa(d.PartCount), strconv.Itoa(d.UniqueParts), strconv.Itoa(d.Builds))
	}
	g.render(env, env.Out)
	return nil
}

func newDesignsRemoveCmd(env *Env) *cobra.Command {
	return &cobra.Command{
		Use:   "remove ID",
		Short: "Take a saved design off the list (its builds keep referring to it)",
		Long: `remove takes a saved design off the list. Builds made from it stay in
drawerfit builds and can still be undone; its id is never given to another
design.`,
		Example: `  # The workshop decided against the 3-pole variant of its hum filter
  drawerfit designs remove ID`,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) != 1 {
				return usageError{fmt.Errorf("designs remove needs one design id (got %d arguments)", len(args))}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			db, err := env.openStore()
			if err != nil {
				return err
			}
			defer db.Close()
			if err := db.RemoveDesign(env.Ctx, args[0]); err != nil {
				return err
			}
			id := normalizeDesignID(args[0])
			fmt.Fprintf(env.Out, "Removed design %s.\n", id)
			// Its builds stay in the ledger; say which still stand.
			if builds, err := db.Builds(env.Ctx); err == nil {
				var standing []string
				for _, b := range builds {
					if b.DesignID == id && b.UndoneAt.IsZero() {
						standing = append(standing, strconv.FormatInt(b.ID, 10))
					}
				}
				if len(standing) > 0 {
					fmt.Fprintf(env.Out, "Its builds %s still stand: their parts stay drawn, and `drawerfit build undo ID` still returns them.\n",
						strings.Join(standing, ", "))
				}
			}
			return nil
		},
	}
}
