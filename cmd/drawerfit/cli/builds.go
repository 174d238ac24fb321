package cli

import (
	"fmt"
	"strconv"
	"time"

	"github.com/spf13/cobra"
)

// buildsOptions are the flags of `drawerfit builds`.
type buildsOptions struct {
	json bool
}

// NewCmdBuilds builds `drawerfit builds`; runF replaces the run (nil: the
// real one).
func NewCmdBuilds(env *Env, runF func(*buildsOptions) error) *cobra.Command {
	o := &buildsOptions{}
	cmd := &cobra.Command{
		Use:   "builds",
		Short: "List the builds: design, boards, parts drawn, undone or not",
		Long: `builds lists every batch drawn with drawerfit build, newest first: its
number (for build undo), when it was built, the design, the board count, the
parts it took and whether it was undone.`,
		Example: `  # What has the repair café built this month?
  drawerfit builds

  # As JSON, for the club's spreadsheet
  drawerfit builds --json`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if runF != nil {
				return runF(o)
			}
			return runBuilds(env, o)
		},
	}
	cmd.Flags().BoolVar(&o.json, "json", false, "print a JSON array")
	return cmd
}

type jsonBuildInfo struct {
	ID       int64   `json:"build_id"`
	DesignID string  `json:"design_id"`
	Design   string  `json:"design"`
	Boards   int     `json:"boards"`
	Built    string  `json:"built_at"`
	Drawn    int     `json:"parts_drawn"`
	Undone   *string `json:"undone_at"`
}

func runBuilds(env *Env, o *buildsOptions) error {
	db, err := env.openStoreForReading()
	if err != nil {
		return err
	}
	defer db.Close()
	list, err := db.Builds(env.Ctx)
	if err != nil {
		return err
	}
	if o.json {
		out := []jsonBuildInfo{}
		for _, b := range list {
			jb := jsonBuildInfo{ID: b.ID, DesignID: b.DesignID, Design: b.DesignName, Boards: b.Boards,
				Built: b.At.Format(time.RFC3339), Drawn: b.Drawn()}
			if !b.UndoneAt.IsZero() {
				u := b.UndoneAt.Format(time.RFC3339)
				jb.Undone = &u
			}
			out = append(out, jb)
		}
		return writeJSON(env.Out, out)
	}
	if len(list) == 0 {
		fmt.Fprintln(env.Out, "No builds yet: draw a batch with `drawerfit build ID --boards N`.")
		return nil
	}
	g := newGrid("build", "built", "design", "what", "boards", "parts", "status")
	g.right(0, 4, 5)
	g.wrap(20, 3).wrap(8, 6).optional(dropFirst, 1).optional(dropLater, 5)
	for _, b := range list {
		status := "built"
		if !b.UndoneAt.IsZero() {
			status = "undone " + b.UndoneAt.Local().Format("2006-01-02 15:04")
		}
		g.add(strconv.FormatInt(b.ID, 10), b.At.Local().Format("2006-01-02 15:04"), b.DesignID, b.DesignName,
			strconv.Itoa(b.Boards), strconv.Itoa(b.Drawn()), status)
	}
	g.render(env, env.Out)
	return nil
}
