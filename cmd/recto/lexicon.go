package main

import "github.com/spf13/cobra"

// newLexiconCommand is a placeholder until the capability lands.
func newLexiconCommand(g *GlobalOptions) *cobra.Command {
	return &cobra.Command{
		Use:   "lexicon",
		Short: "Build and inspect word lists with frequencies (not implemented yet)",
		RunE: func(cmd *cobra.Command, args []string) error {
			return errNotImplemented
		},
	}
}
