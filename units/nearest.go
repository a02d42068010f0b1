package units

import "strings"

// Nearest returns the candidate closest to word by edit distance, for
// "did you mean" hints, and false when none is close enough to be a likely
// typo. The distance counts insertions, deletions, substitutions and swaps
// of two neighbouring characters, ignoring case (the optimal string
// alignment distance, a restricted form of F. J. Damerau, "A technique for
// computer detection and correction of spelling errors", Communications of
// the ACM 7(3), 1964). A word of up to 4 characters may be 1 edit away, up
// to 8 characters 2 edits, longer words 3; ties go to the earlier
// candidate.
func Nearest(word string, candidates []string) (string, bool) {
	w := []rune(strings.ToLower(word))
	limit := 3
	switch {
	case len(w) <= 4:
		limit = 1
	case len(w) <= 8:
		limit = 2
	}
	best, bestD := "", limit+1
	for _, c := range candidates {
		if d := editDistance(w, []rune(strings.ToLower(c))); d < bestD {
			best, bestD = c, d
		}
	}
	return best, bestD <= limit
}

// editDistance is the optimal string alignment distance between a and b.
func editDistance(a, b []rune) int {
	// rows i-2, i-1 and i of the dynamic-programming table
	prev2 := make([]int, len(b)+1)
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
			d := min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
			if i > 1 && j > 1 && a[i-1] == b[j-2] && a[i-2] == b[j-1] {
				d = min(d, prev2[j-2]+1)
			}
			cur[j] = d
		}
		prev2, prev, cur = prev, cur, prev2
	}
	return prev[len(b)]
}
