package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// TestErrorLines: every error line is "recto <command>: message" with no
// package name of ours in it, and usage errors exit 2, the unknown command
// included (the EXIT STATUS section of every command's help; exit status 2
// for usage as the flag package's own ExitOnError: golang/go src/flag/flag.go).
func TestErrorLines(t *testing.T) {
	dir := t.TempDir()
	none := filepath.Join(dir, "none")
	pkg := regexp.MustCompile(`: (quality|lexicon|ocr|correct|run|ledger|shard|report|alto|tesseract|par): `)
	for _, tc := range []struct {
		args   []string
		prefix string
		code   int
	}{
		{[]string{"bogus"}, "recto: ", exitUsage},
		{[]string{"score", "--truth", none, "--ocr", dir}, "recto score: --truth ", exitFailure},
		{[]string{"score", "--truth", dir}, "recto score: --ocr is required", exitUsage},
		{[]string{"score", "--truth", dir, "--ocr", dir, "--format", "xml"}, "recto score: --format \"xml\"", exitUsage},
		{[]string{"triage", "--format", "xml", dir}, "recto triage: --format \"xml\"", exitUsage},
		{[]string{"triage", none}, "recto triage: OCRDIR ", exitFailure},
		{[]string{"triage", "--quality-model", none, dir}, "recto triage: ", exitFailure},
		{[]string{"calibrate", "--ocr", dir, "--truth", dir}, "recto calibrate: ", exitUsage},
		{[]string{"correct", none, "-o", filepath.Join(dir, "out")}, "recto correct: IN ", exitFailure},
		{[]string{"correct", "train", "--ocr", dir}, "recto correct train: ", exitUsage},
		{[]string{"ocr", dir}, "recto ocr: required flag", exitUsage},
		{[]string{"run", none, "-o", filepath.Join(dir, "run")}, "recto run: COLLECTION ", exitFailure},
		{[]string{"run", dir}, "recto run: --out", exitUsage},
		{[]string{"run", dir, "-o", filepath.Join(dir, "run"), "--jobs", "-2"}, "recto run: --jobs", exitUsage},
		{[]string{"merge"}, "recto merge: ", exitUsage},
		{[]string{"lexicon", "build"}, "recto lexicon build: ", exitUsage},
		{[]string{"lexicon", "bogus"}, "recto lexicon: unknown command", exitUsage},
		{[]string{"lexicon", "lookup"}, "recto lexicon lookup: ", exitUsage},
		{[]string{"score", "--bogus"}, "recto score: unknown flag: --bogus", exitUsage},
		{[]string{"report"}, "recto report: ", exitUsage},
		{[]string{"report", none}, "recto report: ", exitFailure},
		{[]string{"sample"}, "recto sample: --estimates", exitUsage},
		{[]string{"demo", "-o", filepath.Join(dir, "demo"), "--jobs", "-1"}, "recto demo: --jobs", exitUsage},
		{[]string{"version", "extra"}, "recto version: ", exitUsage},
		{[]string{"calibrate", "--ocr", dir, "--truth", dir, "-o", filepath.Join(dir, "m.json"), "-j", "-1"}, "recto calibrate: --jobs", exitUsage},
	} {
		root := newRootCommand()
		var out, errb bytes.Buffer
		root.SetOut(&out)
		root.SetErr(&errb)
		root.SetArgs(tc.args)
		cmd, err := root.ExecuteContextC(context.Background())
		if err == nil {
			t.Errorf("recto %s succeeded", strings.Join(tc.args, " "))
			continue
		}
		var msg bytes.Buffer
		code := exitCode(context.Background(), &msg, cmd.CommandPath(), err)
		line, _, _ := strings.Cut(msg.String(), "\n")
		if code != tc.code || !strings.HasPrefix(line, tc.prefix) || pkg.MatchString(line) || doubled(line, cmd.CommandPath()) {
			t.Errorf("recto %s: exit %d, %q; want exit %d and a line starting %q without package names",
				strings.Join(tc.args, " "), code, line, tc.code, tc.prefix)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "demo")); err == nil {
		t.Error("recto demo --jobs -1 wrote its folder before refusing the flag")
	}
}

// doubled reports whether the message after "command: " repeats the
// command's name as a prefix of its own ("recto score: score: ...").
func doubled(line, command string) bool {
	rest := strings.TrimPrefix(line, command+": ")
	words := strings.Fields(command)
	return strings.HasPrefix(rest, words[len(words)-1]+": ") || strings.HasPrefix(rest, "recto")
}
