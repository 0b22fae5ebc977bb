// Command recto tells a digitisation team how good its OCR is and makes it
// better: it prepares and recognises page images, estimates page quality,
// corrects common OCR confusions and measures CER/WER against ground truth.
package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"os/signal"
	"strings"
	"syscall"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	root := newRootCommand()
	err := root.ExecuteContext(ctx)
	os.Exit(exitCode(ctx, err))
}

// exitCode prints err to stderr in the form its kind calls for and returns
// the process exit status; it is the one place that maps errors to codes.
func exitCode(ctx context.Context, err error) int {
	if err == nil {
		return exitOK
	}
	var ue *usageError
	var pe *partialError
	switch {
	case ctx.Err() != nil || errors.Is(err, context.Canceled):
		fmt.Fprintln(os.Stderr, "recto: interrupted")
		return exitInterrupted
	case errors.As(err, &ue) || strings.HasPrefix(err.Error(), "unknown command "):
		// cobra reports an unknown command with a plain error: a usage error too.
		fmt.Fprintf(os.Stderr, "recto: %v\nRun 'recto --help' for usage.\n", err)
		return exitUsage
	case errors.As(err, &pe):
		fmt.Fprintf(os.Stderr, "recto: %v\n", err)
		return exitPartial
	default:
		fmt.Fprintf(os.Stderr, "recto: %v\n", err)
		return exitFailure
	}
}
