package alignment

import (
	"fmt"
	"hash/fnv"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// maxSafeName is the longest SafeName result, in bytes: well inside every
// common file system's 255-byte limit, leaving room for suffixes.
const maxSafeName = 64

// fallbackName replaces a name with nothing usable left in it.
const fallbackName = "alignment"

// SafeName returns a folder name for an alignment name: letters and digits
// (any script) and . _ - are kept, every other character (path separators,
// spaces, control characters, characters Windows forbids) becomes _, runs of
// _ are collapsed, leading dots, dashes and underscores and trailing dots and
// underscores are trimmed, and a name Windows reserves (CON, NUL, COM1, ...)
// gets a trailing _. The result is never empty, never "." or "..", and at
// most 64 bytes: a longer name is cut and ends in - and 8 hex digits of a
// hash (FNV-1a) of the whole name, so distinct long names stay distinct.
// Deterministic and idempotent: SafeName(SafeName(s)) == SafeName(s).
func SafeName(name string) string {
	var b strings.Builder
	under := false
	for _, r := range name {
		ok := r != utf8.RuneError && (unicode.IsLetter(r) || unicode.IsDigit(r) || unicode.IsMark(r) || r == '.' || r == '_' || r == '-')
		if !ok || r == '_' {
			if !under {
				b.WriteByte('_')
			}
			under = true
			continue
		}
		under = false
		b.WriteRune(r)
	}
	s := strings.TrimLeft(b.String(), "._-")
	s = strings.TrimRight(s, "._")
	if s == "" {
		s = fallbackName
	}
	if reservedWindows(s) {
		s += "_"
	}
	if len(s) > maxSafeName {
		h := fnv.New32a()
		h.Write([]byte(name))
		suffix := fmt.Sprintf("-%08x", h.Sum32())
		cut := maxSafeName - len(suffix)
		for cut > 0 && !utf8.RuneStart(s[cut]) {
			cut--
		}
		s = strings.TrimRight(s[:cut], "._") + suffix
	}
	return s
}

// reservedWindows reports whether s, before any extension, is a device name
// that Windows refuses as a file name.
func reservedWindows(s string) bool {
	base, _, _ := strings.Cut(strings.ToUpper(s), ".")
	switch base {
	case "CON", "PRN", "AUX", "NUL":
		return true
	}
	if len(base) == 4 && (strings.HasPrefix(base, "COM") || strings.HasPrefix(base, "LPT")) {
		return base[3] >= '0' && base[3] <= '9'
	}
	return false
}

// nameKey is the identity of a name as a folder: two names with the same key
// would write to the same folder on a case-insensitive file system.
func nameKey(name string) string {
	return strings.ToLower(SafeName(name))
}

// uniqueNames renames, in order, every alignment whose folder key was
// already taken, appending -2, -3, ... (the smallest suffix whose key is
// neither taken nor the key of a later alignment's own name).
func uniqueNames(as []Alignment) {
	own := make(map[string]int, len(as))
	for _, a := range as {
		own[nameKey(a.Name)]++
	}
	taken := make(map[string]bool, len(as))
	for i := range as {
		key := nameKey(as[i].Name)
		if !taken[key] {
			taken[key] = true
			continue
		}
		for k := 2; ; k++ {
			cand := as[i].Name + "-" + strconv.Itoa(k)
			ck := nameKey(cand)
			if !taken[ck] && own[ck] == 0 {
				as[i].Name = cand
				taken[ck] = true
				break
			}
		}
	}
}
