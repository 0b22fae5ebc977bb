// Command recto tells a digitisation team how good its OCR is and makes it
// better: it prepares and recognises page images, estimates page quality,
// corrects common OCR confusions and measures CER/WER against ground truth.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"

	"recto/cmd/internal/cli"
	"recto/ocr"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	if version != "" {
		ocr.SoftwareVersion = version // the ALTO Processing description names this build
	}
	root := newRootCommand()
	cmd, err := root.ExecuteContextC(ctx)
	name := "recto"
	if cmd != nil {
		name = cmd.CommandPath()
	}
	os.Exit(exitCode(ctx, os.Stderr, name, err))
}

// exitCode prints err to w as "<command>: message" (command is "recto
// score", say) and returns the process exit status; it is the one place
// that maps errors to codes.
func exitCode(ctx context.Context, w io.Writer, command string, err error) int {
	if err == nil {
		return exitOK
	}
	msg := cli.Message(command, err)
	var ue *usageError
	var pe *partialError
	var se *cli.SetupError
	switch {
	case ctx.Err() != nil || errors.Is(err, context.Canceled):
		fmt.Fprintf(w, "%s: interrupted\n", command)
		return exitInterrupted
	case errors.As(err, &ue) || cli.IsCobraUsage(err):
		fmt.Fprintf(w, "%s: %s\nRun '%s --help' for usage.\n", command, msg, command)
		return exitUsage
	case errors.As(err, &se):
		fmt.Fprintf(w, "%s: %s\n", command, msg)
		return cli.ExitSetup
	case errors.As(err, &pe):
		fmt.Fprintf(w, "%s: %s\n", command, msg)
		return exitPartial
	default:
		fmt.Fprintf(w, "%s: %s\n", command, msg)
		return exitFailure
	}
}
