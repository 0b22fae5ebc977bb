// Package cli holds what every recto program shares at its edge: the exit
// statuses and the two kinds of error that choose one (a usage error, exit
// status 2, and a partial failure, exit status 3). Library packages never
// import it; the run package returns these errors so that the command maps
// them to statuses in one place.
package cli

import (
	"fmt"
	"strings"
)

// Exit statuses; documented in every command's help (ExitStatusHelp).
const (
	ExitOK          = 0
	ExitFailure     = 1
	ExitUsage       = 2
	ExitPartial     = 3
	ExitSetup       = 4
	ExitInterrupted = 130
)

// ExitStatusHelp is the EXIT STATUS section of the commands' help.
const ExitStatusHelp = `
EXIT STATUS
  0    everything was processed
  1    failure: nothing useful was produced
  2    usage error: bad flag, argument or option value
  3    partial: some pages were missing or unreadable (others were processed)
  4    set-up: some pages failed because of the system or the set-up (disk,
       names, limits), not the scans; report/failures.csv says how to fix each
  130  interrupted (SIGINT or SIGTERM)`

// UsageError marks a bad invocation (exit status 2).
type UsageError struct{ Err error }

func (e *UsageError) Error() string { return e.Err.Error() }
func (e *UsageError) Unwrap() error { return e.Err }

// Usagef returns a UsageError with a formatted message.
func Usagef(format string, args ...any) error {
	return &UsageError{fmt.Errorf(format, args...)}
}

// CheckJobs checks the value of --jobs, the same in every command: 0 or
// more, 0 meaning one worker per core.
func CheckJobs(n int) error {
	if n < 0 {
		return Usagef("--jobs %d: want 0 (one per core) or more", n)
	}
	return nil
}

// PartialError marks a job in which some inputs failed while the others
// were processed (exit status 3).
type PartialError struct {
	Failed int    // inputs that failed
	Total  int    // inputs seen
	What   string // plural noun, e.g. "pages"
}

// SetupError marks a batch run in which pages failed because of the system
// or the set-up, not the scans (exit status 4, even when scans failed too).
type SetupError struct {
	Setup  int    // pages failed for a set-up or system reason
	Image  int    // pages failed because of the image (on the rescan list)
	Total  int    // pages of the run
	Report string // path of failures.csv
	First  string // the first set-up message, as an example
}

func (e *SetupError) Error() string {
	s := fmt.Sprintf("%d of %d pages failed because of the set-up or the system, not the scans (see %s; first: %s)", e.Setup, e.Total, e.Report, e.First)
	if e.Image > 0 {
		s += fmt.Sprintf("; %d more are on the rescan list", e.Image)
	}
	return s
}

func (e *PartialError) Error() string {
	return fmt.Sprintf("%d of %d %s failed (see the messages above)", e.Failed, e.Total, e.What)
}

// packages are the names of recto's packages whose error prefixes
// ("quality: ", "lexicon: ") are taken out of messages shown to the user:
// a message names the command, the flag or the file, not the code.
var packages = []string{"quality", "lexicon", "correct", "ocr", "alto", "tesseract", "lept", "synth", "par",
	"run", "ledger", "shard", "report", "merge", "demo"}

// Message returns err's text for the user of command ("recto score"): the
// command's own name and package prefixes are dropped, so that printed as
// "recto score: " + Message the line carries one prefix.
func Message(command string, err error) string {
	msg := err.Error()
	words := strings.Fields(command)
	var own []string // "score", "correct train", "train"
	for i := 1; i < len(words); i++ {
		own = append(own, strings.Join(words[i:], " "))
	}
	for again := true; again; {
		again = false
		for _, p := range append(own, packages...) {
			if rest, ok := strings.CutPrefix(msg, p+": "); ok {
				msg, again = rest, true
			}
		}
	}
	for _, p := range packages {
		msg = strings.ReplaceAll(msg, ": "+p+": ", ": ")
	}
	return msg
}

// IsCobraUsage reports whether err is one of the plain errors cobra
// returns for a bad invocation that it does not route through the flag
// error function: an unknown command, a required flag missing, flags used
// together that exclude each other.
func IsCobraUsage(err error) bool {
	msg := err.Error()
	for _, p := range []string{"unknown command ", "required flag(s) ", "if any flags in the group ", "at least one of the flags in the group "} {
		if strings.HasPrefix(msg, p) {
			return true
		}
	}
	return false
}
