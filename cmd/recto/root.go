package main

import (
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/spf13/cobra"
)

// Exit statuses; documented in the root command's help.
const (
	exitOK          = 0
	exitFailure     = 1
	exitUsage       = 2
	exitPartial     = 3
	exitInterrupted = 130
)

const exitStatusHelp = `
EXIT STATUS
  0    everything was processed
  1    failure: nothing useful was produced
  2    usage error: bad flag, argument or option value
  3    partial: some pages were missing or unreadable (others were processed)
  130  interrupted (SIGINT or SIGTERM)`

// GlobalOptions are the flags every command shares.
type GlobalOptions struct {
	Quiet bool // no progress on stderr

	stdout io.Writer
	stderr io.Writer
}

// usageError marks a bad invocation (exit status 2).
type usageError struct{ err error }

func (e *usageError) Error() string { return e.err.Error() }
func (e *usageError) Unwrap() error { return e.err }

// usagef returns a usageError with a formatted message.
func usagef(format string, args ...any) error {
	return &usageError{fmt.Errorf(format, args...)}
}

// partialError marks a run in which some inputs failed while the others
// were processed (exit status 3).
type partialError struct {
	Failed int    // inputs that failed
	Total  int    // inputs seen
	What   string // plural noun, e.g. "pages"
}

func (e *partialError) Error() string {
	return fmt.Sprintf("%d of %d %s failed (see the messages above)", e.Failed, e.Total, e.What)
}

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
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error { return &usageError{err} })

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
				return &usageError{err}
			}
			return nil
		}
	}
	for _, sub := range c.Commands() {
		wrapArgErrors(sub)
	}
}
