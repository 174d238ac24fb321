package cli

import (
	"fmt"
	"runtime/debug"

	"github.com/spf13/cobra"
)

// version is set at build time with -ldflags "-X drawerfit/cmd/drawerfit/cli.version=..."
var version = ""

// NewCmdVersion builds `drawerfit version`.
func NewCmdVersion(env *Env) *cobra.Command {
	return &cobra.Command{
		Use:     "version",
		Short:   "Print the drawerfit version",
		Example: "  drawerfit version",
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			fmt.Fprintln(env.Out, "drawerfit", versionString())
			return nil
		},
	}
}

// versionString is the version `drawerfit version` and `drawerfit
// --version` print: the one set at build time, else "devel" with the
// commit when the build recorded it.
func versionString() string {
	if version != "" {
		return version
	}
	v := "devel"
	if bi, ok := debug.ReadBuildInfo(); ok {
		for _, s := range bi.Settings {
			if s.Key == "vcs.revision" && len(s.Value) >= 12 {
				v = "devel+" + s.Value[:12]
			}
		}
	}
	return v
}
