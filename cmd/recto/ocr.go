package main

import "github.com/spf13/cobra"

// newOCRCommand is a placeholder until the capability lands.
func newOCRCommand(g *GlobalOptions) *cobra.Command {
	return &cobra.Command{
		Use:   "ocr",
		Short: "Prepare page images and recognise them with Tesseract (not implemented yet)",
		RunE: func(cmd *cobra.Command, args []string) error {
			return errNotImplemented
		},
	}
}
