package main

import "github.com/spf13/cobra"

// newScoreCommand is a placeholder until the capability lands.
func newScoreCommand(g *GlobalOptions) *cobra.Command {
	return &cobra.Command{
		Use:   "score",
		Short: "Measure CER and WER of OCR text against ground truth (not implemented yet)",
		RunE: func(cmd *cobra.Command, args []string) error {
			return errNotImplemented
		},
	}
}
