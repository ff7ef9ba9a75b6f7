package qc

// Fuzz targets for the two text parsers of this package: BED region files
// (--exclude-regions) and sample lists (--keep-samples, --drop-samples).
// Run them with testdata/fuzz/run.sh; a plain go test runs the seeds in
// testdata/fuzz/FuzzXxx and those added below.
//
// Contract (issue 9; common practice for parsers of untrusted input, no
// source): never panic or hang; every error is BadInput, one line, naming
// the file; what is accepted obeys the documented semantics (BED: 0-based
// half-open intervals, merged; lists: first field of each line).

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/klauspost/compress/gzip"

	"github.com/clinal/clinal/matrixio"
)

const fzTimeout = 30 * time.Second

func fzGzip(b []byte) []byte {
	var buf bytes.Buffer
	w := gzip.NewWriter(&buf)
	w.Write(b)
	w.Close()
	return buf.Bytes()
}

// fzWrite writes data (gzipped when gz) to a file and returns its path.
func fzWrite(t *testing.T, name string, data []byte, gz bool) string {
	t.Helper()
	if gz {
		data = fzGzip(data)
	}
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, data, 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// fzCheckErr: BadInput, one line, naming the file.
func fzCheckErr(t *testing.T, err error, path string) {
	t.Helper()
	if errors.Is(err, context.DeadlineExceeded) {
		t.Fatalf("hang: no result within %v", fzTimeout)
	}
	if !matrixio.IsBadInput(err) {
		t.Fatalf("error is not BadInput: %v", err)
	}
	if msg := err.Error(); strings.ContainsAny(msg, "\n\r") || !strings.Contains(msg, path) {
		t.Fatalf("error %q: want one line naming %s", msg, path)
	}
}

// FuzzReadBED parses fuzzed BED text (gzipped when gz). On success the
// merged intervals must be sorted, disjoint, non-adjacent and non-empty,
// and Contains must agree with them at their edges: an interval [s, e)
// holds the 1-based positions s+1..e (UCSC BED convention, as ReadBED
// documents).
func FuzzReadBED(f *testing.F) {
	f.Add([]byte("chr1\t0\t100\nchr1\t50\t150\tname\n2\t10\t20\n"), false)
	f.Add([]byte("track name=x\nbrowser position chr1\n# comment\n\nchrX 5 6\n"), true)
	f.Add([]byte("6\t25000000\t33500000\thla\n8\t8000000\t12000000\n"), false)
	f.Fuzz(func(t *testing.T, data []byte, gz bool) {
		p := fzWrite(t, "r.bed", data, gz)
		ctx, cancel := context.WithTimeout(context.Background(), fzTimeout)
		defer cancel()
		r, err := readBED(ctx, p)
		if err != nil {
			fzCheckErr(t, err, p)
			return
		}
		n := 0
		for c, iv := range r.byChrom {
			// Contains normalizes its argument; a key is a normalized name,
			// which normalizes to itself except for odd names such as
			// "chrchr1" (key "chr1"): check Contains on the others.
			probe := NormalizeChrom(c) == c
			for k, x := range iv {
				n++
				if x[0] < 0 || x[1] <= x[0] {
					t.Fatalf("%s: empty or negative interval %v", c, x)
				}
				if k > 0 && x[0] <= iv[k-1][1] {
					t.Fatalf("%s: intervals %v and %v overlap or touch after merging", c, iv[k-1], x)
				}
				if !probe {
					continue
				}
				if !r.Contains(c, x[0]+1) || !r.Contains(c, x[1]) {
					t.Fatalf("%s: interval %v does not contain its first and last positions", c, x)
				}
				if r.Contains(c, x[0]) && x[0] > 0 {
					t.Fatalf("%s: position %d before interval %v is contained", c, x[0], x)
				}
				if r.Contains(c, x[1]+1) {
					t.Fatalf("%s: position %d after interval %v is contained", c, x[1]+1, x)
				}
			}
		}
		if n > r.Intervals {
			t.Fatalf("%d merged intervals from %d read", n, r.Intervals)
		}
	})
}

// fzStoreSamples are the sample IDs the list targets match against.
var fzStoreSamples = []string{"isle1-0001", "isle1-0002", "isle2-0001", "mainland-0001"}

// FuzzSampleList parses a fuzzed keep/drop list against four store
// samples. On success the counts must agree (matched + unknown = distinct
// IDs, at least one matched) and exactly the matched store samples be hit.
func FuzzSampleList(f *testing.F) {
	f.Add([]byte("isle1-0001\nisle2-0001\tpop2\n# comment\n\nunknown-7\n"), false)
	f.Add([]byte("isle1-0002 extra fields\r\nmainland-0001\r\n"), true)
	f.Add([]byte("#sample_id\nisle1-0001\nisle1-0001\n"), false)
	f.Fuzz(func(t *testing.T, data []byte, gz bool) {
		p := fzWrite(t, "keep.txt", data, gz)
		index := map[string]int{}
		for i, s := range fzStoreSamples {
			index[s] = i
		}
		hit := make([]bool, len(fzStoreSamples))
		ctx, cancel := context.WithTimeout(context.Background(), fzTimeout)
		defer cancel()
		sl, err := readSampleList(ctx, p, "keep-samples", index, hit)
		if err != nil {
			fzCheckErr(t, err, p)
			return
		}
		nhit := 0
		for _, h := range hit {
			if h {
				nhit++
			}
		}
		if sl.Matched < 1 || sl.Matched+sl.Unknown != sl.IDs || nhit != sl.Matched {
			t.Fatalf("inconsistent list: %+v, %d samples hit", sl, nhit)
		}
		if sl.Unknown > 0 && sl.FirstUnknown == "" {
			t.Fatalf("unknown IDs but no first unknown: %+v", sl)
		}
	})
}
