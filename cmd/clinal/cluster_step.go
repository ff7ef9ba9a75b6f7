package main

import (
	"context"
	"fmt"
	"os"
	"time"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/qc"
	"github.com/clinal/clinal/randsvd"
)

// shardWorker computes shard partials for one run directory. It holds the
// open store and the selection, so several shards (local mode) or several
// passes share them.
type shardWorker struct {
	dir     runDir
	m       *clusterManifest
	st      *matrixio.Store
	sel     *qc.Selection
	threads int
	// delay makes each computed shard wait before it starts (a testing
	// hook from CLINAL_CLUSTER_STEP_DELAY, so a fault test has time to
	// kill a step mid-pass).
	delay time.Duration
	// hook, when set, is called before a shard is computed; an error
	// stops it as a killed task would (tests).
	hook func(pass, shard int) error
}

// openShardWorker reads the manifest and selection and opens the store.
func openShardWorker(d runDir, threads int) (*shardWorker, error) {
	m, err := readManifest(d)
	if err != nil {
		return nil, err
	}
	st, err := openRunStore(m)
	if err != nil {
		return nil, err
	}
	sel, err := readSelection(d, m, st)
	if err != nil {
		st.Close()
		return nil, err
	}
	if threads < 1 {
		threads = m.CPUsPerTask
	}
	return &shardWorker{dir: d, m: m, st: st, sel: sel, threads: threads}, nil
}

func (w *shardWorker) close() { w.st.Close() }

// compute makes shard s's partial of pass p, unless a valid one (same pass,
// shard, shape and X) is already there. It reports whether it computed.
// The partial is Z_s^T Z_s X / M with M the markers of the whole
// selection, so the partials of all shards sum to K X.
func (w *shardWorker) compute(ctx context.Context, p, s int) (bool, error) {
	m := w.m
	if s < 0 || s >= len(m.Shards) {
		return false, usage("cluster step: shard %d: the run has shards 0..%d", s, len(m.Shards)-1)
	}
	n := m.SamplesUsed
	x, l, fast, digest, err := readBlock(w.dir.xPath(p), p, n)
	if err != nil {
		return false, fmt.Errorf("cluster step pass %d shard %d: %w", p, s, err)
	}
	want := partialHeader{Pass: p, Shard: s, Shards: len(m.Shards), N: n, L: l, XDigest: digest}
	y := make([]float64, n*l)
	if _, err := readPartial(w.dir.partialPath(p, s), want, y); err == nil {
		return false, nil
	}
	if w.hook != nil {
		if err := w.hook(p, s); err != nil {
			return false, err
		}
	}
	if w.delay > 0 {
		select {
		case <-time.After(w.delay):
		case <-ctx.Done():
			return false, ctx.Err()
		}
	}
	t0 := time.Now()
	plan, err := randsvd.PlanMemory(w.st, m.PCA.K, m.PCA.Oversample, w.threads, m.PCA.Memory)
	if err != nil {
		// The plan's promise is for the solver's blocks; passes of other
		// widths (trace(K^2)) get the buffers of an unlimited plan.
		plan, err = randsvd.PlanMemory(w.st, m.PCA.K, m.PCA.Oversample, w.threads, 0)
	}
	if err != nil {
		return false, err
	}
	sh := m.Shards[s]
	op, err := randsvd.NewOperator(w.st, randsvd.OperatorOptions{SampleKept: w.sel.SampleKept, MarkerKept: w.sel.MarkerKept,
		Counts: w.sel.Counts, Scaling: randsvd.Scaling(m.PCA.Scaling), Threads: w.threads, Buffers: plan.Buffers,
		Chunks: sh.chunks()})
	if err != nil {
		return false, fmt.Errorf("cluster step shard %d: %w", s, err)
	}
	if op.Dim() != n || op.Markers() != m.MarkersUsed || op.NumKeptMarkers() != sh.MarkersUsed {
		return false, matrixio.BadInput("cluster step shard %d: operator of %d samples, %d markers (%d in the shard); the manifest planned %d, %d (%d)",
			s, op.Dim(), op.Markers(), op.NumKeptMarkers(), n, m.MarkersUsed, sh.MarkersUsed)
	}
	if op.NumKeptMarkers() == 0 {
		clear(y) // a shard whose markers were all filtered adds nothing
	} else if err := applyPass(ctx, op, fast, x, y, l); err != nil {
		return false, fmt.Errorf("cluster step shard %d: %w", s, err)
	}
	tr := op.Trace()
	if op.NumKeptMarkers() == 0 {
		tr = 0
	}
	want.Markers, want.Trace, want.Seconds = sh.MarkersUsed, tr, time.Since(t0).Seconds()
	if err := os.MkdirAll(w.dir.passDir(p), 0o777); err != nil {
		return false, err
	}
	if err := writePartial(w.dir.partialPath(p, s), want, y); err != nil {
		return false, fmt.Errorf("cluster step shard %d: %w", s, err)
	}
	return true, nil
}

// applyPass is one shard's pass, exact or fast as the block file says.
func applyPass(ctx context.Context, op *randsvd.Operator, fast bool, x, y []float64, l int) error {
	if fast {
		return op.ApplyFast(ctx, x, y, l)
	}
	return op.Apply(ctx, x, y, l)
}
