// Package textsafe makes untrusted text safe for the place it is shown or
// written. Alignment names, GeoJSON property values and free text from a
// design file are hostile input: they may carry terminal escape sequences,
// bidirectional overrides that reorder what a reader sees, bytes that are not
// UTF-8, characters XML forbids, or spreadsheet formulas.
//
//   - [Terminal] and [Clip] for one-line messages on a terminal: every
//     control, format (bidi, zero-width) or otherwise invisible character
//     becomes a visible escape such as \x1b or \u202e, and long values are
//     cut with an ellipsis.
//   - [XMLText] and [AppendXMLText] for element text and attribute values in
//     SVG, HTML and LandXML; [XMLChars] for libraries that escape text
//     themselves (gonum/plot's SVG canvas) but pass forbidden characters on.
//   - [CSVCell] for CSV cells holding names or free text.
//
// The functions are pure, allocate only their result, and are safe for
// concurrent use.
package textsafe

import (
	"strings"
	"unicode"
	"unicode/utf8"
)

// MaxTerminal is the most characters (runes) [Terminal] returns: the issue's
// "echo at most 80 characters of a bad value" in a one-line message.
const MaxTerminal = 80

// ellipsis ends a value that [Clip] cut short.
const ellipsis = "…"

// Terminal returns s escaped for a terminal and cut to at most [MaxTerminal]
// characters: it is Clip(s, MaxTerminal).
func Terminal(s string) string { return Clip(s, MaxTerminal) }

// Clip returns s escaped for a terminal and cut to at most n characters
// (runes, not display columns: a wide CJK character counts once).
//
// Printable characters (letters, marks, digits, punctuation, symbols and
// spaces of any script) are kept. Everything else becomes a visible escape,
// so a reader sees that it is there:
//   - an invalid UTF-8 byte: \xHH (always 80 to ff);
//   - \a \b \t \n \v \f \r as themselves, other C0 controls and DEL: \xHH;
//   - C1 controls (U+0080–U+009F), format characters (category Cf: the bidi
//     marks, embeddings, overrides and isolates U+061C, U+200E, U+200F,
//     U+202A–U+202E, U+2066–U+2069, zero-width U+200B–U+200D, U+2060,
//     U+FEFF, soft hyphen U+00AD, tag characters), line and paragraph
//     separators U+2028/U+2029, private-use, unassigned and noncharacter
//     code points, variation selectors and the other default-ignorable code
//     points (Hangul fillers U+115F, U+1160, U+3164, U+FFA0, ...): \uXXXX or
//     \UXXXXXXXX.
//
// A backslash is kept as it is, so a name that itself contains the text
// "\x1b" reads the same as one that contains ESC; both are harmless.
//
// When the escaped text is longer than n characters it is cut at a whole
// character or escape and ends in "…", n characters in all. n < 1 counts as
// 1. Clip reads no more of s than it needs for n characters, so a huge value
// costs O(n). The result is valid UTF-8 and Clip(Clip(s, n), n) ==
// Clip(s, n).
func Clip(s string, n int) string {
	if n < 1 {
		n = 1
	}
	var b strings.Builder
	count := 0   // characters written to b
	markLen := 0 // b's length at the last cut point with count <= n-1
	put := func(piece string, chars int) bool {
		if count+chars > n {
			return false
		}
		b.WriteString(piece)
		count += chars
		if count <= n-1 {
			markLen = b.Len()
		}
		return true
	}
	var buf [10]byte
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		var ok bool
		switch {
		case r == utf8.RuneError && size == 1:
			e := append(buf[:0], `\x`...)
			e = appendHex(e, uint32(s[i]), 2)
			ok = put(string(e), len(e))
		case printable(r):
			ok = put(s[i:i+size], 1)
		default:
			e := appendEscape(buf[:0], r)
			ok = put(string(e), len(e))
		}
		if !ok {
			return b.String()[:markLen] + ellipsis
		}
		i += size
	}
	return b.String()
}

// printable reports whether r may reach a terminal as it is.
func printable(r rune) bool {
	// IsGraphic covers letters, marks, numbers, punctuation, symbols and the
	// space separators (Zs). It excludes controls (Cc), format characters
	// (Cf), surrogates, private use, unassigned code points and U+2028/U+2029.
	if r < utf8.RuneSelf {
		return r >= 0x20 && r < 0x7f
	}
	return unicode.IsGraphic(r) &&
		!unicode.Is(unicode.Other_Default_Ignorable_Code_Point, r) &&
		!unicode.Is(unicode.Variation_Selector, r) &&
		!unicode.Is(unicode.Noncharacter_Code_Point, r)
}

// appendEscape appends the visible escape of r, which is not printable.
func appendEscape(dst []byte, r rune) []byte {
	switch r {
	case '\a':
		return append(dst, `\a`...)
	case '\b':
		return append(dst, `\b`...)
	case '\t':
		return append(dst, `\t`...)
	case '\n':
		return append(dst, `\n`...)
	case '\v':
		return append(dst, `\v`...)
	case '\f':
		return append(dst, `\f`...)
	case '\r':
		return append(dst, `\r`...)
	}
	switch {
	case r < utf8.RuneSelf:
		return appendHex(append(dst, `\x`...), uint32(r), 2)
	case r <= 0xffff:
		return appendHex(append(dst, `\u`...), uint32(r), 4)
	default:
		return appendHex(append(dst, `\U`...), uint32(r), 8)
	}
}

// appendHex appends v as exactly digits lower-case hexadecimal digits.
func appendHex(dst []byte, v uint32, digits int) []byte {
	const hex = "0123456789abcdef"
	for shift := 4 * (digits - 1); shift >= 0; shift -= 4 {
		dst = append(dst, hex[v>>uint(shift)&0xf])
	}
	return dst
}

// xmlKeep reports whether r may appear in XML text written by this package:
// the Char production of XML 1.0 (W3C, Extensible Markup Language 1.0, Fifth
// Edition, 2008, section 2.2, from memory):
//
//	#x9 | #xA | #xD | [#x20-#xD7FF] | [#xE000-#xFFFD] | [#x10000-#x10FFFF]
//
// less the characters section 2.2 asks authors to avoid and HTML treats as
// parse errors: DEL and the C1 controls [#x7F-#x9F], and the noncharacters
// [#xFDD0-#xFDEF] and #x?FFFE, #x?FFFF in every plane.
func xmlKeep(r rune) bool {
	switch {
	case r == '\t' || r == '\n' || r == '\r':
		return true
	case r < 0x20:
		return false
	case r < 0x7f:
		return true
	case r <= 0x9f:
		return false
	case r >= 0xd800 && r <= 0xdfff: // surrogates (never decoded from valid UTF-8)
		return false
	case r >= 0xfdd0 && r <= 0xfdef:
		return false
	case r&0xfffe == 0xfffe: // U+FFFE, U+FFFF, U+1FFFE, ... U+10FFFF
		return false
	}
	return r <= unicode.MaxRune
}

// XMLChars returns s with every character removed that XML 1.0 forbids or
// that this package strips (see [XMLText]): invalid UTF-8 bytes, NUL and the
// other C0 controls but tab, newline and carriage return, DEL, the C1
// controls and the noncharacters. It does not escape anything: use it for
// text handed to a library that escapes markup itself but not these
// characters, such as gonum/plot's SVG canvas (html.EscapeString). Bidi and
// other format characters are legitimate in XML text and are kept.
func XMLChars(s string) string {
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		if (r == utf8.RuneError && size == 1) || !xmlKeep(r) {
			return string(appendXMLChars(append(make([]byte, 0, len(s)), s[:i]...), s[i:]))
		}
		i += size
	}
	return s
}

func appendXMLChars(dst []byte, s string) []byte {
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		if (r != utf8.RuneError || size > 1) && xmlKeep(r) {
			dst = append(dst, s[i:i+size]...)
		}
		i += size
	}
	return dst
}

// XMLText returns s escaped for XML element text or an attribute value
// (quoted with " or '), in SVG, HTML or LandXML. Characters [XMLChars]
// removes are removed; & < > " ' become &amp; &lt; &gt; &#34; &#39;; tab,
// newline and carriage return become &#x9; &#xA; &#xD;, so that neither
// attribute-value normalisation nor end-of-line handling changes them (the
// same choices as encoding/xml.EscapeText). A parser therefore reads back
// exactly XMLChars(s). A string that needs no change is returned as it is,
// without allocating.
func XMLText(s string) string {
	i := 0
	for i < len(s) {
		if c := s[i]; c < utf8.RuneSelf {
			if xmlEscape[c] != "" || !xmlKeep(rune(c)) {
				break
			}
			i++
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		if (r == utf8.RuneError && size == 1) || !xmlKeep(r) {
			break
		}
		i += size
	}
	if i == len(s) {
		return s
	}
	return string(AppendXMLText(append(make([]byte, 0, len(s)+len(s)/4+8), s[:i]...), s[i:]))
}

// xmlEscape holds the replacement of each ASCII character XMLText escapes.
var xmlEscape = [utf8.RuneSelf]string{
	'&': "&amp;", '<': "&lt;", '>': "&gt;", '"': "&#34;", '\'': "&#39;",
	'\t': "&#x9;", '\n': "&#xA;", '\r': "&#xD;",
}

// AppendXMLText appends [XMLText](s) to dst and returns the extended buffer.
func AppendXMLText(dst []byte, s string) []byte {
	last := 0 // s[last:i] is still to be copied
	for i := 0; i < len(s); {
		if c := s[i]; c < utf8.RuneSelf {
			if esc := xmlEscape[c]; esc != "" || !xmlKeep(rune(c)) {
				dst = append(append(dst, s[last:i]...), esc...)
				last = i + 1
			}
			i++
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		if (r == utf8.RuneError && size == 1) || !xmlKeep(r) {
			dst = append(dst, s[last:i]...)
			last = i + size
		}
		i += size
	}
	return append(dst, s[last:]...)
}

// CSVCell neutralises a CSV cell that holds a name or free text, so that a
// spreadsheet opening the file does not evaluate it as a formula (CSV or
// formula injection). A cell whose first byte is = + - @, tab or carriage
// return gets a leading single quote, the remedy of the OWASP "CSV
// Injection" guidance (from memory; common practice). Every other cell is
// returned as it is.
//
// A cell that is a plain decimal number, [+-]digits[.digits][(e|E)[+-]digits]
// such as "-12.5", "+3" or "-1.5e-3", is not a formula a spreadsheet would
// run and is returned unchanged. Station labels such as "0+250.00" do not
// begin with a listed character and are unchanged too; "-0+050.00" does and
// is quoted, since a spreadsheet would compute it.
//
// Call CSVCell only for text cells; numbers the program formats itself need
// no treatment. Quoting of separators, quotes and line breaks stays the job
// of the CSV writer (encoding/csv). CSVCell(CSVCell(s)) == CSVCell(s).
func CSVCell(s string) string {
	if s == "" {
		return s
	}
	switch s[0] {
	case '=', '@', '\t', '\r':
		return "'" + s
	case '+', '-':
		if plainNumber(s) {
			return s
		}
		return "'" + s
	}
	return s
}

// plainNumber reports whether s is [+-]digits[.digits][(e|E)[+-]digits] (also
// "1." and ".5" forms), the decimal numbers a spreadsheet reads as numbers.
func plainNumber(s string) bool {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i, digits = i+1, digits+1
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i, digits = i+1, digits+1
		}
	}
	if digits == 0 {
		return false
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		exp := 0
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i, exp = i+1, exp+1
		}
		if exp == 0 {
			return false
		}
	}
	return i == len(s)
}
