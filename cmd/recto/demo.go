package main

import "github.com/spf13/cobra"

// newDemoCommand is a placeholder until the capability lands.
func newDemoCommand(g *GlobalOptions) *cobra.Command {
	return &cobra.Command{
		Use:   "demo",
		Short: "Generate the fictional demo collection and run the whole job on it (not implemented yet)",
		RunE: func(cmd *cobra.Command, args []string) error {
			return errNotImplemented
		},
	}
}
