// Package spelling finds the known word a misspelt one was probably meant to be, for the
// "did you mean" hints of the catalog reader, the run configuration and the command line.
package spelling

import "strings"

// Distance is the Levenshtein distance between a and b, in bytes: the least number of
// single-byte insertions, deletions and substitutions that turn a into b (Levenshtein 1966).
func Distance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

// Nearest returns the word of known nearest to word, compared without regard to case, or ""
// if none is close: at most two edits away, and fewer edits than half the word's length, so
// that short words do not match everything. A word equal to a known one but for case returns
// that one. Of equally near words the first in known wins.
func Nearest(word string, known []string) string {
	w := strings.ToLower(word)
	best, bestDist := "", 3
	for _, k := range known {
		if d := Distance(w, strings.ToLower(k)); d < bestDist && 2*d < len(w) {
			best, bestDist = k, d
		}
	}
	return best
}
