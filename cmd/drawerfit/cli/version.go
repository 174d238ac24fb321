package cli

import (
	"fmt"
	"runtime/debug"

	"github.com/spf13/cobra"
)

// version is set at build time with -ldflags "-X drawerfit/cmd/drawerfit/cli.version=..."
var version = ""

func init() { register("version", newVersionCmd) }

func newVersionCmd(env *Env) *cobra.Command {
	return &cobra.Command{
		Use:     "version",
		Short:   "Print the drawerfit version",
		Example: "  drawerfit version",
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			v := version
			if v == "" {
				v = "devel"
				if bi, ok := debug.ReadBuildInfo(); ok {
					for _, s := range bi.Settings {
						if s.Key == "vcs.revision" && len(s.Value) >= 12 {
							v = "devel+" + s.Value[:12]
						}
					}
				}
			}
			fmt.Fprintln(env.Out, "drawerfit", v)
			return nil
		},
	}
}
