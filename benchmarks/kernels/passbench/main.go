// Command passbench times passes of clinal's operator over a store, for the
// kernel benchmark (benchmarks/kernels/bench.py): an exact (float64) pass,
// a fast (float32 tables) pass, and a stream-only pass that reads and
// decompresses every chunk and computes nothing (the floor under any pass
// from this store). It prints one JSON object. A benchmark helper, not
// part of the product.
package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"runtime"
	"slices"
	"time"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/randsvd"
)

func main() {
	l := flag.Int("l", 20, "block width (k + oversampling; clinal pca -k 10 uses 20)")
	threads := flag.Int("threads", 1, "compute threads")
	reps := flag.Int("reps", 5, "timed passes of each kind (the median is reported)")
	flag.Parse()
	if flag.NArg() != 1 {
		fmt.Fprintln(os.Stderr, "usage: passbench [-l 20] [-threads 1] [-reps 5] STORE")
		os.Exit(2)
	}
	if err := run(flag.Arg(0), *l, *threads, *reps); err != nil {
		fmt.Fprintln(os.Stderr, "passbench:", err)
		os.Exit(1)
	}
}

type result struct {
	Samples, Markers, L, Threads, Reps int
	ExactSeconds, FastSeconds          float64
	StreamSeconds                      float64
	// Allocations per pass in the steady state (after a first pass).
	ExactAllocs, FastAllocs float64
	ExactBytes, FastBytes   float64
	// Cores busy: the process's CPU time (user + system) over the wall
	// time of the timed passes. Decoding runs beside the compute threads,
	// so one compute thread keeps more than one core busy.
	ExactCores, FastCores float64
}

func run(path string, l, threads, reps int) error {
	st, err := matrixio.Open(path)
	if err != nil {
		return err
	}
	defer st.Close()
	op, err := randsvd.NewOperator(st, randsvd.OperatorOptions{Threads: threads})
	if err != nil {
		return err
	}
	n := op.Dim()
	r := rand.New(rand.NewPCG(1, 2))
	x := make([]float64, n*l)
	for i := range x {
		x[i] = r.NormFloat64()
	}
	y := make([]float64, n*l)
	ctx := context.Background()
	res := result{Samples: n, Markers: op.Markers(), L: l, Threads: threads, Reps: reps}
	time1 := func(apply func(context.Context, []float64, []float64, int) error) (sec, allocs, bytes, cores float64, err error) {
		if err := apply(ctx, x, y, l); err != nil { // warm: buffers, page cache
			return 0, 0, 0, 0, err
		}
		var ts []float64
		var m0, m1 runtime.MemStats
		runtime.ReadMemStats(&m0)
		c0, w0 := cpuSeconds(), time.Now()
		for i := 0; i < reps; i++ {
			t0 := time.Now()
			if err := apply(ctx, x, y, l); err != nil {
				return 0, 0, 0, 0, err
			}
			ts = append(ts, time.Since(t0).Seconds())
		}
		cores = (cpuSeconds() - c0) / time.Since(w0).Seconds()
		runtime.ReadMemStats(&m1)
		slices.Sort(ts)
		return ts[len(ts)/2], float64(m1.Mallocs-m0.Mallocs) / float64(reps), float64(m1.TotalAlloc-m0.TotalAlloc) / float64(reps), cores, nil
	}
	if res.ExactSeconds, res.ExactAllocs, res.ExactBytes, res.ExactCores, err = time1(op.Apply); err != nil {
		return err
	}
	if res.FastSeconds, res.FastAllocs, res.FastBytes, res.FastCores, err = time1(op.ApplyFast); err != nil {
		return err
	}
	chunks := make([]int, st.NumChunks())
	for i := range chunks {
		chunks[i] = i
	}
	stream := func(context.Context, []float64, []float64, int) error {
		return st.Stream(ctx, chunks, threads, func(*matrixio.Chunk) error { return nil })
	}
	if res.StreamSeconds, _, _, _, err = time1(stream); err != nil {
		return err
	}
	return json.NewEncoder(os.Stdout).Encode(res)
}
