package main

import (
	"fmt"
	"runtime/debug"

	"github.com/spf13/cobra"
)

// version is set at build time with -ldflags "-X main.version=..."; otherwise
// the module's build information is used.
var version = ""

func newVersionCommand(g *GlobalOptions) *cobra.Command {
	return &cobra.Command{
		Use:   "version",
		Short: "Print recto's version",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			v := version
			if v == "" {
				v = "devel"
				if bi, ok := debug.ReadBuildInfo(); ok && bi.Main.Version != "" && bi.Main.Version != "(devel)" {
					v = bi.Main.Version
				}
			}
			_, err := fmt.Fprintf(cmd.OutOrStdout(), "recto %s\n", v)
			return err
		},
	}
}
