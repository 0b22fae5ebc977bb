package main

import "github.com/spf13/cobra"

// newReportCommand is a placeholder until the capability lands.
func newReportCommand(g *GlobalOptions) *cobra.Command {
	return &cobra.Command{
		Use:   "report",
		Short: "Rebuild the reports of a run from its ledger (not implemented yet)",
		RunE: func(cmd *cobra.Command, args []string) error {
			return errNotImplemented
		},
	}
}
