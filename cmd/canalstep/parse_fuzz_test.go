package main

import (
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/report/units"
)

// The command-line parsers must never panic, must report every bad input as
// bad input (exit status 2), and must only return values the planner takes.
// Seeds cover the documented forms and their usual mistakes.

func systemOf(us bool) units.System {
	if us {
		return units.US
	}
	return units.SI
}

func FuzzParseAlternatives(f *testing.F) {
	for _, s := range []string{"0.5;1.0;1.5;0.5,1.0,1.5", "1", "", ";", "1;;2", "1,,2", "a;b", "-1", "1e309", "NaN", " 0.5 , 1 ", "21", "0x1p-1"} {
		f.Add(s, false)
	}
	f.Add("1.64;3.28", true)
	f.Fuzz(func(t *testing.T, s string, us bool) {
		sys := systemOf(us)
		p := &planSetup{sys: sys}
		p.design = newDesignFlags(&p.sys)
		sets, err := p.parseAlternatives(s)
		if err != nil {
			if exitCode(err) != 2 {
				t.Fatalf("parseAlternatives(%q): %v has exit status %d, not 2", s, err, exitCode(err))
			}
			return
		}
		if len(sets) != strings.Count(s, ";")+1 {
			t.Fatalf("parseAlternatives(%q) gave %d sets", s, len(sets))
		}
		r := planner.Ranges["drop_height"]
		for _, set := range sets {
			if len(set) == 0 {
				t.Fatalf("parseAlternatives(%q) gave an empty set", s)
			}
			for _, h := range set {
				if !r.Contains(h) {
					t.Fatalf("parseAlternatives(%q) gave height %v m, outside %s", s, h, r)
				}
			}
		}
	})
}

func FuzzParseControls(f *testing.F) {
	for _, s := range []string{"1250:352.40", "0:0", "1250", ":", "a:b", "1:2:3", "-5:-5", "1e400:1", "NaN:1",
		"East Branch@1250:352.4", "@1:2", "a@b@1:2", " @1:2", "x@", "1:Inf"} {
		f.Add(s, false, 2)
	}
	f.Add("100:50", true, 2)
	f.Add("Main@0:1500:0.15", false, 3)
	f.Fuzz(func(t *testing.T, s string, us bool, parts int) {
		if parts < 2 || parts > 3 {
			t.Skip()
		}
		sys := systemOf(us)
		df := newDesignFlags(&sys)
		cs, err := df.parseScoped("fixed-invert", []string{s}, parts, "[NAME@]CHAINAGE:LEVEL")
		if err != nil {
			if exitCode(err) != 2 {
				t.Fatalf("parseScoped(%q): %v has exit status %d, not 2", s, err, exitCode(err))
			}
			return
		}
		if len(cs) != 1 || len(cs[0].value) != parts {
			t.Fatalf("parseScoped(%q) gave %v", s, cs)
		}
		for _, v := range cs[0].value {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("parseScoped(%q) gave %v", s, v)
			}
		}
		if strings.Contains(s, "@") && cs[0].name == "" {
			t.Fatalf("parseScoped(%q) lost the alignment name", s)
		}
	})
}

// FuzzParseList reads drop-height lists in either unit system: every value
// returned lies within the planner's range in metres.
func FuzzParseList(f *testing.F) {
	for _, s := range []string{"0.5,1,1.5", "1", " 0.5 , 1.5 ", "", ",", "0,1", "-1", "NaN", "1e309", "1,,2", "0x1p-2", "abc", "20.0000001", "65.6"} {
		f.Add(s, false)
	}
	f.Add("65.6", true)
	f.Fuzz(func(t *testing.T, s string, us bool) {
		sys := systemOf(us)
		df := newDesignFlags(&sys)
		v, err := df.parseList("drop-heights", s, units.Length, "drop_height", "0.5,1.0,1.5")
		if err != nil {
			if exitCode(err) != 2 {
				t.Fatalf("parseList(%q): %v has exit status %d, not 2", s, err, exitCode(err))
			}
			return
		}
		if len(v) != strings.Count(s, ",")+1 {
			t.Fatalf("parseList(%q) = %v: wrong count", s, v)
		}
		r := planner.Ranges["drop_height"]
		for _, x := range v {
			if !r.Contains(x) {
				t.Fatalf("parseList(%q) gave %v, outside %s", s, x, r)
			}
		}
	})
}

// FuzzDesignFile feeds arbitrary text as a --design file through what plan
// does with it: read, the top level applied to the flags, the
// [alignment."NAME"] tables to the alignments' designs. It is refused as
// bad input (exit 2) or accepted; it never sets --design or --out.
func FuzzDesignFile(f *testing.F) {
	for _, s := range []string{
		"flow = 2.5\nbottom_width = 2\nside_slope = 1.5\nroughness = 0.025\nmax_velocity = 0.9\n",
		"drop_heights = [0.5, 1.0]\nfixed_invert = [\"100:50\"]\n",
		"max_slpoe = 1\n", "flow = \"two\"\n", "[section]\nflow = 1\n", "flow = 1\nflow = 2\n", "design = \"x.toml\"\n", "",
		"out = \"/tmp\"\n", "units = \"us\"\nflow = 88\n", "units = \"furlongs\"\n", "flow = 1e300\n", "flow = [1, [2]]\n",
		"[alignment.\"A\"]\nflow = 3\n", "[alignment.\"B\"]\nflow = 3\n", "[alignment.\"A\"]\nspacing = 3\n", "alignment = 3\n",
		"[alignment]\nA = 1\n", "[alignment.\"A\"]\nfixed_invert = [\"A@1:2\", \"1:2\"]\n", "flow = 2.5\n[alignment.\"A\"]\n[alignment.\"A\".x]\n",
		"ground = \"level\"\ncommand_margin = 0.1\ncommand = [\"0:100:0.2\"]\n", "flow = 2.5 # comment\n\x00", "a = \"\\u001b[31m\"\n",
	} {
		f.Add(s)
	}
	dir := f.TempDir()
	sc := scheme{alignment.Scheme{Alignments: []alignment.Alignment{{Name: "A"}}}}
	f.Fuzz(func(t *testing.T, body string) {
		path := filepath.Join(dir, "design.toml")
		if err := os.WriteFile(path, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		args := []string{"--design", path}
		s, err := newPlanSetup("plan", args, io.Discard)
		if err == nil {
			var ok bool
			if ok, err = s.parse(args); ok && err == nil {
				if s.out != "canalstep-out" {
					t.Fatalf("the design file set --out to %q", s.out)
				}
				if got := s.fs.Lookup("design").Value.String(); got != path {
					t.Fatalf("the design file set --design to %q", got)
				}
				_, err = s.designs(sc)
			}
		}
		if err != nil && exitCode(err) != 2 {
			t.Fatalf("design file %q: %v has exit status %d, not 2", body, err, exitCode(err))
		}
		if err != nil && strings.ContainsAny(oneLine(err), "\x00\x1b\r\n") {
			t.Fatalf("error line %q holds control characters", oneLine(err))
		}
	})
}
