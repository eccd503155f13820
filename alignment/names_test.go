package alignment

import (
	"strings"
	"testing"
	"unicode"
	"unicode/utf8"
)

func TestSafeName(t *testing.T) {
	// Expected outputs follow the rules in SafeName's doc; the reserved
	// device names are Microsoft's "Naming Files, Paths, and Namespaces"
	// (from memory).
	long := strings.Repeat("a", 100)
	for _, tt := range []struct{ in, want string }{
		{"Main canal", "Main_canal"},
		{"../../etc/passwd", "etc_passwd"},
		{"..", "alignment"},
		{".", "alignment"},
		{"", "alignment"},
		{"   ", "alignment"},
		{".hidden", "hidden"},
		{"-rf", "rf"},
		{"a\x00b\nc", "a_b_c"},
		{`C:\canal\x`, "C_canal_x"},
		{"Canal Süd", "Canal_Süd"},
		{"qanāt 3", "qanāt_3"},
		{"lateral <2>?", "lateral_2"},
		{"CON", "CON_"},
		{"com1.geojson", "com1.geojson_"},
		{"console", "console"},
		{"a__b", "a_b"},
		{"trailing.", "trailing"},
		{"bad\xffutf8", "bad_utf8"},
		{long, strings.Repeat("a", 55) + "-0a0bb1d9"}, // FNV-1a 32 of 100 × "a", computed with a 5-line Python FNV-1a (Fowler, Noll, Vo; IETF draft-eastlake-fnv)
	} {
		if got := SafeName(tt.in); got != tt.want {
			t.Errorf("SafeName(%q) = %q, want %q", tt.in, got, tt.want)
		}
	}
}

// checkSafeName checks the properties SafeName promises for any input.
func checkSafeName(t *testing.T, in string) {
	t.Helper()
	got := SafeName(in)
	switch {
	case got == "" || got == "." || got == "..":
		t.Errorf("SafeName(%q) = %q", in, got)
	case len(got) > maxSafeName:
		t.Errorf("SafeName(%q) = %q: %d bytes > %d", in, got, len(got), maxSafeName)
	case !utf8.ValidString(got):
		t.Errorf("SafeName(%q) = %q: not UTF-8", in, got)
	case strings.ContainsAny(got, `/\:*?"<>| `) || strings.HasPrefix(got, ".") || strings.HasPrefix(got, "-"):
		t.Errorf("SafeName(%q) = %q: unsafe character", in, got)
	case strings.IndexFunc(got, unicode.IsControl) >= 0:
		t.Errorf("SafeName(%q) = %q: control character", in, got)
	case SafeName(got) != got:
		t.Errorf("SafeName(%q) = %q but SafeName of that is %q", in, got, SafeName(got))
	}
}

func TestSafeNameProperties(t *testing.T) {
	for _, in := range []string{"x", "é" + strings.Repeat("ü", 80), strings.Repeat("/", 300), "\u202etxt.exe", "a\u0301b", strings.Repeat("a.", 70)} {
		checkSafeName(t, in)
	}
}
