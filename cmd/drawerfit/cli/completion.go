package cli

import (
	"github.com/spf13/cobra"

	"drawerfit/fault"
)

// completionShells are the shells drawerfit writes completion scripts for.
var completionShells = []string{"bash", "zsh", "fish"}

// NewCmdCompletion builds `drawerfit completion`.
func NewCmdCompletion(env *Env) *cobra.Command {
	return &cobra.Command{
		Use:   "completion bash|zsh|fish",
		Short: "Print a shell completion script",
		Long: `Print a script that teaches your shell to complete drawerfit's commands,
flags and arguments. Load it once per session, or install it where your shell
looks for completions so that every new shell has it.`,
		Example: `  # Bash, for the current session (needs the bash-completion package)
  source <(drawerfit completion bash)

  # Bash, for every session of this user
  mkdir -p ~/.local/share/bash-completion/completions
  drawerfit completion bash > ~/.local/share/bash-completion/completions/drawerfit

  # Zsh: put it on your fpath (compinit must be enabled in ~/.zshrc)
  mkdir -p ~/.zfunc && drawerfit completion zsh > ~/.zfunc/_drawerfit
  #   and in ~/.zshrc: fpath=(~/.zfunc $fpath); autoload -U compinit; compinit

  # Fish
  drawerfit completion fish > ~/.config/fish/completions/drawerfit.fish`,
		ValidArgs:             completionShells,
		Args:                  cobra.ExactArgs(1),
		DisableFlagsInUseLine: true,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runCompletion(env, cmd.Root(), args[0])
		},
	}
}

// runCompletion writes root's completion script for shell to env.Out.
func runCompletion(env *Env, root *cobra.Command, shell string) error {
	switch shell {
	case "bash":
		return root.GenBashCompletionV2(env.Out, true)
	case "zsh":
		return root.GenZshCompletion(env.Out)
	case "fish":
		return root.GenFishCompletion(env.Out, true)
	}
	return fault.Invalidf("unknown shell %q: use bash, zsh or fish", shell)
}
