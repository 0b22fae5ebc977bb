package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"recto/cmd/internal/review"
)

func newReviewCommand(g *GlobalOptions) *cobra.Command {
	var o review.Options
	cmd := &cobra.Command{
		Use:   "review RUNDIR [--listen ADDR] [--read-only]",
		Short: "Look at a run's pages in a browser and confirm or change their decisions",
		Long: `Review starts a local web page for the run in RUNDIR and prints its address,
which carries a random access token: open it in a browser on this machine.

The overview shows the titles with their counts per decision and their
predicted and measured CER, and the pages as thumbnails, filtered by title
and decision and sorted by predicted or measured CER. A page shows its image
beside its text (words read with low confidence marked; click a word to see
its box on the image), its corrections before and after, the reasons for
its decision, and its measured CER and ground truth where there is some.

On each page, confirm or change the decision (accept, correct, rescan)
with an optional note, and accept or reject each correction; the keys are
listed on the page. Every change is stored at once in RUNDIR/ledger.db
under your user name, with the time and the old and new value, and can be
undone. 'recto report RUNDIR' (or the page's rebuild button) then writes
rescan.csv, pages.csv, titles.* and report.html with the reviewed
decisions, marked as reviewed, and corrected text with only the
corrections that stand; a later 'recto run' keeps them for every page
whose image has not changed. Several review sessions may run on one
run folder at once; a change made on a page someone else changed since
you opened it is refused with a message to reload.

The server listens on 127.0.0.1 only, on a free port, unless --listen is
given. Thumbnails are made once and kept in RUNDIR/review. Stop it with
Ctrl-C.
` + exitStatusHelp,
		Args: cobra.ExactArgs(1),
		PreRunE: func(cmd *cobra.Command, args []string) error {
			if o.Jobs < 0 {
				return &usageError{Err: fmt.Errorf("--jobs %d: must be 0 (all CPUs) or more", o.Jobs)}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Dir = args[0]
			s, err := review.New(cmd.Context(), o)
			if err != nil {
				return err
			}
			defer s.Close()
			ln, addr, exposed, err := s.Listen()
			if err != nil {
				return err
			}
			if exposed {
				g.printf("warning: listening on %s, not only on this machine: anyone who can reach it and learns the address with its token can see the pages%s",
					ln.Addr(), map[bool]string{false: " and change decisions", true: ""}[o.ReadOnly])
			}
			fmt.Fprintln(g.stdout, addr)
			if !g.Quiet {
				ro := ""
				if o.ReadOnly {
					ro = " (read-only)"
				}
				g.printf("reviewing %q as %s%s; stop with Ctrl-C", o.Dir, s.User(), ro)
			}
			return s.Serve(cmd.Context(), ln)
		},
	}
	cmd.Flags().StringVar(&o.Listen, "listen", "", "listen on `address` host:port instead of 127.0.0.1 and a free port (warns: others may reach it)")
	cmd.Flags().BoolVar(&o.ReadOnly, "read-only", false, "show the pages without allowing any change")
	cmd.Flags().IntVarP(&o.Jobs, "jobs", "j", 0, "make thumbnails `n` at a time in the background (0: one per core)")
	return cmd
}
