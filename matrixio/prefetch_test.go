package matrixio

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// TestPrefetch: chunks decoded ahead by Prefetch reach Stream's callback
// as they would without it (same chunks in the same order, same bytes),
// whether the stream's list starts with them or not and whether they are
// fewer or more than its buffers; a chunk that fails its checksum while
// decoded ahead fails the stream with the chunk named; Close after an
// unused Prefetch returns. The store's own contract (no outside source).
func TestPrefetch(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "p.clinal")
	samples := []string{"isle1-0001", "isle1-0002", "isle1-0003", "isle1-0004", "isle1-0005", "isle1-0006"}
	w, err := Create(path, samples, WriterOptions{ChunkMarkers: 4})
	if err != nil {
		t.Fatal(err)
	}
	for j := 0; j < 40; j++ {
		g := []byte{byte(j % 3), byte(j % 2), 2, byte((j / 3) % 3), Missing, 1}
		if err := w.AddGenotypes(Marker{Chrom: "1", Pos: int64(j + 1), ID: fmt.Sprintf("m%d", j), Ref: "A", Alt: "G"}, g); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	type got struct {
		idx int
		raw []byte
	}
	stream := func(s *Store, chunks []int, workers int) ([]got, error) {
		var out []got
		err := s.Stream(context.Background(), chunks, workers, func(c *Chunk) error {
			out = append(out, got{c.Index, append([]byte(nil), c.Raw...)})
			return nil
		})
		return out, err
	}
	s, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	all := s.AllChunks()
	if len(all) != 10 {
		t.Fatalf("%d chunks, want 10", len(all))
	}
	want, err := stream(s, all, 2)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name      string
		ahead     []int
		chunks    []int
		workers   int
		wantFirst int
	}{
		{"prefix, as many as the buffers", []int{0, 1, 2}, all, 2, 0},
		{"prefix, more than the buffers", []int{0, 1, 2, 3, 4}, all, 2, 0},
		{"one chunk", []int{0}, all, 1, 0},
		{"not a prefix", []int{5, 6}, all, 2, 0},
		{"a stream of fewer chunks", all, []int{0, 1}, 2, 0},
		{"a later run", []int{4, 5}, all[4:], 3, 4},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s.Prefetch(tc.ahead)
			res, err := stream(s, tc.chunks, tc.workers)
			if err != nil {
				t.Fatal(err)
			}
			if len(res) != len(tc.chunks) {
				t.Fatalf("%d chunks streamed, want %d", len(res), len(tc.chunks))
			}
			for i, r := range res {
				w := want[tc.wantFirst+i]
				if r.idx != w.idx || !bytes.Equal(r.raw, w.raw) {
					t.Fatalf("streamed chunk %d: index %d (want %d) or bytes differ", i, r.idx, w.idx)
				}
			}
			// What a prefetch held is back in the pool or in use: a
			// second stream without one gives the same again.
			res2, err := stream(s, tc.chunks, tc.workers)
			if err != nil || len(res2) != len(res) || !slices.EqualFunc(res, res2, func(a, b got) bool { return a.idx == b.idx && bytes.Equal(a.raw, b.raw) }) {
				t.Fatalf("stream after: %v", err)
			}
		})
	}
	s.Prefetch([]int{0, 1})
	if err := s.Close(); err != nil {
		t.Fatalf("close with a prefetch pending: %v", err)
	}

	// A damaged payload byte in chunk 1, found while decoding ahead.
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	s, err = Open(path)
	if err != nil {
		t.Fatal(err)
	}
	off := s.index[1].off
	s.Close()
	b[off+2] ^= 0xff
	bad := filepath.Join(dir, "bad.clinal")
	if err := os.WriteFile(bad, b, 0o644); err != nil {
		t.Fatal(err)
	}
	s, err = Open(bad)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	s.Prefetch([]int{0, 1, 2})
	_, err = stream(s, all, 2)
	if !errors.Is(err, ErrChecksum) || !strings.Contains(err.Error(), "chunk 1") {
		t.Fatalf("stream over a damaged chunk decoded ahead: %v, want a checksum error naming chunk 1", err)
	}
}

// TestPrefetchConcurrent: several goroutines, each prefetching and
// streaming its own run of chunks on one store (as shards of a local
// cluster run share one), all see their chunks' bytes; Close waits for
// the prefetch left pending, and a Prefetch after Close does nothing.
// Meant for -race; the expected bytes are a plain stream's.
func TestPrefetchConcurrent(t *testing.T) {
	path := filepath.Join(t.TempDir(), "c.clinal")
	samples := []string{"isle1-0001", "isle1-0002", "isle1-0003", "isle1-0004", "isle1-0005"}
	w, err := Create(path, samples, WriterOptions{ChunkMarkers: 3})
	if err != nil {
		t.Fatal(err)
	}
	for j := 0; j < 60; j++ {
		g := []byte{byte(j % 3), byte((j + 1) % 3), byte(j / 20), Missing, byte(j % 2)}
		if err := w.AddGenotypes(Marker{Chrom: "2", Pos: int64(10 * (j + 1)), ID: fmt.Sprintf("m%d", j), Ref: "C", Alt: "T"}, g); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	s, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	want := map[int][]byte{}
	if err := s.Stream(context.Background(), s.AllChunks(), 2, func(c *Chunk) error {
		want[c.Index] = append([]byte(nil), c.Raw...)
		return nil
	}); err != nil {
		t.Fatal(err)
	}
	errs := make(chan error, 4)
	for g := 0; g < 4; g++ {
		go func() {
			mine := []int{5 * g, 5*g + 1, 5*g + 2, 5*g + 3, 5*g + 4}
			var err error
			for pass := 0; pass < 6 && err == nil; pass++ {
				err = s.Stream(context.Background(), mine, 2, func(c *Chunk) error {
					if !bytes.Equal(c.Raw, want[c.Index]) {
						return fmt.Errorf("chunk %d: bytes differ", c.Index)
					}
					return nil
				})
				s.Prefetch(mine[:3])
			}
			errs <- err
		}()
	}
	for range 4 {
		if err := <-errs; err != nil {
			t.Fatal(err)
		}
	}
	s.Prefetch([]int{0, 1, 2})
	if err := s.Close(); err != nil {
		t.Fatal(err)
	}
	s.Prefetch([]int{3}) // after Close: nothing
}
