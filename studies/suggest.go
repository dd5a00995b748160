package studies

import "strings"

// suggest returns the known name nearest to s, or "" if none is near.
// Near means, ignoring case: an edit distance (counting a swap of two
// neighbours as one edit) of at most 1 for names of up to four characters
// and 2 for longer ones; failing that, one name being a prefix of the
// other (at least two characters), or a common prefix that leaves at most
// three characters of s over (at least five in common).
func suggest(s string, known []string) string {
	ls := strings.ToLower(s)
	best, bestD := "", 1<<30
	for _, k := range known {
		lk := strings.ToLower(k)
		d := editDistance(ls, lk)
		limit := 1
		if len(lk) > 4 {
			limit = 2
		}
		if d > limit {
			cp := commonPrefix(ls, lk)
			switch {
			case cp >= 2 && (cp == len(ls) || cp == len(lk)):
			case cp >= 5 && len(ls)-cp <= 3:
			default:
				continue
			}
			d = limit + 1 // after every true near miss
		}
		if d < bestD {
			best, bestD = k, d
		}
	}
	return best
}

func commonPrefix(a, b string) int {
	n := 0
	for n < len(a) && n < len(b) && a[n] == b[n] {
		n++
	}
	return n
}

// editDistance is the optimal-string-alignment distance between a and b,
// in runes: insertions, deletions, substitutions and swaps of adjacent
// runes each cost one.
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	d := make([][]int, len(ra)+1)
	for i := range d {
		d[i] = make([]int, len(rb)+1)
		d[i][0] = i
	}
	for j := range d[0] {
		d[0][j] = j
	}
	for i := 1; i <= len(ra); i++ {
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			d[i][j] = min(d[i-1][j]+1, d[i][j-1]+1, d[i-1][j-1]+cost)
			if i > 1 && j > 1 && ra[i-1] == rb[j-2] && ra[i-2] == rb[j-1] {
				d[i][j] = min(d[i][j], d[i-2][j-2]+1)
			}
		}
	}
	return d[len(ra)][len(rb)]
}
