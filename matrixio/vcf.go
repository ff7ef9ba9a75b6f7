package matrixio

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"strconv"
)

// This file holds the VCF record parser. Conventions (VCF 4.2 and 4.3
// specifications, section 1.6.2 "Genotype fields"):
//
//   - GT is read by default. Alleles are separated by '/' (unphased) or '|'
//     (phased); phase is not kept. 0 is REF, k the k-th ALT, '.' missing.
//     The stored code of a diploid call is the number of ALT alleles: 0/0 ->
//     0, 0/1 and 1/0 -> 1, 1/1 -> 2.
//   - Missing: '.', './.' and '.|.' are missing. A partially missing diploid
//     call such as './1' or '0|.' is stored as missing too: one allele alone
//     does not give the ALT count the 2-bit code holds.
//   - Haploid calls (one allele, e.g. male chrX, chrY, mitochondria) are
//     coded as homozygous by default (0 -> 0, 1 -> 2) so they stay on the
//     same 0..2 scale as diploid calls; with Haploid "missing" they are
//     stored as missing. They are counted in the import summary either way.
//   - Calls of ploidy above two are rejected as bad input.
//   - A record whose FORMAT lacks the requested field has all calls
//     missing; a sample column with fewer subfields than FORMAT (trailing
//     fields dropped, as the specification allows) is missing for a field
//     beyond its end.
//   - Multi-allelic records (ALT with a comma) are skipped and counted, or
//     with SplitMultiallelic split into one biallelic marker per ALT: for
//     ALT k the code counts the alleles equal to k (the others, REF
//     included, count as reference); its ID is ID:ALTk, or
//     CHROM:POS:REF:ALTk when ID is '.'.
//   - ALT '.' (no alternate allele, a monomorphic site) is kept with ALT
//     '.'; its calls can only be 0 or missing. Symbolic ALTs (<DEL>, '*',
//     breakends) are kept as ordinary alleles: only their identity is stored.
//   - QUAL, FILTER and INFO are not interpreted: a record failing FILTER is
//     imported like any other (filter on FILTER beforehand if needed).
//   - A missing ID '.' becomes CHROM:POS:REF:ALT so every marker is named.
//   - DS (with Field "DS") is the ALT dosage, a number or '.' (missing);
//     for split multi-allelic records the k-th of its comma-separated
//     values is used.
//   - Records whose CHROM, ID, REF or ALT exceeds 4096 bytes (the store's
//     field limit; very long indel alleles) are skipped and counted.

// vcfStats counts what the parser saw.
type vcfStats struct {
	records      int // data lines
	markers      int // markers produced
	skippedMulti int // multi-allelic records skipped
	splitRecords int // multi-allelic records split
	haploid      int // haploid calls
	partial      int // partially missing diploid calls stored as missing
	missing      int // missing calls (all reasons)
	noField      int // records whose FORMAT lacks the field
	monomorphic  int // records with ALT '.'
	skippedLong  int // records skipped for over-long fields
}

func (s *vcfStats) add(o vcfStats) {
	s.records += o.records
	s.markers += o.markers
	s.skippedMulti += o.skippedMulti
	s.splitRecords += o.splitRecords
	s.haploid += o.haploid
	s.partial += o.partial
	s.missing += o.missing
	s.noField += o.noField
	s.monomorphic += o.monomorphic
	s.skippedLong += o.skippedLong
}

// vcfRec is one marker produced from a line; line is the line's index in
// its batch (the consumer turns it into a file line number).
type vcfRec struct {
	m    Marker
	line int
}

// vcfBatch is the output of parsing a run of lines: markers in order and
// their rows (N codes each in geno, or N values each in flt).
type vcfBatch struct {
	recs  []vcfRec
	geno  []byte
	flt   []float32
	stats vcfStats
}

func (b *vcfBatch) reset() {
	b.recs = b.recs[:0]
	b.geno = b.geno[:0]
	b.flt = b.flt[:0]
	b.stats = vcfStats{}
}

// vcfParser parses data lines of one file; one per goroutine.
type vcfParser struct {
	n           int  // samples
	dosage      bool // FORMAT field DS instead of GT
	field       []byte
	haploidMiss bool
	split       bool

	lastFormat []byte // FORMAT of the previous line and the field's index in it
	lastIndex  int
	lastChrom  string

	alle []int32 // scratch for split records: two alleles per sample
	dsv  [][]byte
}

func newVCFParser(n int, opt *ImportOptions) *vcfParser {
	p := &vcfParser{n: n, dosage: opt.Field == "DS", field: []byte(opt.Field),
		haploidMiss: opt.Haploid == "missing", split: opt.SplitMultiallelic}
	return p
}

// errColumns is the message of a line with the wrong number of columns.
func (p *vcfParser) errColumns(got int) error {
	return fmt.Errorf("wrong number of columns: %d, expected %d (9 fixed and %d samples)", got, 9+p.n, p.n)
}

// parseLine parses one data line (without its newline) into b. Errors do
// not carry the file and line: the caller adds them.
func (p *vcfParser) parseLine(line []byte, b *vcfBatch, idx int) error {
	var fix [9][]byte
	rest := line
	for k := 0; k < 9; k++ {
		t := bytes.IndexByte(rest, '\t')
		if t < 0 {
			return p.errColumns(k + 1)
		}
		fix[k], rest = rest[:t], rest[t+1:]
	}
	b.stats.records++
	chromB, posB, idB, refB, altB, formatB := fix[0], fix[1], fix[2], fix[3], fix[4], fix[8]
	pos, ok := vcfParsePos(posB)
	if !ok {
		return fmt.Errorf("POS %q is not a non-negative integer", truncate(string(posB)))
	}
	if len(refB) == 0 || len(altB) == 0 {
		return errors.New("empty REF or ALT column")
	}
	nalt := 1
	if len(altB) == 1 && altB[0] == '.' {
		nalt = 0
	} else {
		nalt += bytes.Count(altB, []byte{','})
	}
	if nalt > 1 && !p.split {
		// Skipped, but the columns are still checked.
		if got := 10 + bytes.Count(rest, []byte{'\t'}); got != 9+p.n {
			return p.errColumns(got)
		}
		b.stats.skippedMulti++
		return nil
	}
	if len(chromB) > 4096 || len(idB) > 4096 || len(refB) > 4096 || len(altB) > 4096 {
		if got := 10 + bytes.Count(rest, []byte{'\t'}); got != 9+p.n {
			return p.errColumns(got)
		}
		b.stats.skippedLong++
		return nil
	}
	if nalt == 0 {
		b.stats.monomorphic++
	}
	chrom := p.lastChrom
	if string(chromB) != chrom {
		chrom = string(chromB)
		p.lastChrom = chrom
	}
	m := Marker{Chrom: chrom, Pos: pos, Ref: string(refB)}
	fi := p.fieldIndex(formatB)
	if fi < 0 {
		b.stats.noField++
	}
	if nalt <= 1 {
		m.Alt = string(altB)
		if len(idB) == 1 && idB[0] == '.' {
			m.ID = m.Chrom + ":" + string(posB) + ":" + m.Ref + ":" + m.Alt
		} else {
			m.ID = string(idB)
		}
		if err := vcfCheckMarker(m); err != nil {
			return err
		}
		var err error
		if p.dosage {
			err = p.parseDS(rest, fi, b)
		} else {
			err = p.parseGT(rest, fi, nalt, b)
		}
		if err != nil {
			return err
		}
		b.recs = append(b.recs, vcfRec{m: m, line: idx})
		b.stats.markers++
		return nil
	}
	return p.parseSplit(rest, fi, nalt, m, idB, posB, altB, b, idx)
}

// vcfCheckMarker applies the store's rules for marker fields (no control
// characters or spaces) so a bad record is reported with its line.
func vcfCheckMarker(m Marker) error {
	for _, f := range [...]struct{ k, v string }{{"CHROM", m.Chrom}, {"ID", m.ID}, {"REF", m.Ref}, {"ALT", m.Alt}} {
		if err := validMarkerField(f.k, f.v); err != nil {
			return err
		}
	}
	return nil
}

// vcfParsePos reads POS: decimal digits only.
func vcfParsePos(b []byte) (int64, bool) {
	if len(b) == 0 || len(b) > 18 {
		return 0, false
	}
	var v int64
	for _, c := range b {
		if c < '0' || c > '9' {
			return 0, false
		}
		v = v*10 + int64(c-'0')
	}
	return v, true
}

// fieldIndex returns the index of the wanted field among the
// colon-separated FORMAT keys, or -1; the last FORMAT is cached since
// files usually repeat one FORMAT on every line.
func (p *vcfParser) fieldIndex(format []byte) int {
	if p.lastFormat != nil && bytes.Equal(format, p.lastFormat) {
		return p.lastIndex
	}
	p.lastFormat = append(p.lastFormat[:0], format...)
	p.lastIndex = -1
	for k, key := range bytes.Split(format, []byte{':'}) {
		if bytes.Equal(key, p.field) {
			p.lastIndex = k
			break
		}
	}
	return p.lastIndex
}

// vcfSubfield returns vcfSubfield k of a sample column and whether it exists.
func vcfSubfield(col []byte, k int) ([]byte, bool) {
	for ; k > 0; k-- {
		c := bytes.IndexByte(col, ':')
		if c < 0 {
			return nil, false
		}
		col = col[c+1:]
	}
	if c := bytes.IndexByte(col, ':'); c >= 0 {
		col = col[:c]
	}
	return col, true
}

// parseGT fills one row of codes for a biallelic (nalt 1) or monomorphic
// (nalt 0) record. rest holds the sample columns. The loop reads the common
// three-byte calls ("0|1") straight from the line and falls back to the
// general parser for anything else.
func (p *vcfParser) parseGT(rest []byte, fi, nalt int, b *vcfBatch) error {
	n := p.n
	start := len(b.geno)
	b.geno = append(b.geno, make([]byte, n)...)
	g := b.geno[start:]
	if fi < 0 {
		// No GT in FORMAT: every call missing, columns still counted.
		if got := 9 + bytes.Count(rest, []byte{'\t'}) + 1; got != 9+n {
			return p.errColumns(got)
		}
		for i := range g {
			g[i] = Missing
		}
		b.stats.missing += n
		return nil
	}
	maxA := byte('0' + nalt)
	L := len(rest)
	q := 0 // start of the current sample column
	for i := 0; i < n; i++ {
		if q > L {
			return p.errColumns(9 + i)
		}
		if fi == 0 && q+3 <= L {
			c0, c1, c2 := rest[q], rest[q+1], rest[q+2]
			if c0 == '.' && c2 == '.' && (c1 == '/' || c1 == '|') && (q+3 == L || rest[q+3] == '\t') {
				g[i] = Missing
				b.stats.missing++
				q += 4
				continue
			}
			if c0 >= '0' && c0 <= maxA && c2 >= '0' && c2 <= maxA && (c1 == '/' || c1 == '|') {
				e := q + 3
				if e == L || rest[e] == '\t' {
					g[i] = c0 + c2 - 2*'0'
					q = e + 1
					continue
				}
				if rest[e] == ':' {
					g[i] = c0 + c2 - 2*'0'
					if t := bytes.IndexByte(rest[e:], '\t'); t >= 0 {
						q = e + t + 1
					} else {
						q = L + 1
					}
					continue
				}
			}
		}
		// General path.
		var col []byte
		col, q = nextColumn(rest, q)
		gt, ok := vcfSubfield(col, fi)
		if !ok {
			g[i] = Missing
			b.stats.missing++
			continue
		}
		a1, a2, ploidy, err := vcfAlleles(gt)
		if err != nil {
			return fmt.Errorf("sample %d: %w", i+1, err)
		}
		if int(a1) > nalt || int(a2) > nalt {
			return fmt.Errorf("sample %d: GT %q has allele index %d beyond the %d ALT allele(s)", i+1, truncate(string(gt)), max(a1, a2), nalt)
		}
		g[i] = p.code(a1, a2, ploidy, 1, &b.stats)
	}
	if q <= L {
		return p.errColumns(9 + n + 1 + bytes.Count(rest[q:], []byte{'\t'}))
	}
	return nil
}

// code maps parsed alleles to a 2-bit code counting alleles equal to alt.
func (p *vcfParser) code(a1, a2 int32, ploidy int, alt int32, st *vcfStats) byte {
	if ploidy == 1 {
		st.haploid++
		if a1 < 0 || p.haploidMiss {
			st.missing++
			return Missing
		}
		if a1 == alt {
			return 2
		}
		return 0
	}
	if a1 < 0 || a2 < 0 {
		if a1 >= 0 || a2 >= 0 {
			st.partial++
		}
		st.missing++
		return Missing
	}
	var c byte
	if a1 == alt {
		c++
	}
	if a2 == alt {
		c++
	}
	return c
}

// vcfAlleles parses a GT value: one or two allele indices (-1 missing)
// separated by '/' or '|'. A lone '.' is a missing call of unknown ploidy,
// reported as diploid missing.
func vcfAlleles(gt []byte) (a1, a2 int32, ploidy int, err error) {
	if len(gt) == 1 && gt[0] == '.' {
		return -1, -1, 2, nil
	}
	a1, k, ok := vcfAllele(gt)
	if !ok {
		return 0, 0, 0, fmt.Errorf("unknown GT code %q", truncate(string(gt)))
	}
	if k == len(gt) {
		return a1, -1, 1, nil
	}
	if gt[k] != '/' && gt[k] != '|' {
		return 0, 0, 0, fmt.Errorf("unknown GT code %q", truncate(string(gt)))
	}
	a2, k2, ok := vcfAllele(gt[k+1:])
	if !ok {
		return 0, 0, 0, fmt.Errorf("unknown GT code %q", truncate(string(gt)))
	}
	if k+1+k2 != len(gt) {
		r := gt[k+1+k2]
		if r == '/' || r == '|' {
			return 0, 0, 0, fmt.Errorf("GT %q has ploidy above 2; only haploid and diploid calls are supported", truncate(string(gt)))
		}
		return 0, 0, 0, fmt.Errorf("unknown GT code %q", truncate(string(gt)))
	}
	return a1, a2, 2, nil
}

// vcfAllele reads one allele: '.' (-1) or decimal digits. It returns the
// bytes consumed.
func vcfAllele(b []byte) (int32, int, bool) {
	if len(b) == 0 {
		return 0, 0, false
	}
	if b[0] == '.' {
		return -1, 1, true
	}
	var v int32
	k := 0
	for k < len(b) && b[k] >= '0' && b[k] <= '9' {
		if v > 1<<20 {
			return 0, 0, false
		}
		v = v*10 + int32(b[k]-'0')
		k++
	}
	return v, k, k > 0
}

// parseDS fills one row of dosages.
func (p *vcfParser) parseDS(rest []byte, fi int, b *vcfBatch) error {
	n := p.n
	start := len(b.flt)
	b.flt = append(b.flt, make([]float32, n)...)
	x := b.flt[start:]
	nan := float32(math.NaN())
	L := len(rest)
	q := 0
	for i := 0; i < n; i++ {
		if q > L {
			return p.errColumns(9 + i)
		}
		var col []byte
		col, q = nextColumn(rest, q)
		if fi < 0 {
			x[i] = nan
			b.stats.missing++
			continue
		}
		v, ok := vcfSubfield(col, fi)
		if !ok || (len(v) == 1 && v[0] == '.') {
			x[i] = nan
			b.stats.missing++
			continue
		}
		f, err := vcfParseFloat(v)
		if err != nil {
			return fmt.Errorf("sample %d: DS %w", i+1, err)
		}
		x[i] = f
	}
	if q <= L {
		return p.errColumns(9 + n + 1 + bytes.Count(rest[q:], []byte{'\t'}))
	}
	return nil
}

// vcfPow10 are the powers of ten exactly representable in float32.
var vcfPow10 = [...]float32{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10}

// vcfParseFloat parses a finite decimal number to float32. Plain decimals
// ("1", "0.25", "-1.5") whose digits form an integer m < 2^24 with at most
// ten digits after the point take the exact path: m and the power of ten p,
// both exact in float32, so the single IEEE division m/p is correctly
// rounded (Clinger 1990, "How to read floating point numbers accurately",
// PLDI). Anything else goes through strconv.ParseFloat.
func vcfParseFloat(b []byte) (float32, error) {
	i := 0
	neg := false
	if i < len(b) && (b[i] == '-' || b[i] == '+') {
		neg = b[i] == '-'
		i++
	}
	var m uint32
	digits, frac := 0, 0
	dot := false
	for ; i < len(b); i++ {
		c := b[i]
		if c >= '0' && c <= '9' {
			if m >= 1<<24/10 {
				goto slow
			}
			m = m*10 + uint32(c-'0')
			digits++
			if dot {
				frac++
			}
			continue
		}
		if c == '.' && !dot {
			dot = true
			continue
		}
		goto slow
	}
	if digits == 0 || frac >= len(vcfPow10) {
		goto slow
	}
	{
		v := float32(m) / vcfPow10[frac]
		if neg {
			v = -v
		}
		return v, nil
	}
slow:
	f, err := strconv.ParseFloat(string(b), 32)
	if err != nil || math.IsInf(f, 0) || math.IsNaN(f) {
		return 0, fmt.Errorf("value %q is not a finite number", truncate(string(b)))
	}
	return float32(f), nil
}

// parseSplit splits a multi-allelic record into one biallelic marker per
// ALT (see the conventions at the top of the file).
func (p *vcfParser) parseSplit(rest []byte, fi, nalt int, m Marker, idB, posB, altB []byte, b *vcfBatch, idx int) error {
	n := p.n
	alts := bytes.Split(altB, []byte{','})
	for _, a := range alts {
		if len(a) == 0 {
			return errors.New("empty allele in ALT")
		}
	}
	b.stats.splitRecords++
	if p.dosage {
		return p.splitDS(rest, fi, nalt, m, idB, posB, alts, b, idx)
	}
	if cap(p.alle) < 2*n {
		p.alle = make([]int32, 2*n)
	}
	al := p.alle[:2*n]
	ploidy := make([]byte, n)
	L := len(rest)
	q := 0
	for i := 0; i < n; i++ {
		if q > L {
			return p.errColumns(9 + i)
		}
		var col []byte
		col, q = nextColumn(rest, q)
		var gt []byte
		ok := fi >= 0
		if ok {
			gt, ok = vcfSubfield(col, fi)
		}
		if !ok {
			al[2*i], al[2*i+1], ploidy[i] = -1, -1, 2
			continue
		}
		a1, a2, pl, err := vcfAlleles(gt)
		if err != nil {
			return fmt.Errorf("sample %d: %w", i+1, err)
		}
		if int(a1) > nalt || int(a2) > nalt {
			return fmt.Errorf("sample %d: GT %q has allele index %d beyond the %d ALT allele(s)", i+1, truncate(string(gt)), max(a1, a2), nalt)
		}
		al[2*i], al[2*i+1], ploidy[i] = a1, a2, byte(pl)
	}
	if q <= L {
		return p.errColumns(9 + n + 1 + bytes.Count(rest[q:], []byte{'\t'}))
	}
	for _, a := range alts {
		if err := vcfCheckMarker(splitMarker(m, idB, posB, a)); err != nil {
			return err
		}
	}
	for k, a := range alts {
		start := len(b.geno)
		b.geno = append(b.geno, make([]byte, n)...)
		g := b.geno[start:]
		st := &b.stats
		if k > 0 {
			st = &vcfStats{} // count haploid/missing calls once per record
		}
		for i := range g {
			g[i] = p.code(al[2*i], al[2*i+1], int(ploidy[i]), int32(k+1), st)
		}
		b.recs = append(b.recs, vcfRec{m: splitMarker(m, idB, posB, a), line: idx})
		b.stats.markers++
	}
	return nil
}

func splitMarker(m Marker, idB, posB, alt []byte) Marker {
	m.Alt = string(alt)
	if len(idB) == 1 && idB[0] == '.' {
		m.ID = m.Chrom + ":" + string(posB) + ":" + m.Ref + ":" + m.Alt
	} else {
		m.ID = string(idB) + ":" + m.Alt
	}
	return m
}

// splitDS splits a multi-allelic DS record: DS has one value per ALT.
func (p *vcfParser) splitDS(rest []byte, fi, nalt int, m Marker, idB, posB []byte, alts [][]byte, b *vcfBatch, idx int) error {
	n := p.n
	start := len(b.flt)
	b.flt = append(b.flt, make([]float32, n*nalt)...)
	x := b.flt[start:]
	nan := float32(math.NaN())
	L := len(rest)
	q := 0
	for i := 0; i < n; i++ {
		if q > L {
			return p.errColumns(9 + i)
		}
		var col []byte
		col, q = nextColumn(rest, q)
		var v []byte
		ok := fi >= 0
		if ok {
			v, ok = vcfSubfield(col, fi)
		}
		if !ok || (len(v) == 1 && v[0] == '.') {
			for k := 0; k < nalt; k++ {
				x[k*n+i] = nan
			}
			b.stats.missing++
			continue
		}
		p.dsv = bytes.Split(v, []byte{','})
		if len(p.dsv) != nalt {
			return fmt.Errorf("sample %d: DS %q has %d values for %d ALT alleles", i+1, truncate(string(v)), len(p.dsv), nalt)
		}
		for k, s := range p.dsv {
			if len(s) == 1 && s[0] == '.' {
				x[k*n+i] = nan
				continue
			}
			f, err := vcfParseFloat(s)
			if err != nil {
				return fmt.Errorf("sample %d: DS %w", i+1, err)
			}
			x[k*n+i] = f
		}
	}
	if q <= L {
		return p.errColumns(9 + n + 1 + bytes.Count(rest[q:], []byte{'\t'}))
	}
	for _, a := range alts {
		m := splitMarker(m, idB, posB, a)
		if err := vcfCheckMarker(m); err != nil {
			return err
		}
		b.recs = append(b.recs, vcfRec{m: m, line: idx})
		b.stats.markers++
	}
	return nil
}

// nextColumn returns the tab-separated field of rest that starts at q and
// the start of the next field (len(rest)+1 after the last one, so a loop
// that wants more columns sees q > len(rest)).
func nextColumn(rest []byte, q int) ([]byte, int) {
	if t := bytes.IndexByte(rest[q:], '\t'); t >= 0 {
		return rest[q : q+t], q + t + 1
	}
	return rest[q:], len(rest) + 1
}
