package main

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// update rewrites the golden files under testdata/ instead of comparing:
//
//	go test ./cmd/canalstep -update
var update = flag.Bool("update", false, "rewrite cmd/canalstep/testdata golden files from the current output")

// checkGolden compares got with testdata/<name>. With -update it writes got
// there instead. On a mismatch it writes testdata/<name>.got (ignored by
// git) and reports the first differing line.
func checkGolden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("read golden file: %v (run 'go test ./cmd/canalstep -update' to create it)", err)
	}
	if bytes.Equal(got, want) {
		return
	}
	if err := os.WriteFile(path+".got", got, 0o644); err != nil {
		t.Errorf("write %s.got: %v", path, err)
	}
	gl, wl := strings.Split(string(got), "\n"), strings.Split(string(want), "\n")
	for i := 0; i < len(gl) || i < len(wl); i++ {
		var g, w string
		if i < len(gl) {
			g = gl[i]
		}
		if i < len(wl) {
			w = wl[i]
		}
		if g != w {
			t.Errorf("%s differs from the golden file at line %d:\n got: %s\nwant: %s\n(output written to %s.got; run with -update if the change is intended)", path, i+1, g, w, path)
			return
		}
	}
}
