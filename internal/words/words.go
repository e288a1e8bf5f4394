// Package words holds the small rules of corvane's wording shared by every
// front end: counts with the right plural. It is pure (standard library
// only).
package words

import "strconv"

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
