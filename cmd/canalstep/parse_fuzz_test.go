package main

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The command-line parsers must never panic, must report every bad input as
// a usage error (exit status 2), and must only return values the planner can
// take. Seeds cover the documented forms and their usual mistakes.

func FuzzParseAlternatives(f *testing.F) {
	for _, s := range []string{"0.5;1.0;1.5;0.5,1.0,1.5", "1", "", ";", "1;;2", "1,,2", "a;b", "-1", "1e309", "NaN", " 0.5 , 1 "} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		sets, err := parseAlternatives(s)
		if err != nil {
			var u usageError
			if !errors.As(err, &u) {
				t.Fatalf("parseAlternatives(%q): %v is not a usage error", s, err)
			}
			return
		}
		if len(sets) != strings.Count(s, ";")+1 {
			t.Fatalf("parseAlternatives(%q) gave %d sets", s, len(sets))
		}
		for _, set := range sets {
			if len(set) == 0 {
				t.Fatalf("parseAlternatives(%q) gave an empty set", s)
			}
			for _, h := range set {
				if !(h > 0) || math.IsInf(h, 0) {
					t.Fatalf("parseAlternatives(%q) gave height %v", s, h)
				}
			}
		}
	})
}

func FuzzParseControls(f *testing.F) {
	for _, s := range []string{"1250:352.40", "0:0", "1250", ":", "a:b", "1:2:3", "-5:-5", "1e400:1", "NaN:1"} {
		f.Add(s, 1.0)
	}
	f.Add("100:50", 0.3048)
	f.Fuzz(func(t *testing.T, s string, unit float64) {
		if !(unit > 0) || math.IsInf(unit, 0) {
			t.Skip()
		}
		cs, err := parseControls("fixed-invert", []string{s}, unit)
		if err != nil {
			var u usageError
			if !errors.As(err, &u) {
				t.Fatalf("parseControls(%q): %v is not a usage error", s, err)
			}
			return
		}
		if len(cs) != 1 {
			t.Fatalf("parseControls(%q) gave %d controls", s, len(cs))
		}
		if c := cs[0]; math.IsNaN(c.Chainage) || math.IsNaN(c.Level) {
			t.Fatalf("parseControls(%q) gave NaN", s)
		}
	})
}

// FuzzDesignFile feeds arbitrary text as a --design file: it is either
// refused with a usage or decode error, or it sets only known flags.
func FuzzDesignFile(f *testing.F) {
	for _, s := range []string{
		"flow = 2.5\nbottom_width = 2\n",
		"drop_heights = [0.5, 1.0]\nfixed_invert = [\"100:50\"]\n",
		"max_slpoe = 1\n", "flow = \"two\"\n", "[section]\nflow = 1\n", "flow = 1\nflow = 2\n", "design = \"x.toml\"\n", "",
	} {
		f.Add(s)
	}
	dir := f.TempDir()
	f.Fuzz(func(t *testing.T, body string) {
		path := filepath.Join(dir, "design.toml")
		if err := os.WriteFile(path, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		fs := newFlagSet("plan", &strings.Builder{})
		var pf planFlags
		pf.register(fs)
		_ = applyDesignFile(fs, path) // must not panic; any error is fine
		if pf.design != "" {
			t.Fatalf("the design file set --design itself")
		}
	})
}
