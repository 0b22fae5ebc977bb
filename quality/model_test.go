package quality

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

func TestDefaultModelValid(t *testing.T) {
	m := DefaultModel()
	if m.Version != ModelVersion || len(m.Record.Terms) == 0 || len(m.Text.Terms) == 0 {
		t.Fatalf("embedded model: %+v", m.Fit)
	}
	clean := TextFeatures("Call me Ishmael. Some years ago, never mind how long precisely, having little or no money in my purse, and nothing particular to interest me on shore, I thought I would sail about a little and see the watery part of the world.", nil)
	noisy := TextFeatures("Ca1l rne Ishrnae1. S0me yc4rs ag0, ncvcr rnind h0w 1ong prcc1sely, hav1ng l1ttlc 0r n0 rn0ney 1n rny purse, aud n0th1ng part1cu1ar t0 1ntcrest rne 0n sh0re, 1 th0ught 1 w0u1d sai1 ab0ut a 1itt1e aud see tbe watery part 0f tbe w0r1d.", nil)
	pc, pn := m.PredictCER(clean), m.PredictCER(noisy)
	if !(pc >= 0 && pc < 0.05 && pn > 0.10 && pn <= 1) {
		t.Errorf("predicted CER: clean prose %.3f (want < 0.05), noisy copy %.3f (want > 0.10)", pc, pn)
	}
}

func TestModelSaveLoad(t *testing.T) {
	p := filepath.Join(t.TempDir(), "m.json")
	if err := DefaultModel().Save(p); err != nil {
		t.Fatal(err)
	}
	m, err := LoadModel(p)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(m, DefaultModel()) {
		t.Error("model changed in a save/load round trip")
	}
}

func TestLoadModelErrors(t *testing.T) {
	dir := t.TempDir()
	write := func(name, body string) string {
		p := filepath.Join(dir, name)
		os.WriteFile(p, []byte(body), 0o644)
		return p
	}
	good, _ := os.ReadFile("model/default.json")
	tests := []struct{ name, path, msg string }{
		{"missing", filepath.Join(dir, "none.json"), "no such file"},
		{"not JSON", write("a.json", "rescan everything"), "invalid quality model"},
		{"wrong version", write("b.json", `{"version": 9}`), "version 9"},
		{"unknown term", write("c.json", strings.Replace(string(good), `"garbage"`, `"astrology"`, 1)), `unknown term "astrology"`},
		{"rescan factor", write("d.json", strings.Replace(string(good), `"rescan_factor": `, `"rescan_factor": 1`, 1)), "rescan factor"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			m, err := LoadModel(tt.path)
			if err == nil || m != nil {
				t.Fatalf("LoadModel = %v, %v; want nil and an error", m, err)
			}
			if !strings.Contains(err.Error(), tt.msg) || !strings.Contains(err.Error(), filepath.Base(tt.path)) {
				t.Errorf("error %q should name the file and contain %q", err, tt.msg)
			}
			if tt.name != "missing" && !errors.Is(err, ErrModel) {
				t.Errorf("error %v does not wrap ErrModel", err)
			}
		})
	}
}
