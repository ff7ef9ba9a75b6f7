package qc

import (
	"slices"
	"sort"
	"strconv"
	"strings"

	"github.com/clinal/clinal/matrixio"
)

// NormalizeChrom maps a chromosome name to the form used for matching: a
// leading "chr" (any case) is dropped, numbers lose leading zeros, the sex
// and mitochondrial names are upper-cased and "M" becomes "MT". Other names
// (unplaced contigs and such) are kept as they are, after the prefix. So
// "chr1", "1" and "01" all name "1", and "chrM", "MT" and "m" name "MT".
func NormalizeChrom(s string) string {
	t := strings.TrimSpace(s)
	if len(t) > 3 && strings.EqualFold(t[:3], "chr") {
		t = t[3:]
	}
	if n, ok := chromNumber(t); ok {
		return strconv.Itoa(n)
	}
	switch u := strings.ToUpper(t); u {
	case "X", "Y", "XY", "MT":
		return u
	case "M":
		return "MT"
	}
	return t
}

// chromNumber reports whether t is a positive decimal integer.
func chromNumber(t string) (int, bool) {
	if t == "" || len(t) > 9 {
		return 0, false
	}
	for i := 0; i < len(t); i++ {
		if t[i] < '0' || t[i] > '9' {
			return 0, false
		}
	}
	n, _ := strconv.Atoi(t)
	return n, n > 0
}

// ChromSet is a parsed chromosome selection.
type ChromSet struct {
	all       bool
	autosomes bool
	names     map[string]bool // normalized names
	explicit  []string        // names given one by one (for the warning)
	ranges    [][2]int        // inclusive numeric ranges
}

// ParseChromosomes reads a chromosome selection: a comma-separated list of
// items, each a name ("1", "chr2", "X", "MT", "scaffold_7"), a numeric range
// ("1-22"), "autosomes" (every chromosome whose normalized name is a
// positive integer, whatever the species' count), "all", or "sex" (X, Y,
// XY). The empty string means "autosomes". Names are matched after
// NormalizeChrom. Numbers are never read as codes for X, Y or MT (23 is a
// chromosome 23, as in species with more than 22 autosomes).
func ParseChromosomes(s string) (*ChromSet, error) {
	cs := &ChromSet{names: map[string]bool{}}
	if strings.TrimSpace(s) == "" {
		cs.autosomes = true
		return cs, nil
	}
	for _, item := range strings.Split(s, ",") {
		it := strings.TrimSpace(item)
		switch strings.ToLower(it) {
		case "":
			return nil, matrixio.BadInput("--chromosomes %q: empty item", s)
		case "all":
			cs.all = true
			continue
		case "autosomes":
			cs.autosomes = true
			continue
		case "sex":
			cs.names["X"], cs.names["Y"], cs.names["XY"] = true, true, true
			continue
		}
		if a, b, ok := strings.Cut(it, "-"); ok {
			lo, ok1 := chromNumber(NormalizeChrom(a))
			hi, ok2 := chromNumber(NormalizeChrom(b))
			if !ok1 || !ok2 {
				return nil, matrixio.BadInput("--chromosomes %q: range %q needs numeric ends, e.g. 1-22", s, it)
			}
			if lo > hi {
				return nil, matrixio.BadInput("--chromosomes %q: range %q runs backwards", s, it)
			}
			cs.ranges = append(cs.ranges, [2]int{lo, hi})
			continue
		}
		n := NormalizeChrom(it)
		cs.names[n] = true
		cs.explicit = append(cs.explicit, n)
	}
	return cs, nil
}

// Contains reports whether the chromosome named c (any spelling) is
// selected.
func (cs *ChromSet) Contains(c string) bool {
	if cs.all {
		return true
	}
	n := NormalizeChrom(c)
	if cs.names[n] {
		return true
	}
	if v, ok := chromNumber(n); ok {
		if cs.autosomes {
			return true
		}
		for _, r := range cs.ranges {
			if v >= r[0] && v <= r[1] {
				return true
			}
		}
	}
	return false
}

// missing lists the explicitly named chromosomes that none of present
// (normalized names) matches, for a warning.
func (cs *ChromSet) missing(present map[string]bool) []string {
	var out []string
	for _, n := range cs.explicit {
		if !present[n] {
			out = append(out, n)
		}
	}
	sort.Strings(out)
	return slices.Compact(out)
}
