// Package cli wires drawerfit's commands together: it parses flags, opens the
// stock database, calls the domain packages and prints their results. It holds
// no filter or stock logic of its own.
package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"drawerfit/fault"
	"drawerfit/store"
)

// Env carries what every command needs: its streams, the database location
// and the clock. Tests build one with buffers and a temporary database.
type Env struct {
	In  io.Reader
	Out io.Writer
	Err io.Writer

	// DBPath is the stock database file; empty means the default location.
	DBPath string
	// Getenv reads environment variables (os.Getenv unless a test replaces it).
	Getenv func(string) string
	// Now is the clock.
	Now func() time.Time
	// Ctx is cancelled on interrupt.
	Ctx context.Context
	// TermWidth returns the width in columns of the terminal w writes to,
	// 0 when w is not a terminal; nil means detect it (see termWidth).
	// Tests set it to see the terminal layout of a table.
	TermWidth func(w io.Writer) int
}

// NewRoot builds the whole command tree bound to env. The tree is written
// out here: each command comes from its NewCmdX constructor, which binds the
// flags into an options struct and takes the run function (nil: the real
// one) that tests replace to check parsing without computing.
func NewRoot(env *Env) *cobra.Command {
	root := &cobra.Command{
		Use:   "drawerfit",
		Short: "Design active filters from the resistors and capacitors you actually have",
		Long: `drawerfit designs unity-gain active low-pass and high-pass filters
(Butterworth, Chebyshev, Bessel) and fits them to a real parts inventory: the
drawer or reels on hand, kept in a local SQLite stock database. It searches
anchor capacitor, order, section arrangement and series/parallel pairs of
parts, and ranks buildable designs by response error, part count and unique
parts.

Results are small-signal designs: verify every circuit on the bench before
production, choose capacitor voltage ratings to suit the circuit, and have
circuits for safety-relevant, medical or mains-connected use reviewed by a
qualified person under the applicable local rules.`,
		Example: `  # Try the main job on the bundled sample drawer, no set-up needed
  drawerfit fit lowpass --pass 1k --stop 3k --atten 40 --stock sample-stock.csv

  # Put the drawer into the stock database and look at it
  drawerfit stock import sample-stock.csv
  drawerfit stock list --kind capacitor`,
		SilenceUsage:  true,
		SilenceErrors: true,
		Version:       versionString(),
	}
	root.SetVersionTemplate("drawerfit {{.Version}}\n")
	root.SetIn(env.In)
	root.SetOut(env.Out)
	root.SetErr(env.Err)
	root.PersistentFlags().StringVar(&env.DBPath, "db", "",
		"stock database file (default: $DRAWERFIT_DB, else drawerfit/stock.db in the XDG data home)")
	root.AddCommand(
		NewCmdPlan(env, nil),
		NewCmdFit(env, nil),
		NewCmdYield(env, nil),
		NewCmdReport(env, nil),
		NewCmdShow(env, nil),
		NewCmdDesigns(env, nil),
		NewCmdBuild(env, nil),
		NewCmdBuilds(env, nil),
		NewCmdStock(env),
		NewCmdCompletion(env),
		NewCmdVersion(env),
	)
	registerCompletions(env, root)
	root.SetFlagErrorFunc(func(_ *cobra.Command, err error) error {
		return usageError{err}
	})
	return root
}

// usageError marks a command-line mistake (exit status 2).
type usageError struct{ error }

func (u usageError) Unwrap() error { return u.error }

// Main runs drawerfit with the process's arguments and streams and returns
// the exit status.
func Main() int {
	ctx, stop := signalContext(os.Stderr)
	defer stop()
	env := &Env{In: os.Stdin, Out: os.Stdout, Err: os.Stderr, Getenv: os.Getenv, Now: time.Now, Ctx: ctx}
	return Run(env, os.Args[1:])
}

// Run executes one command line against env and returns the exit status:
// 0 success, 1 failure, 2 usage or invalid input, 130 when env.Ctx was
// cancelled (SIGINT or SIGTERM) before the command finished.
func Run(env *Env, args []string) int {
	if env.Getenv == nil {
		env.Getenv = os.Getenv
	}
	if env.Now == nil {
		env.Now = time.Now
	}
	if env.Ctx == nil {
		env.Ctx = context.Background()
	}
	root := NewRoot(env)
	root.SetArgs(args)
	cmd, err := root.ExecuteContextC(env.Ctx)
	if err == nil {
		return 0
	}
	if env.Ctx.Err() != nil {
		// Whatever the command was doing stopped with the context; the
		// commands write files and the database only once complete.
		fmt.Fprintln(env.Err, "drawerfit: "+interruptedMessage(env.Ctx, strings.TrimPrefix(cmd.CommandPath(), root.Name()+" "), err))
		return exitInterrupted
	}
	var silent exitError
	if errors.As(err, &silent) {
		if silent.msg != "" {
			fmt.Fprintln(env.Err, "drawerfit: "+silent.msg)
		}
		return silent.code
	}
	if path, _, perr := env.dbLocation(); perr == nil {
		// Any SQLite error that reached here unexplained gets plain words
		// and loses its numeric code.
		err = store.Plain(err, store.RedactURL(path))
	}
	fmt.Fprintln(env.Err, "drawerfit: "+withFlag(err))
	return exitCode(err)
}

// fieldFlags maps the fields that domain errors name (fault.Field) to the
// flags that set them. The domain never writes flag names; the CLI adds
// them here.
var fieldFlags = map[fault.Field]string{
	"Combine":    "--combine",
	"Boards":     "--boards",
	"Top":        "--top",
	"GoodEnough": "--good-enough",
	"MaxOrder":   "--max-order",
}

// withFlag is err's message, led by the flag its field maps to.
func withFlag(err error) string {
	if fl, ok := fieldFlags[fault.FieldOf(err)]; ok {
		return fl + ": " + err.Error()
	}
	return err.Error()
}

// exitError ends a command with a given status; its message (if any) has
// been printed or is printed by Run.
type exitError struct {
	code int
	msg  string
}

func (e exitError) Error() string { return fmt.Sprintf("exit status %d", e.code) }

func exitCode(err error) int {
	var u usageError
	if errors.As(err, &u) {
		return 2
	}
	if fault.KindOf(err) == fault.Invalid {
		return 2
	}
	// cobra reports unknown commands and wrong argument counts as plain errors.
	msg := err.Error()
	if strings.HasPrefix(msg, "unknown command") || strings.Contains(msg, "arg(s)") ||
		strings.HasPrefix(msg, "invalid argument") || strings.HasPrefix(msg, "unknown flag") ||
		strings.HasPrefix(msg, "required flag") {
		return 2
	}
	return 1
}

// DefaultDBPath returns the stock database location when --db is not given:
// $DRAWERFIT_DB, else $XDG_DATA_HOME/drawerfit/stock.db, else
// ~/.local/share/drawerfit/stock.db.
func (e *Env) DefaultDBPath() (string, error) {
	if e.DBPath != "" {
		return e.DBPath, nil
	}
	if p := e.Getenv("DRAWERFIT_DB"); p != "" {
		return p, nil
	}
	base := e.Getenv("XDG_DATA_HOME")
	if base == "" {
		home := e.Getenv("HOME")
		if home == "" {
			h, err := os.UserHomeDir()
			if err != nil {
				return "", fmt.Errorf("find the data directory: %w (set --db or DRAWERFIT_DB)", err)
			}
			home = h
		}
		base = filepath.Join(home, ".local", "share")
	}
	return filepath.Join(base, "drawerfit", "stock.db"), nil
}
