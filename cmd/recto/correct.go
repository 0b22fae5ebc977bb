package main

import "github.com/spf13/cobra"

// newCorrectCommand is a placeholder until the capability lands.
func newCorrectCommand(g *GlobalOptions) *cobra.Command {
	return &cobra.Command{
		Use:   "correct",
		Short: "Correct common OCR confusions with a noisy-channel model (not implemented yet)",
		RunE: func(cmd *cobra.Command, args []string) error {
			return errNotImplemented
		},
	}
}
