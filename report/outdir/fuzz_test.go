package outdir

import (
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf8"
)

// FuzzName checks that every name the validator accepts stays one visible
// element inside the output folder.
func FuzzName(f *testing.F) {
	for _, s := range []string{"Main", "..", "../x", "/abs", ".hidden", "a\x00b", "a\u202eb", "主干渠", "a/b", `a\b`, "CON", strings.Repeat("x", 200)} {
		f.Add(s)
	}
	root := filepath.FromSlash("/out/root")
	f.Fuzz(func(t *testing.T, s string) {
		if checkName(s) != nil {
			return
		}
		p := filepath.Join(root, s)
		if filepath.Dir(p) != root || filepath.Base(p) != s || !filepath.IsLocal(s) {
			t.Fatalf("accepted %q leaves the folder: %s", s, p)
		}
		if strings.HasPrefix(s, ".") || len(s) > MaxNameLen || !utf8.ValidString(s) {
			t.Fatalf("accepted %q: hidden, too long or not UTF-8", s)
		}
		for _, r := range s {
			if r < 0x20 || r == 0x7f || (r >= 0x80 && r <= 0x9f) || (r >= 0x202a && r <= 0x202e) || (r >= 0x2066 && r <= 0x2069) {
				t.Fatalf("accepted %q with %U", s, r)
			}
		}
		if _, ok := oldName(oldEntry(3, s)); !ok {
			t.Fatalf("the moved-aside name of %q does not parse back", s)
		}
	})
}

// FuzzHolder checks that any lock-file content parses without a panic into
// a pid that is unknown or positive.
func FuzzHolder(f *testing.F) {
	for _, s := range []string{"pid 12 host a\n", "", "pid", "host", "pid -1", "pid 1 pid 2", "pid 9999999999999999999999"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		h := parseHolder(b)
		if h.PID < 0 {
			t.Fatalf("parseHolder(%q) = %+v", b, h)
		}
		if strings.ContainsAny(h.Host, " \t\n") {
			t.Fatalf("host %q holds white space", h.Host)
		}
		_ = h.String()
	})
}
