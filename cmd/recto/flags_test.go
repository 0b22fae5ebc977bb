package main

import (
	"sort"
	"strings"
	"testing"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"
)

// eachFlag calls fn for every visible flag of every command in the tree.
func eachFlag(c *cobra.Command, fn func(cmd string, f *pflag.Flag)) {
	visit := func(f *pflag.Flag) {
		if !f.Hidden && f.Name != "help" {
			fn(c.CommandPath(), f)
		}
	}
	c.LocalFlags().VisitAll(visit)
	for _, sub := range c.Commands() {
		eachFlag(sub, fn)
	}
}

// TestFlagSpelling walks every command's flags for spelling clashes, the
// check restic runs over its commands (restic/restic: cmd/restic/flags_test.go,
// from memory): one short letter stands for one long flag; a flag has one
// value type everywhere; names that differ only by case, hyphens or a
// plural are one name; synonyms of a name in use are not used; the
// shorthands the issue names (-j for --jobs, -o for --out) are given
// wherever the long flag exists.
func TestFlagSpelling(t *testing.T) {
	type use struct{ cmd, short, typ string }
	byName := map[string][]use{}
	eachFlag(newRootCommand(), func(cmd string, f *pflag.Flag) {
		byName[f.Name] = append(byName[f.Name], use{cmd, f.Shorthand, f.Value.Type()})
	})
	names := make([]string, 0, len(byName))
	for n := range byName {
		names = append(names, n)
	}
	sort.Strings(names)

	letter := map[string]string{} // shorthand -> long name
	squashed := map[string]string{}
	for _, n := range names {
		for _, u := range byName[n] {
			if u.short == "" {
				continue
			}
			if other, ok := letter[u.short]; ok && other != n {
				t.Errorf("-%s is --%s in %s but --%s elsewhere", u.short, n, u.cmd, other)
			}
			letter[u.short] = n
		}
		for _, u := range byName[n][1:] {
			if u.typ != byName[n][0].typ {
				t.Errorf("--%s takes a %s in %s but a %s in %s", n, u.typ, u.cmd, byName[n][0].typ, byName[n][0].cmd)
			}
		}
		sq := strings.TrimSuffix(strings.ReplaceAll(strings.ToLower(n), "-", ""), "s")
		if other, ok := squashed[sq]; ok {
			t.Errorf("--%s and --%s are spelled apart but read alike", n, other)
		}
		squashed[sq] = n
	}

	// Synonyms: the name on the left is the one in use; those on the right
	// must not appear (common practice in command-line tools: one word each).
	synonyms := map[string][]string{
		"out":              {"output", "outdir", "output-dir", "dest"},
		"jobs":             {"workers", "threads", "parallel", "procs"},
		"truth":            {"gt", "ground-truth", "reference", "ref", "refs"},
		"ocr":              {"hyp", "hypothesis", "hypotheses"},
		"lang":             {"language", "languages"},
		"format":           {"output-format", "json", "csv"},
		"quality-model":    {"model", "triage-model", "estimator"},
		"correction-model": {"model", "error-model"},
		"lexicon":          {"lex", "dictionary", "dict"},
	}
	for keep, avoid := range synonyms {
		for _, a := range avoid {
			if uses, ok := byName[a]; ok {
				t.Errorf("--%s (in %s) means --%s: use that name", a, uses[0].cmd, keep)
			}
		}
	}
	for name, short := range map[string]string{"jobs": "j", "out": "o", "quiet": "q"} {
		for _, u := range byName[name] {
			if u.short != short {
				t.Errorf("--%s in %s has shorthand %q, want -%s", name, u.cmd, u.short, short)
			}
		}
	}
	// One word for each kind of value in the help's placeholders, and one
	// wording for the default of --jobs (common practice, as above).
	eachFlag(newRootCommand(), func(cmd string, f *pflag.Flag) {
		value, usage := pflag.UnquoteUsage(f)
		for _, avoid := range []string{"dir", "directory", "path", "folders"} {
			if strings.EqualFold(value, avoid) {
				t.Errorf("%s --%s: value named %q; say folder or file", cmd, f.Name, value)
			}
		}
		if f.Name == "jobs" && (!strings.Contains(usage, " n ") || !strings.HasSuffix(usage, " (0: one per core)")) {
			t.Errorf("%s --jobs: %q; want \"… n … at once (0: one per core)\"", cmd, usage)
		}
	})
	for _, u := range byName["format"] {
		f := findCommand(t, u.cmd).Flags().Lookup("format")
		if !strings.Contains(f.Usage, "table") || f.DefValue != "table" {
			t.Errorf("--format in %s: %q, default %q; want table (default), json or csv", u.cmd, f.Usage, f.DefValue)
		}
	}
}

func findCommand(t *testing.T, path string) *cobra.Command {
	t.Helper()
	words := strings.Fields(path)
	c, _, err := newRootCommand().Find(words[1:])
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// TestOldFlagNamesStillWork: renamed flags keep their old spelling,
// hidden and marked deprecated (listed in the README's change notes).
func TestOldFlagNamesStillWork(t *testing.T) {
	for _, tc := range []struct{ cmd, old, now string }{
		{"triage", "model", "quality-model"},
		{"run", "model", "quality-model"},
		{"correct", "model", "correction-model"},
	} {
		c := findCommand(t, "recto "+tc.cmd)
		old, now := c.Flags().Lookup(tc.old), c.Flags().Lookup(tc.now)
		if old == nil || now == nil || !old.Hidden || old.Deprecated == "" {
			t.Errorf("recto %s: --%s should be a hidden, deprecated name of --%s", tc.cmd, tc.old, tc.now)
			continue
		}
		old.Value.Set("x.json")
		if now.Value.String() != "x.json" {
			t.Errorf("recto %s: --%s does not set --%s", tc.cmd, tc.old, tc.now)
		}
	}
}

// TestHelpHasNoLocalPaths: no command's help shows a developer's own
// files (issue 15: the lexicon build help showed /work/data/...).
func TestHelpHasNoLocalPaths(t *testing.T) {
	var walk func(c *cobra.Command)
	walk = func(c *cobra.Command) {
		for _, s := range []string{c.Long, c.Example, c.Use} {
			for _, p := range []string{"/work/", "/home/", "/tmp/", "/root/"} {
				if strings.Contains(s, p) {
					t.Errorf("%s: help mentions %q", c.CommandPath(), p)
				}
			}
		}
		for _, sub := range c.Commands() {
			walk(sub)
		}
	}
	walk(newRootCommand())
}
