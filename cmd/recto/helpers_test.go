package main

import (
	"bytes"
	"context"
	"testing"
)

// runRecto runs the recto command tree with args and returns what it wrote
// to stdout and stderr, and the error Execute returned.
func runRecto(t *testing.T, args ...string) (string, string, error) {
	t.Helper()
	root := newRootCommand()
	var out, errb bytes.Buffer
	root.SetOut(&out)
	root.SetErr(&errb)
	root.SetArgs(args)
	err := root.ExecuteContext(context.Background())
	return out.String(), errb.String(), err
}
