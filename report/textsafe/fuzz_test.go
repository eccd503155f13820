package textsafe

import (
	"bytes"
	"encoding/csv"
	"strings"
	"testing"
	"unicode"
	"unicode/utf8"
)

// seeds are shared by the fuzz targets: the hostile characters and
// ordinary names.
var seeds = append([]string{
	"", "Main canal", "-12.5", "0+250.00", "=1+1", "@x", "\t", "\r\n", "…", strings.Repeat("ab", 60),
	"\U000e0041", "\ufeff", "\u3164", "\ufe0f", "\U0010ffff", "\xf4\x90\x80\x80", "\xc0\x80",
}, hostileNames...)

// bidiControls are the explicit bidirectional formatting characters of
// Unicode UAX #9 (from memory), listed here independently of the code.
var bidiControls = []rune{0x061c, 0x200e, 0x200f, 0x202a, 0x202b, 0x202c, 0x202d, 0x202e, 0x2066, 0x2067, 0x2068, 0x2069}

func addSeeds(f *testing.F) {
	for _, s := range seeds {
		f.Add(s)
	}
}

func FuzzTerminal(f *testing.F) {
	addSeeds(f)
	f.Fuzz(func(t *testing.T, s string) {
		got := Terminal(s)
		if !utf8.ValidString(got) {
			t.Fatalf("Terminal(%q) = %q: not valid UTF-8", s, got)
		}
		if n := utf8.RuneCountInString(got); n > MaxTerminal {
			t.Fatalf("Terminal(%q) has %d characters, more than %d", s, n, MaxTerminal)
		}
		for _, r := range got {
			switch {
			case r < 0x20 || r == 0x7f || (r >= 0x80 && r <= 0x9f):
				t.Fatalf("Terminal(%q) = %q keeps control character %U", s, got, r)
			case unicode.Is(unicode.Cf, r) || unicode.Is(unicode.Zl, r) || unicode.Is(unicode.Zp, r):
				t.Fatalf("Terminal(%q) = %q keeps format or separator character %U", s, got, r)
			}
			for _, b := range bidiControls {
				if r == b {
					t.Fatalf("Terminal(%q) = %q keeps bidi control %U", s, got, r)
				}
			}
		}
		if again := Terminal(got); again != got {
			t.Fatalf("Terminal is not idempotent: %q -> %q -> %q", s, got, again)
		}
		// Printable ASCII that fits is shown as it is.
		plain := true
		for i := 0; i < len(s); i++ {
			plain = plain && s[i] >= 0x20 && s[i] < 0x7f
		}
		if plain && len(s) <= MaxTerminal && got != s {
			t.Fatalf("Terminal(%q) = %q, want it unchanged", s, got)
		}
		if len(s) > 0 && got == "" {
			t.Fatalf("Terminal(%q) is empty", s)
		}
	})
}

// xmlChar is the Char production of XML 1.0, section 2.2 (from memory),
// written out here independently of xmlKeep.
func xmlChar(r rune) bool {
	return r == 0x9 || r == 0xa || r == 0xd || (r >= 0x20 && r <= 0xd7ff) ||
		(r >= 0xe000 && r <= 0xfffd) || (r >= 0x10000 && r <= 0x10ffff)
}

func FuzzXMLText(f *testing.F) {
	addSeeds(f)
	f.Fuzz(func(t *testing.T, s string) {
		kept := XMLChars(s)
		if !utf8.ValidString(kept) {
			t.Fatalf("XMLChars(%q) = %q: not valid UTF-8", s, kept)
		}
		for _, r := range kept {
			if !xmlChar(r) || (r >= 0x7f && r <= 0x9f) {
				t.Fatalf("XMLChars(%q) = %q keeps %U", s, kept, r)
			}
		}
		// The parser reads back exactly the kept characters, in text and in
		// both kinds of quoted attribute.
		text, attr := parseText(t, s)
		if text != kept || attr != kept {
			t.Fatalf("XMLText(%q) reads back as text %q, attribute %q; want %q", s, text, attr, kept)
		}
		// Printable input (every character allowed) round-trips unchanged.
		printableInput := utf8.ValidString(s)
		for _, r := range s {
			printableInput = printableInput && xmlChar(r) && !(r >= 0x7f && r <= 0x9f) &&
				!(r >= 0xfdd0 && r <= 0xfdef) && r&0xfffe != 0xfffe
		}
		if printableInput && (kept != s || text != s) {
			t.Fatalf("printable %q did not round-trip: kept %q, parsed %q", s, kept, text)
		}
		if got := XMLText(s); strings.ContainsAny(got, "<>\"'\t\n\r") {
			t.Fatalf("XMLText(%q) = %q leaves markup or white space unescaped", s, got)
		}
	})
}

func FuzzCSVCell(f *testing.F) {
	addSeeds(f)
	f.Fuzz(func(t *testing.T, s string) {
		got := CSVCell(s)
		if got != s && got != "'"+s {
			t.Fatalf("CSVCell(%q) = %q: neither the cell nor the cell with a leading quote", s, got)
		}
		if CSVCell(got) != got {
			t.Fatalf("CSVCell is not idempotent on %q: %q -> %q", s, got, CSVCell(got))
		}
		if got != "" && strings.ContainsRune("=@\t\r", rune(got[0])) {
			t.Fatalf("CSVCell(%q) = %q still begins with %q", s, got, got[0])
		}
		if got != "" && (got[0] == '+' || got[0] == '-') {
			// Only a number may keep a leading sign: digits, one sign per
			// mantissa and exponent, a point, an e.
			if strings.Trim(got[1:], "0123456789.eE+-") != "" || !strings.ContainsAny(got, "0123456789") {
				t.Fatalf("CSVCell(%q) = %q keeps a leading sign on a non-number", s, got)
			}
		}
		// A cell that does not start with a listed character is never touched.
		if s == "" || !strings.ContainsRune("=+-@\t\r", rune(s[0])) {
			if got != s {
				t.Fatalf("CSVCell(%q) = %q changed a harmless cell", s, got)
			}
		}
		// encoding/csv carries the cell through unchanged.
		var b bytes.Buffer
		w := csv.NewWriter(&b)
		if err := w.Write([]string{got, "x"}); err != nil {
			t.Fatalf("encoding/csv refuses %q: %v", got, err)
		}
		w.Flush()
		rec, err := csv.NewReader(&b).Read()
		if err != nil {
			t.Fatalf("read back %q: %v", b.String(), err)
		}
		// The reader turns \r\n inside a quoted field into \n (its documented rule).
		if want := strings.ReplaceAll(got, "\r\n", "\n"); rec[0] != want {
			t.Fatalf("encoding/csv read %q back as %q", got, rec[0])
		}
	})
}
