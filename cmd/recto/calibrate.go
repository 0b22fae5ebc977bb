package main

import "github.com/spf13/cobra"

// newCalibrateCommand is a placeholder until the capability lands.
func newCalibrateCommand(g *GlobalOptions) *cobra.Command {
	return &cobra.Command{
		Use:   "calibrate",
		Short: "Refit the quality estimator on a ground-truthed sample (not implemented yet)",
		RunE: func(cmd *cobra.Command, args []string) error {
			return errNotImplemented
		},
	}
}
