package main

import (
	"errors"
	"io"
	"os"

	"github.com/spf13/cobra"

	"recto/cmd/internal/cli"
)

// Exit statuses and the errors that choose them live in cmd/internal/cli;
// these names keep the commands short.
const (
	exitOK          = cli.ExitOK
	exitFailure     = cli.ExitFailure
	exitUsage       = cli.ExitUsage
	exitPartial     = cli.ExitPartial
	exitInterrupted = cli.ExitInterrupted
)

const exitStatusHelp = cli.ExitStatusHelp

// GlobalOptions are the flags every command shares.
type GlobalOptions struct {
	Quiet bool // no progress on stderr

	stdout io.Writer
	stderr io.Writer
}

type (
	usageError   = cli.UsageError   // a bad invocation (exit status 2)
	partialError = cli.PartialError // some inputs failed (exit status 3)
)

var usagef = cli.Usagef

// errNotImplemented is returned by commands whose capability has not landed.
var errNotImplemented = errors.New("not implemented yet")

func newRootCommand() *cobra.Command {
	g := &GlobalOptions{stdout: os.Stdout, stderr: os.Stderr}
	root := &cobra.Command{
		Use:   "recto",
		Short: "Measure and improve the OCR of scanned pages",
		Long: `recto tells a digitisation team how good its OCR is and makes it better.

It prepares page images (deskew, binarise), recognises them with Tesseract,
estimates each page's quality without ground truth, flags pages to rescan,
corrects common OCR confusions, and measures CER and WER against ground truth.
` + exitStatusHelp,
		SilenceUsage:  true,
		SilenceErrors: true,
		PersistentPreRun: func(cmd *cobra.Command, args []string) {
			g.stdout = cmd.OutOrStdout()
			g.stderr = cmd.ErrOrStderr()
		},
	}
	root.PersistentFlags().BoolVarP(&g.Quiet, "quiet", "q", false, "no progress messages on stderr")
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error { return &usageError{Err: err} })

	root.AddCommand(
		newVersionCommand(g),
		newScoreCommand(g),
		newOCRCommand(g),
		newLexiconCommand(g),
		newTriageCommand(g),
		newCalibrateCommand(g),
		newCorrectCommand(g),
		newRunCommand(g),
		newReportCommand(g),
		newMergeCommand(g),
		newDemoCommand(g),
	)
	wrapArgErrors(root)
	return root
}

// wrapArgErrors makes cobra's positional-argument errors usage errors
// (exit status 2) for every command in the tree.
func wrapArgErrors(c *cobra.Command) {
	if c.Args != nil {
		args := c.Args
		c.Args = func(cmd *cobra.Command, a []string) error {
			if err := args(cmd, a); err != nil {
				return &usageError{Err: err}
			}
			return nil
		}
	}
	for _, sub := range c.Commands() {
		wrapArgErrors(sub)
	}
}
