package textsafe

import (
	"bytes"
	"encoding/csv"
	"encoding/xml"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf8"

	"canalstep/testdata/reftool"
)

func TestTerminal(t *testing.T) {
	tests := []struct {
		name, in, want string
		source         string
	}{
		{"plain ASCII", "Main canal 2", "Main canal 2", "common practice, no source"},
		{"Latin accents", "Kanal Süd-Ost", "Kanal Süd-Ost", "common practice, no source"},
		{"combining acute", "Cafe\u0301", "Cafe\u0301", "Unicode: U+0301 is a combining mark (Mn), from memory"},
		{"Arabic", "قناة رئيسية", "قناة رئيسية", "common practice, no source"},
		{"CJK", "主干渠", "主干渠", "common practice, no source"},
		{"NBSP kept", "A\u00a0B", "A\u00a0B", "U+00A0 is a space separator (Zs), from memory"},
		{"backslash kept", `C:\data`, `C:\data`, "documented choice, no source"},
		{"ESC colour sequence", "A\x1b[31mred", `A\x1b[31mred`, "ECMA-48: ESC is 0x1B, CSI is ESC [, from memory"},
		{"OSC title sequence", "\x1b]0;pwned\a", `\x1b]0;pwned\a`, "xterm control sequences: OSC 0 sets the title, ends in BEL, from memory"},
		{"BEL", "bell\x07", `bell\a`, "ASCII: BEL is 0x07, from memory"},
		{"CR overwrites line", "good\rEVIL", `good\rEVIL`, "ASCII: CR is 0x0D, from memory"},
		{"newline", "a\nb", `a\nb`, "ASCII: LF is 0x0A, from memory"},
		{"tab", "a\tb", `a\tb`, "ASCII: HT is 0x09, from memory"},
		{"NUL", "nul\x00x", `nul\x00x`, "ASCII: NUL is 0x00, from memory"},
		{"backspace", "ab\x08c", `ab\bc`, "ASCII: BS is 0x08, from memory"},
		{"DEL", "a\x7f", `a\x7f`, "ASCII: DEL is 0x7F, from memory"},
		{"C1 CSI", "a\u009b31m", `a\u009b31m`, "ECMA-48: 8-bit CSI is 0x9B, from memory"},
		{"C1 NEL", "a\u0085b", `a\u0085b`, "ISO 6429: NEL is 0x85, from memory"},
		{"invalid byte", "a\xffb", `a\xffb`, "RFC 3629 section 3: 0xFF never appears in UTF-8, from memory"},
		{"truncated sequence", "a\xe2\x80", `a\xe2\x80`, "RFC 3629: a 3-byte sequence cut short is invalid, from memory"},
		{"encoded surrogate", "\xed\xa0\x80", `\xed\xa0\x80`, "RFC 3629 section 3: surrogates U+D800-U+DFFF are not encoded, from memory"},
		{"overlong slash", "\xc0\xaf", `\xc0\xaf`, "RFC 3629 section 10: overlong forms are invalid, from memory"},
		{"RLO override", "abc\u202edcba", `abc\u202edcba`, "Unicode UAX #9: RLO is U+202E, from memory"},
		{"LRO override", "\u202dx", `\u202dx`, "Unicode UAX #9: LRO is U+202D, from memory"},
		{"embeddings and PDF", "\u202a\u202b\u202c", `\u202a\u202b\u202c`, "Unicode UAX #9: LRE U+202A, RLE U+202B, PDF U+202C, from memory"},
		{"isolates", "\u2066\u2067\u2068\u2069", `\u2066\u2067\u2068\u2069`, "Unicode UAX #9: LRI, RLI, FSI, PDI are U+2066-U+2069, from memory"},
		{"marks", "\u200e\u200f\u061c", `\u200e\u200f\u061c`, "Unicode UAX #9: LRM U+200E, RLM U+200F, ALM U+061C, from memory"},
		{"zero width", "a\u200bb\u200cc\u200dd\u2060e", `a\u200bb\u200cc\u200dd\u2060e`, "Unicode: ZWSP, ZWNJ, ZWJ, WJ are format characters (Cf), from memory"},
		{"BOM", "\ufeffname", `\ufeffname`, "Unicode: U+FEFF ZERO WIDTH NO-BREAK SPACE is Cf, from memory"},
		{"soft hyphen", "Main\u00adcanal", `Main\u00adcanal`, "Unicode: U+00AD SOFT HYPHEN is Cf, from memory"},
		{"line separator", "a\u2028b\u2029c", `a\u2028b\u2029c`, "Unicode: U+2028 is Zl, U+2029 is Zp, from memory"},
		{"Hangul filler", "a\u3164b", `a\u3164b`, "Unicode: U+3164 is Default_Ignorable_Code_Point, from memory"},
		{"variation selector", "a\ufe0fb", `a\ufe0fb`, "Unicode: U+FE0F is a variation selector, from memory"},
		{"private use", "\ue000", `\ue000`, "Unicode: U+E000 starts the Private Use Area, from memory"},
		{"tag character", "a\U000e0041", `a\U000e0041`, "Unicode: U+E0041 TAG LATIN CAPITAL LETTER A is Cf, from memory"},
		{"noncharacter", "\ufdd0\uffff", `\ufdd0\uffff`, "Unicode: U+FDD0 and U+FFFF are noncharacters, from memory"},
		{"unassigned", "\u0378", `\u0378`, "Unicode: U+0378 is unassigned in the Greek block, from memory"},
		{"replacement char kept", "a\ufffdb", "a\ufffdb", "U+FFFD is a visible symbol (So), from memory"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := Terminal(tt.in); got != tt.want {
				t.Errorf("Terminal(%q) = %q, want %q (%s)", tt.in, got, tt.want, tt.source)
			}
		})
	}
}

func TestClip(t *testing.T) {
	tests := []struct {
		in   string
		n    int
		want string
	}{ // the lengths follow from Clip's documented contract, no outside source
		{"", 5, ""},
		{"abcdef", 6, "abcdef"},
		{"abcdefg", 6, "abcde…"},
		{"ééééé", 3, "éé…"},
		{"ab\x1bcd", 8, `ab\x1bcd`}, // 2 + 4 + 2 characters: fits exactly
		{"ab\x1bcd", 7, `ab\x1b…`},  // cut after the whole escape
		{"ab\x1bcd", 5, "ab…"},      // never half an escape
		{"\U000e0041xyz", 4, "…"},   // a 10-character escape does not fit in 3
		{"x", 0, "x"},               // n < 1 counts as 1
		{"xy", -3, "…"},             // a cut value never vanishes
		{"abc…", 4, "abc…"},         // an ellipsis in the input is an ordinary character
		{"a\u202eb", 3, "a…"},       // the escape of U+202E is 6 characters
		{strings.Repeat("€", 9), 9, strings.Repeat("€", 9)},
	}
	for _, tt := range tests {
		if got := Clip(tt.in, tt.n); got != tt.want {
			t.Errorf("Clip(%q, %d) = %q, want %q", tt.in, tt.n, got, tt.want)
		}
	}
	long := strings.Repeat("a", 200)
	got := Terminal(long)
	if n := utf8.RuneCountInString(got); n != MaxTerminal || !strings.HasSuffix(got, "…") || got[:79] != long[:79] {
		t.Errorf("Terminal(200 × a) = %q (%d characters), want 79 × a and …, %d in all (the issue: at most 80 characters)", got, n, MaxTerminal)
	}
}

func TestXMLChars(t *testing.T) {
	tests := []struct {
		name, in, want, source string
	}{
		{"plain", "Main & <side> canal", "Main & <side> canal", "XML 1.0 section 2.2 Char production, from memory"},
		{"tab LF CR kept", "a\tb\nc\rd", "a\tb\nc\rd", "XML 1.0 section 2.2: #x9 #xA #xD are Char, from memory"},
		{"NUL and ESC removed", "a\x00b\x1bc", "abc", "XML 1.0 section 2.2: #x0-#x8, #xB, #xC, #xE-#x1F are not Char, from memory"},
		{"VT FF removed", "a\vb\fc", "abc", "XML 1.0 section 2.2, from memory"},
		{"DEL and C1 removed", "a\x7fb\u0085c\u009fd", "abcd", "XML 1.0 section 2.2: [#x7F-#x84], [#x86-#x9F] discouraged, from memory"},
		{"FFFE FFFF removed", "a\ufffeb\uffffc", "abc", "XML 1.0 section 2.2: #xFFFE and #xFFFF are not Char, from memory"},
		{"plane noncharacters removed", "a\U0001fffeb\U0010ffffc", "abc", "XML 1.0 section 2.2: #x1FFFE-#x1FFFF ... #x10FFFE-#x10FFFF discouraged, from memory"},
		{"FDD0 removed", "a\ufdd0b\ufdefc", "abc", "XML 1.0 section 2.2: [#xFDD0-#xFDEF] discouraged, from memory"},
		{"invalid UTF-8 removed", "a\xffb\xed\xa0\x80c", "abc", "XML 1.0 section 2.2: surrogate blocks are not Char; RFC 3629, from memory"},
		{"FFFD kept", "a\ufffdb", "a\ufffdb", "XML 1.0 section 2.2: [#xE000-#xFFFD] are Char, from memory"},
		{"bidi kept", "a\u202eb", "a\u202eb", "XML 1.0 section 2.2: U+202E is Char; documented choice"},
		{"astral kept", "a\U0001f30ab", "a\U0001f30ab", "XML 1.0 section 2.2: [#x10000-#x10FFFF] are Char, from memory"},
	}
	for _, tt := range tests {
		if got := XMLChars(tt.in); got != tt.want {
			t.Errorf("%s: XMLChars(%q) = %q, want %q (%s)", tt.name, tt.in, got, tt.want, tt.source)
		}
	}
}

func TestXMLText(t *testing.T) {
	tests := []struct {
		in, want string
	}{ // entity and character references: XML 1.0 sections 4.1 and 4.6, from memory
		{"Main canal", "Main canal"},
		{`A & B <"x"> 'y'`, "A &amp; B &lt;&#34;x&#34;&gt; &#39;y&#39;"},
		{"a\tb\nc\rd", "a&#x9;b&#xA;c&#xD;d"},
		{"]]>", "]]&gt;"}, // the CDATA-section close may not appear in text (XML 1.0 section 2.4, from memory)
		{"a\x00b\x1bc\ufffed\xffe", "abcde"},
		{"x\u009b<", "x&lt;"},
		{"", ""},
	}
	for _, tt := range tests {
		if got := XMLText(tt.in); got != tt.want {
			t.Errorf("XMLText(%q) = %q, want %q", tt.in, got, tt.want)
		}
		if got := string(AppendXMLText([]byte("pre:"), tt.in)); got != "pre:"+tt.want {
			t.Errorf("AppendXMLText(pre:, %q) = %q, want %q", tt.in, got, "pre:"+tt.want)
		}
	}
}

// hostileNames are the values the issue names: ESC, BEL, CR, NUL, bidi
// overrides, plus invalid UTF-8 and markup.
var hostileNames = []string{
	"Main\x1b[31m canal", "bell\x07", "over\rwrite", "nul\x00name", "abc\u202edcba\u202c",
	"bad\xff\xfeUTF-8", "\xed\xa0\x80surrogate", "<script>alert('x')</script>", "a]]>b&c", "\ufffe\uffff",
	"tab\tnew\nline", "\u0085\u009b", "Kanal Süd \U0001f30a",
}

// parseText decodes XMLText(s) as element text and as an attribute value
// with encoding/xml and returns both.
func parseText(t *testing.T, s string) (text, attr string) {
	t.Helper()
	doc := `<a b="` + XMLText(s) + `" c='` + XMLText(s) + `'>` + XMLText(s) + `</a>`
	var v struct {
		B    string `xml:"b,attr"`
		C    string `xml:"c,attr"`
		Text string `xml:",chardata"`
	}
	d := xml.NewDecoder(strings.NewReader(doc))
	d.Strict = true
	if err := d.Decode(&v); err != nil {
		t.Fatalf("encoding/xml rejects %q: %v", doc, err)
	}
	if v.B != v.C {
		t.Fatalf("double- and single-quoted attributes differ: %q, %q", v.B, v.C)
	}
	return v.Text, v.B
}

func TestXMLTextParses(t *testing.T) {
	for _, s := range hostileNames {
		text, attr := parseText(t, s)
		if want := XMLChars(s); text != want || attr != want {
			t.Errorf("XMLText(%q) reads back as text %q, attribute %q; want %q", s, text, attr, want)
		}
	}
}

// TestXMLTextXmllint checks an SVG carrying every hostile name with libxml2's
// xmllint, an outside parser that is strict about the Char production.
func TestXMLTextXmllint(t *testing.T) {
	xmllint := reftool.Need(t, "xmllint")
	var b bytes.Buffer
	b.WriteString(`<?xml version="1.0" encoding="UTF-8"?>` + "\n")
	b.WriteString(`<svg xmlns="http://www.w3.org/2000/svg" width="100" height="100">` + "\n")
	for i, s := range hostileNames {
		b.WriteString(`<text id="t` + string(rune('a'+i)) + `" data-name="` + XMLText(s) + `">` + XMLText(s) + "</text>\n")
	}
	b.WriteString("</svg>\n")
	path := filepath.Join(t.TempDir(), "names.svg")
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(xmllint, "--noout", path).CombinedOutput()
	if err != nil {
		t.Fatalf("xmllint --noout rejects the SVG: %v\n%s\n%s", err, out, b.Bytes())
	}
	// The same file without XMLText is what the issue reports: ill-formed.
	raw := strings.ReplaceAll(b.String(), XMLText(hostileNames[0]), hostileNames[0])
	if err := os.WriteFile(path, []byte(raw), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := exec.Command(xmllint, "--noout", path).Run(); err == nil {
		t.Errorf("xmllint accepts a raw ESC in element text; the check above proves nothing")
	}
}

func TestCSVCell(t *testing.T) {
	const owasp = "OWASP, CSV Injection: prefix cells starting with = + - @ tab CR with ', from memory"
	tests := []struct {
		in, want, source string
	}{
		{"=1+1", "'=1+1", owasp},
		{"=HYPERLINK(\"http://example.invalid\",\"x\")", "'=HYPERLINK(\"http://example.invalid\",\"x\")", owasp},
		{"@SUM(A1:A9)", "'@SUM(A1:A9)", owasp},
		{"+cmd|' /C calc'!A0", "'+cmd|' /C calc'!A0", owasp},
		{"-2+3+cmd|' /C calc'!A0", "'-2+3+cmd|' /C calc'!A0", owasp},
		{"\t=1", "'\t=1", owasp},
		{"\r=1", "'\r=1", owasp},
		{"-", "'-", "documented rule: no digits, not a number"},
		{"-e5", "'-e5", "documented rule: no digits before the exponent"},
		{"-1e", "'-1e", "documented rule: an exponent needs digits"},
		{"-1.2.3", "'-1.2.3", "documented rule: one decimal point"},
		{"-0+050.00", "'-0+050.00", "a spreadsheet would compute -0+50; common practice, no source"},
		{"-12.5", "-12.5", "documented rule: a plain number is not a formula"},
		{"+3", "+3", "documented rule"},
		{"-1.5e-3", "-1.5e-3", "documented rule"},
		{"-.5", "-.5", "documented rule"},
		{"+5.", "+5.", "documented rule"},
		{"-7E+02", "-7E+02", "documented rule"},
		{"0+250.00", "0+250.00", "station label: does not begin with a listed character"},
		{"Main canal", "Main canal", "common practice, no source"},
		{"'=x", "'=x", "already neutralised: unchanged (idempotent)"},
		{" =1", " =1", "documented rule: only the first byte counts"},
		{"", "", "documented rule"},
	}
	for _, tt := range tests {
		if got := CSVCell(tt.in); got != tt.want {
			t.Errorf("CSVCell(%q) = %q, want %q (%s)", tt.in, got, tt.want, tt.source)
		}
	}
}

// TestCSVCellThroughWriter writes neutralised cells with encoding/csv and
// reads them back: the quote survives quoting, and the number is untouched.
func TestCSVCellThroughWriter(t *testing.T) {
	row := []string{"=1+1", "-12.5", "0+250.00", "a,\"b\"\n=c", "\r=1"}
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	out := make([]string, len(row))
	for i, c := range row {
		out[i] = CSVCell(c)
	}
	if err := w.Write(out); err != nil {
		t.Fatal(err)
	}
	w.Flush()
	got, err := csv.NewReader(&b).Read()
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"'=1+1", "-12.5", "0+250.00", "a,\"b\"\n=c", "'\r=1"}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("cell %d read back as %q, want %q", i, got[i], want[i])
		}
	}
}
