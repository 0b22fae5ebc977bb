package main

import "github.com/spf13/cobra"

// newTriageCommand is a placeholder until the capability lands.
func newTriageCommand(g *GlobalOptions) *cobra.Command {
	return &cobra.Command{
		Use:   "triage",
		Short: "Estimate page quality without ground truth and decide accept, correct or rescan (not implemented yet)",
		RunE: func(cmd *cobra.Command, args []string) error {
			return errNotImplemented
		},
	}
}
