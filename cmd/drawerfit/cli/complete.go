package cli

import (
	"context"
	"fmt"
	"strconv"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"drawerfit/stock"
)

// Shell completion of arguments that name database rows. Each completes
// the first argument only, from the database --db names; a database that
// cannot be opened gives no completions rather than an error on a Tab.

type completeFunc func(*cobra.Command, []string, string) ([]cobra.Completion, cobra.ShellCompDirective)

func completionCtx(env *Env) context.Context {
	if env.Ctx != nil {
		return env.Ctx
	}
	return context.Background()
}

// completeDesignIDs completes saved design ids, each with its summary.
func completeDesignIDs(env *Env) completeFunc {
	return func(_ *cobra.Command, args []string, _ string) ([]cobra.Completion, cobra.ShellCompDirective) {
		if len(args) > 0 {
			return nil, cobra.ShellCompDirectiveNoFileComp
		}
		db, err := env.openStoreForReading()
		if err != nil {
			return nil, cobra.ShellCompDirectiveNoFileComp
		}
		defer db.Close()
		list, err := db.Designs(completionCtx(env))
		if err != nil {
			return nil, cobra.ShellCompDirectiveNoFileComp
		}
		out := make([]cobra.Completion, 0, len(list))
		for _, d := range list {
			out = append(out, cobra.CompletionWithDesc(d.ID, d.Summary))
		}
		return out, cobra.ShellCompDirectiveNoFileComp
	}
}

// completeBuildIDs completes build ids, each with its design and boards.
func completeBuildIDs(env *Env) completeFunc {
	return func(_ *cobra.Command, args []string, _ string) ([]cobra.Completion, cobra.ShellCompDirective) {
		if len(args) > 0 {
			return nil, cobra.ShellCompDirectiveNoFileComp
		}
		db, err := env.openStoreForReading()
		if err != nil {
			return nil, cobra.ShellCompDirectiveNoFileComp
		}
		defer db.Close()
		list, err := db.Builds(completionCtx(env))
		if err != nil {
			return nil, cobra.ShellCompDirectiveNoFileComp
		}
		out := make([]cobra.Completion, 0, len(list))
		for _, b := range list {
			out = append(out, cobra.CompletionWithDesc(strconv.FormatInt(b.ID, 10),
				fmt.Sprintf("%d × %s (design %s)", b.Boards, b.DesignName, b.DesignID)))
		}
		return out, cobra.ShellCompDirectiveNoFileComp
	}
}

// completeStockIDs completes stock row ids, each with the row's label.
func completeStockIDs(env *Env) completeFunc {
	return func(_ *cobra.Command, args []string, _ string) ([]cobra.Completion, cobra.ShellCompDirective) {
		if len(args) > 0 {
			return nil, cobra.ShellCompDirectiveNoFileComp
		}
		items, err := env.stockItems(completionCtx(env), "", stock.Filter{})
		if err != nil {
			return nil, cobra.ShellCompDirectiveNoFileComp
		}
		out := make([]cobra.Completion, 0, len(items))
		for _, it := range items {
			out = append(out, cobra.CompletionWithDesc(strconv.FormatInt(it.ID, 10), it.Label()))
		}
		return out, cobra.ShellCompDirectiveNoFileComp
	}
}

// fileFlags are the flags that name a file to read or write, with the
// extensions the shell should offer; dirFlags name a directory.
var (
	fileFlags = map[string][]string{
		"netlist": {"cir", "sp"},
		"output":  {"html"},
		"csv":     {"csv"},
		"bom":     {"csv"},
		"stock":   {"csv"},
		"plan":    {"toml"},
	}
	dirFlags = []string{"png"}
)

// registerCompletions gives every command under cmd the completion of its
// file and directory flags and of its id arguments, and every enumerated
// flag the completion of its choices.
func registerCompletions(env *Env, cmd *cobra.Command) {
	cmd.LocalNonPersistentFlags().VisitAll(func(fl *pflag.Flag) {
		if e, ok := fl.Value.(*enumValue); ok {
			// The error only says the flag has a completion already.
			_ = cmd.RegisterFlagCompletionFunc(fl.Name, func(*cobra.Command, []string, string) ([]cobra.Completion, cobra.ShellCompDirective) {
				return e.completions(), cobra.ShellCompDirectiveNoFileComp
			})
			return
		}
		if exts, ok := fileFlags[fl.Name]; ok {
			_ = cmd.MarkFlagFilename(fl.Name, exts...)
		}
		for _, d := range dirFlags {
			if fl.Name == d {
				_ = cmd.MarkFlagDirname(fl.Name)
			}
		}
	})
	if cmd.ValidArgsFunction == nil {
		switch cmd.CommandPath() {
		case "drawerfit show", "drawerfit report", "drawerfit yield", "drawerfit build", "drawerfit designs remove":
			cmd.ValidArgsFunction = completeDesignIDs(env)
		case "drawerfit build undo":
			cmd.ValidArgsFunction = completeBuildIDs(env)
		case "drawerfit stock set", "drawerfit stock remove", "drawerfit stock history":
			cmd.ValidArgsFunction = completeStockIDs(env)
		}
	}
	for _, c := range cmd.Commands() {
		registerCompletions(env, c)
	}
}
