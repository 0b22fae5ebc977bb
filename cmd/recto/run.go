package main

import "github.com/spf13/cobra"

// newRunCommand is a placeholder until the capability lands.
func newRunCommand(g *GlobalOptions) *cobra.Command {
	return &cobra.Command{
		Use:   "run",
		Short: "Run the whole job on a collection: recognise, triage, correct, score, report (not implemented yet)",
		RunE: func(cmd *cobra.Command, args []string) error {
			return errNotImplemented
		},
	}
}
