//go:build !amd64 || purego

package qc

// useVPOPCNT is false off amd64: pairSums counts a word at a time.
var useVPOPCNT = false

// pairSums returns the population counts a pair of rows needs (see
// pairSumsFrom).
func pairSums(x, y *ldRow) (s [8]int64) {
	pairSumsFrom(&s, x, y, 0)
	return s
}
