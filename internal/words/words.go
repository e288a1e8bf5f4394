// Package words holds the small rules of corvane's wording shared by every
// front end: counts with the right plural, and how option values are
// spelt. It is pure (standard library only).
package words

import (
	"strconv"
	"strings"
)

// Option folds an option value for comparison: the same value may come as a
// command-line flag (--of dip-direction) or a query parameter
// (of=dip_direction), so case and surrounding space do not count and "_" and
// "-" are the same letter. Compare the result with the hyphenated spelling.
func Option(s string) string {
	return strings.ReplaceAll(strings.ToLower(strings.TrimSpace(s)), "_", "-")
}

// Plural is "1 run", "2 runs", "0 runs": n and the word, with an s unless n is 1.
func Plural(n int, word string) string {
	return strconv.Itoa(n) + " " + Noun(n, word)
}

// Noun is word, with an s unless n is 1 ("run" or "runs").
func Noun(n int, word string) string {
	if n == 1 {
		return word
	}
	return word + "s"
}

// SameCode reports whether two type codes are the same code: codes match
// without regard to case or surrounding space, everywhere (imports, the API,
// filters, the commands, QA).
func SameCode(a, b string) bool {
	return strings.EqualFold(strings.TrimSpace(a), strings.TrimSpace(b))
}
