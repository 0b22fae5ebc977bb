package main

import "github.com/spf13/cobra"

// newMergeCommand is a placeholder until the capability lands.
func newMergeCommand(g *GlobalOptions) *cobra.Command {
	return &cobra.Command{
		Use:   "merge",
		Short: "Combine the ledgers of sharded runs and build the reports (not implemented yet)",
		RunE: func(cmd *cobra.Command, args []string) error {
			return errNotImplemented
		},
	}
}
