// Command corpus builds the synthetic corpus on which the page-quality
// estimator is fitted and the correction error model is trained and
// evaluated: running text from open datasets, rendered to small pages,
// degraded from clean to unreadable, split into "fit" and "heldout".
//
//	go run ./cmd/corpus -out DIR [-n 300] [-seed 1]
//	go run ./cmd/corpus extract   # rebuilds testdata/synth/passages.jsonl.gz
//
// See docs/dev-synth.md.
package main

import (
	"fmt"
	"os"
)

func main() {
	var err error
	if len(os.Args) > 1 && os.Args[1] == "extract" {
		err = runExtract(os.Args[2:])
	} else {
		err = runBuild(os.Args[1:])
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "corpus:", err)
		os.Exit(1)
	}
}
