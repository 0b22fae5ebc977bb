package main

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"strings"

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

	stdout  io.Writer
	stderr  io.Writer
	command string // "recto score", "recto correct train": the prefix of messages
}

// prefix is what every message of the running command starts with,
// before a colon: "recto <command>".
func (g GlobalOptions) prefix() string {
	if g.command == "" {
		return "recto"
	}
	return g.command
}

// printf writes one message line on stderr: the command's prefix, then the
// message with package prefixes taken out (cli.Message).
func (g GlobalOptions) printf(format string, args ...any) {
	fmt.Fprintf(g.stderr, "%s: %s\n", g.prefix(), cli.Message(g.prefix(), fmt.Errorf(format, args...)))
}

// oldName registers name as a hidden, deprecated spelling of the flag now
// called to (same value), so that scripts written for older releases keep
// working and say what to change.
func oldName(c *cobra.Command, name, to string) {
	f := c.Flags()
	nf := f.Lookup(to)
	f.Var(nf.Value, name, nf.Usage)
	f.MarkHidden(name)
	f.MarkDeprecated(name, "use --"+to)
}

// checkDir returns an error naming what (a flag such as "--truth", or an
// argument's name) and dir when dir is not a readable folder.
func checkDir(what, dir string) error {
	fi, err := os.Stat(dir)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return fmt.Errorf("%s %q: no such folder", what, dir)
	case err != nil:
		return fmt.Errorf("%s %q: %v", what, dir, errors.Unwrap(err))
	case !fi.IsDir():
		return fmt.Errorf("%s %q is a file, not a folder", what, dir)
	}
	return nil
}

// checkFormat checks a --format value against the formats a command
// prints; "text", the name older releases used for the table, is taken as
// "table".
func checkFormat(f *string, allowed ...string) error {
	if *f == "text" {
		*f = "table"
	}
	for _, a := range allowed {
		if *f == a {
			return nil
		}
	}
	want := strings.Join(allowed[:len(allowed)-1], ", ") + " or " + allowed[len(allowed)-1]
	return usagef("--format %q: want %s", *f, want)
}

type (
	usageError   = cli.UsageError   // a bad invocation (exit status 2)
	partialError = cli.PartialError // some inputs failed (exit status 3)
)

var usagef = cli.Usagef

// checkJobs checks --jobs as every command does (cli.CheckJobs).
var checkJobs = cli.CheckJobs

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
			g.command = cmd.CommandPath()
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
		newReviewCommand(g),
		newMergeCommand(g),
		newDemoCommand(g),
		newSampleCommand(g),
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
