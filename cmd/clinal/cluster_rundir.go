package main

// The run directory of clinal cluster, on a filesystem every node sees:
//
//	manifest.json      what to compute: store, selection, solver parameters,
//	                   shards, output prefix (written once by plan)
//	selection.bin      the QC selection (why each sample and marker was kept
//	                   or removed, and the marker counts over the kept samples
//	                   when samples were removed), binary with a CRC32C
//	qc-report.json     the QC report of that selection
//	submit.json        the Slurm settings of the last submit (for resume)
//	job.sbatch         the batch script submit wrote
//	jobs.tsv           one line per submitted job: job id, time
//	state.ckpt         the solver state after the last complete pass
//	trace.json         trace(K) summed from the shards' partials (float stores)
//	events.jsonl       one JSON line per reduced pass (for status and audits)
//	pass-PPPP/x.bin    the block X of pass P
//	pass-PPPP/shard-SSSS.bin  shard S's partial Z_s^T Z_s X / M of pass P
//	done.json          written last, when every output is in place
//	logs/              Slurm job output
//
// Every file is written atomically (temporary name, fsync, rename), so a
// killed task or driver never leaves a half-written file under its name, and
// every binary file ends in a CRC32C over what precedes it.

import (
	"bufio"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash"
	"hash/crc32"
	"io"
	"math"
	"os"
	"path/filepath"
	"time"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/qc"
)

const (
	// clusterFormat 3: the solver ends on closing passes (randsvd solver
	// scheme krylov-b/2); format 2 (blocks of b vectors, refinement of the
	// K wanted pairs, krylov-b/1) and 1 before it would resume into other
	// numbers than either solver gives uninterrupted, so such runs are
	// refused (plan them again).
	clusterFormat  = "clinal-cluster-run/3"
	manifestName   = "manifest.json"
	selectionName  = "selection.bin"
	qcReportName   = "qc-report.json"
	stateName      = "state.ckpt"
	traceName      = "trace.json"
	eventsName     = "events.jsonl"
	doneName       = "done.json"
	submitName     = "submit.json"
	jobsName       = "jobs.tsv"
	scriptName     = "job.sbatch"
	lockName       = "driver.lock"
	logsDir        = "logs"
	xName          = "x.bin"
	maxBlockVector = 1 << 16 // largest block size a file may declare
)

var castagnoli = crc32.MakeTable(crc32.Castagnoli)

// clusterManifest is RUNDIR/manifest.json: everything a shard step and the
// driver need, fixed at plan time.
type clusterManifest struct {
	Format      string `json:"format"`
	Version     string `json:"clinal_version"`
	Created     string `json:"created"`
	Store       string `json:"store"` // absolute path
	StoreBytes  int64  `json:"store_bytes"`
	Fingerprint string `json:"store_fingerprint_sha256"`
	Prefix      string `json:"output_prefix"` // absolute; outputs are PREFIX.covariates.tsv, ...
	// Selection is selection.bin's SHA-256; Key identifies the solver
	// state (store, selection, k, oversampling, seed, scaling), as the
	// checkpoint key of clinal pca.
	SelectionSHA256 string         `json:"selection_sha256"`
	Key             string         `json:"checkpoint_key"`
	SamplesUsed     int            `json:"samples_used"`
	MarkersUsed     int            `json:"markers_used"`
	Float           bool           `json:"float_store"`
	BlockSize       int            `json:"block_size"`
	Shards          []clusterShard `json:"shards"`
	CPUsPerTask     int            `json:"cpus_per_task"`
	// MemoryPerTask is randsvd.PlanMemory's total for one task with
	// CPUsPerTask threads (within MemoryLimit when one was given).
	MemoryPerTask int64 `json:"memory_per_task_bytes"`
	// DriverMemory is the solver's blocks (PlanMemory's SolverBytes): the
	// driver holds them on the first node beside that node's tasks, and
	// every task's request carries this headroom, wherever it lands.
	DriverMemory int64      `json:"driver_memory_bytes"`
	ChunkBuffers int        `json:"chunk_buffers"`
	PCA          clusterPCA `json:"pca"`
}

// clusterShard is one marker range of whole chunks.
type clusterShard struct {
	FirstChunk  int `json:"first_chunk"`
	EndChunk    int `json:"end_chunk"`
	FirstMarker int `json:"first_marker"`
	EndMarker   int `json:"end_marker"`
	// MarkersUsed counts the selected polymorphic markers of the shard.
	MarkersUsed int `json:"markers_used"`
}

func (s clusterShard) chunks() []int {
	c := make([]int, 0, s.EndChunk-s.FirstChunk)
	for i := s.FirstChunk; i < s.EndChunk; i++ {
		c = append(c, i)
	}
	return c
}

// clusterPCA holds the clinal pca options of the plan, with absolute paths.
type clusterPCA struct {
	K            int        `json:"k"`
	Oversample   int        `json:"oversample"`
	Seed         uint64     `json:"seed"`
	Tol          float64    `json:"tol"`
	VarTol       float64    `json:"var_tol"`
	MaxPasses    int        `json:"max_passes"`
	Memory       int64      `json:"memory_limit_bytes"`
	Scaling      string     `json:"scaling"`
	TwoIDs       bool       `json:"two_id_columns"`
	IDHeaders    string     `json:"id_headers"`
	PCPrefix     string     `json:"pc_prefix"`
	Labels       string     `json:"labels"`
	QC           qc.Options `json:"qc"`
	QCPrefix     string     `json:"qc_prefix"`
	NoLoadings   bool       `json:"no_loadings"`
	TW           string     `json:"tw"`
	TWAlpha      float64    `json:"tw_alpha"`
	AutoK        bool       `json:"auto_k"`
	MaxAutoK     int        `json:"max_auto_k"`
	OutlierSD    float64    `json:"outlier_sd"`
	OutlierIters int        `json:"outlier_iters"`
	ExactPasses  bool       `json:"exact_passes,omitempty"`
}

func clusterPCAFrom(o *pcaOptions) clusterPCA {
	return clusterPCA{K: o.k, Oversample: o.oversample, Seed: o.seed, Tol: o.tol, VarTol: o.varTol,
		MaxPasses: o.maxPasses, Memory: int64(o.memory), Scaling: o.scaling, TwoIDs: o.twoIDs,
		IDHeaders: o.idHeaders, PCPrefix: o.pcPrefix, Labels: o.labels, QC: o.qc, QCPrefix: o.qcPrefix,
		NoLoadings: o.noLoadings, TW: o.tw, TWAlpha: o.twAlpha, AutoK: o.autoK, MaxAutoK: o.maxAutoK,
		OutlierSD: o.outlierSD, OutlierIters: o.outlierIters, ExactPasses: o.exact}
}

// options rebuilds the pca options for the outputs, with prefix and the
// driver's thread count.
func (c clusterPCA) options(prefix string, threads int) *pcaOptions {
	return &pcaOptions{out: prefix, k: c.K, oversample: c.Oversample, seed: c.Seed, tol: c.Tol, varTol: c.VarTol,
		maxPasses: c.MaxPasses, threads: threads, memory: byteSize(c.Memory), scaling: c.Scaling,
		twoIDs: c.TwoIDs, idHeaders: c.IDHeaders, pcPrefix: c.PCPrefix, labels: c.Labels, qc: c.QC,
		qcPrefix: c.QCPrefix, noLoadings: c.NoLoadings, tw: c.TW, twAlpha: c.TWAlpha, autoK: c.AutoK,
		maxAutoK: c.MaxAutoK, outlierSD: c.OutlierSD, outlierIters: c.OutlierIters, exact: c.ExactPasses}
}

// runDir names the files of a run directory.
type runDir string

func (d runDir) path(name string) string { return filepath.Join(string(d), name) }

func (d runDir) passDir(p int) string { return d.path(fmt.Sprintf("pass-%04d", p)) }

func (d runDir) xPath(p int) string { return filepath.Join(d.passDir(p), xName) }

func (d runDir) partialPath(p, s int) string {
	return filepath.Join(d.passDir(p), fmt.Sprintf("shard-%04d.bin", s))
}

// readManifest loads and checks RUNDIR/manifest.json.
func readManifest(d runDir) (*clusterManifest, error) {
	p := d.path(manifestName)
	b, err := os.ReadFile(p)
	if errors.Is(err, os.ErrNotExist) {
		return nil, matrixio.BadInput("%s: no manifest: not a run directory (create one with clinal cluster plan)", string(d))
	}
	if err != nil {
		return nil, fmt.Errorf("run directory: %w", err)
	}
	m := &clusterManifest{}
	if err := json.Unmarshal(b, m); err != nil {
		return nil, matrixio.BadInput("%s: not a cluster manifest: %v", p, err)
	}
	if m.Format != clusterFormat {
		return nil, matrixio.BadInput("%s: format %q, want %q", p, m.Format, clusterFormat)
	}
	switch {
	case len(m.Shards) < 1:
		return nil, matrixio.BadInput("%s: no shards", p)
	case m.BlockSize < 1 || m.BlockSize > maxBlockVector || m.SamplesUsed < 2 || m.MarkersUsed < 1:
		return nil, matrixio.BadInput("%s: bad sizes (block %d, %d samples, %d markers)", p, m.BlockSize, m.SamplesUsed, m.MarkersUsed)
	case m.PCA.K < 1 || m.PCA.K > m.BlockSize:
		return nil, matrixio.BadInput("%s: k = %d with block size %d", p, m.PCA.K, m.BlockSize)
	case m.CPUsPerTask < 1:
		return nil, matrixio.BadInput("%s: cpus_per_task %d", p, m.CPUsPerTask)
	}
	return m, nil
}

// openRunStore opens the manifest's store and checks it is the one planned.
func openRunStore(m *clusterManifest) (*matrixio.Store, error) {
	st, err := matrixio.Open(m.Store)
	if err != nil {
		return nil, err
	}
	if fp := st.Fingerprint(); fp != m.Fingerprint {
		st.Close()
		return nil, matrixio.BadInput("%s: the store changed since clinal cluster plan (fingerprint %.12s, planned %.12s); plan a new run", m.Store, fp, m.Fingerprint)
	}
	return st, nil
}

// crcWriter writes little-endian values and keeps a CRC32C and a SHA-256
// of everything written.
type crcWriter struct {
	w   *bufio.Writer
	crc hash.Hash32
	sha hash.Hash
	buf [8]byte
}

func newCRCWriter(w io.Writer) *crcWriter {
	c := &crcWriter{crc: crc32.New(castagnoli), sha: sha256.New()}
	c.w = bufio.NewWriterSize(io.MultiWriter(w, c.crc, c.sha), 1<<16)
	return c
}

func (c *crcWriter) bytes(b []byte) { c.w.Write(b) }

func (c *crcWriter) u64(v uint64) {
	binary.LittleEndian.PutUint64(c.buf[:], v)
	c.w.Write(c.buf[:])
}

func (c *crcWriter) f64s(xs []float64) {
	for _, x := range xs {
		c.u64(math.Float64bits(x))
	}
}

// finish flushes and appends the CRC32C (not itself hashed).
func (c *crcWriter) finish(w io.Writer) error {
	if err := c.w.Flush(); err != nil {
		return err
	}
	binary.LittleEndian.PutUint32(c.buf[:4], c.crc.Sum32())
	_, err := w.Write(c.buf[:4])
	return err
}

// binReader reads a whole binary file whose last 4 bytes are the CRC32C of
// the rest, and decodes little-endian values from it.
type binReader struct {
	path string
	b    []byte
	bad  bool
}

// readBinFile reads path, checks its magic and CRC32C, and returns a reader
// positioned after the magic. A file shorter than min bytes is rejected
// before its CRC is computed.
func readBinFile(path string, magic string, min int) (*binReader, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	if len(b) < len(magic)+4+min || string(b[:len(magic)]) != magic {
		return nil, fmt.Errorf("%s: not a %s file", path, magic)
	}
	body := b[:len(b)-4]
	if crc32.Checksum(body, castagnoli) != binary.LittleEndian.Uint32(b[len(b)-4:]) {
		return nil, fmt.Errorf("%s: checksum mismatch (incomplete or damaged)", path)
	}
	return &binReader{path: path, b: body[len(magic):]}, nil
}

func (r *binReader) u64() uint64 {
	if len(r.b) < 8 {
		r.bad = true
		return 0
	}
	v := binary.LittleEndian.Uint64(r.b)
	r.b = r.b[8:]
	return v
}

func (r *binReader) take(n uint64) []byte {
	if uint64(len(r.b)) < n {
		r.bad = true
		return nil
	}
	v := r.b[:n]
	r.b = r.b[n:]
	return v
}

func (r *binReader) f64s(dst []float64) {
	b := r.take(uint64(len(dst)) * 8)
	if b == nil {
		return
	}
	for i := range dst {
		dst[i] = math.Float64frombits(binary.LittleEndian.Uint64(b[8*i:]))
	}
}

// Selection file: magic, u64 version, samples N, markers M, flag (1 when
// counts follow), N sample reasons, M marker reasons (one byte each, qc's
// Reason), then when flagged M x (4 u32 as u64, Sum, SumSq as float64),
// CRC32C.
const selMagic = "CLNLSEL1"

func writeSelection(path string, sel *qc.Selection, st *matrixio.Store, recomputed bool) (string, error) {
	var sum string
	err := matrixio.WriteFileAtomic(path, func(w io.Writer) error {
		c := newCRCWriter(w)
		c.bytes([]byte(selMagic))
		flag := uint64(0)
		if recomputed {
			flag = 1
		}
		for _, v := range []uint64{1, uint64(len(sel.SampleWhy)), uint64(len(sel.MarkerWhy)), flag} {
			c.u64(v)
		}
		b := make([]byte, 0, max(len(sel.SampleWhy), len(sel.MarkerWhy)))
		for _, r := range sel.SampleWhy {
			b = append(b, byte(r))
		}
		c.bytes(b)
		b = b[:0]
		for _, r := range sel.MarkerWhy {
			b = append(b, byte(r))
		}
		c.bytes(b)
		if recomputed {
			for _, k := range sel.Counts {
				c.u64(uint64(k.HomRef))
				c.u64(uint64(k.Het))
				c.u64(uint64(k.HomAlt))
				c.u64(uint64(k.Missing))
				c.f64s([]float64{k.Sum, k.SumSq})
			}
		}
		if err := c.finish(w); err != nil {
			return err
		}
		sum = hex.EncodeToString(c.sha.Sum(nil))
		return nil
	})
	return sum, err
}

// readSelection loads selection.bin, checks it against the manifest's
// digest and the store's dimensions, and rebuilds the Selection (masks,
// reasons, counts; the QC report from qc-report.json).
func readSelection(d runDir, m *clusterManifest, st *matrixio.Store) (*qc.Selection, error) {
	path := d.path(selectionName)
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("selection: %w", err)
	}
	if len(raw) < 4 {
		return nil, matrixio.BadInput("%s: truncated", path)
	}
	h := sha256.Sum256(raw[:len(raw)-4])
	if hex.EncodeToString(h[:]) != m.SelectionSHA256 {
		return nil, matrixio.BadInput("%s: does not match the manifest's selection_sha256 (changed or damaged)", path)
	}
	r, err := readBinFile(path, selMagic, 32)
	if err != nil {
		return nil, matrixio.BadInput("%v", err)
	}
	ver, n, mk, flag := r.u64(), r.u64(), r.u64(), r.u64()
	if ver != 1 || n != uint64(st.NumSamples()) || mk != uint64(st.NumMarkers()) || flag > 1 {
		return nil, matrixio.BadInput("%s: version %d, %d x %d selection for a %d x %d store", path, ver, n, mk, st.NumSamples(), st.NumMarkers())
	}
	sel := &qc.Selection{SampleKept: make([]bool, n), MarkerKept: make([]bool, mk),
		SampleWhy: make([]qc.Reason, n), MarkerWhy: make([]qc.Reason, mk)}
	for i, b := range r.take(n) {
		sel.SampleWhy[i] = qc.Reason(b)
		sel.SampleKept[i] = qc.Reason(b) == qc.Kept
	}
	for j, b := range r.take(mk) {
		sel.MarkerWhy[j] = qc.Reason(b)
		sel.MarkerKept[j] = qc.Reason(b) == qc.Kept
	}
	if flag == 1 {
		sel.Counts = make([]matrixio.Counts, mk)
		var f [2]float64
		for j := range sel.Counts {
			c := &sel.Counts[j]
			c.HomRef, c.Het, c.HomAlt, c.Missing = uint32(r.u64()), uint32(r.u64()), uint32(r.u64()), uint32(r.u64())
			r.f64s(f[:])
			c.Sum, c.SumSq = f[0], f[1]
		}
	} else {
		sel.Counts = st.Counts()
	}
	if r.bad || len(r.b) != 0 {
		return nil, matrixio.BadInput("%s: sizes do not match the file", path)
	}
	if b, err := os.ReadFile(d.path(qcReportName)); err == nil {
		rep := &qc.Report{}
		if json.Unmarshal(b, rep) == nil {
			sel.Report = rep
		}
	}
	return sel, nil
}

// Block file (X of a pass): magic, u64 version, pass, rows n, columns l,
// n*l float64 row-major, CRC32C.
const xMagic = "CLNLXBLK"

// writeBlock writes x for pass p atomically and returns the SHA-256 of
// its header and values (the digest partials refer to).
func writeBlock(path string, p, n, l int, x []float64, fast bool) (string, error) {
	var sum string
	err := matrixio.WriteFileAtomic(path, func(w io.Writer) error {
		c := newCRCWriter(w)
		c.bytes([]byte(xMagic))
		for _, v := range []uint64{blockKind(fast), uint64(p), uint64(n), uint64(l)} {
			c.u64(v)
		}
		c.f64s(x)
		if err := c.finish(w); err != nil {
			return err
		}
		sum = hex.EncodeToString(c.sha.Sum(nil))
		return nil
	})
	return sum, err
}

// blockDigest computes the digest writeBlock would return for x.
func blockDigest(p, n, l int, x []float64, fast bool) string {
	c := newCRCWriter(io.Discard)
	c.bytes([]byte(xMagic))
	for _, v := range []uint64{blockKind(fast), uint64(p), uint64(n), uint64(l)} {
		c.u64(v)
	}
	c.f64s(x)
	c.w.Flush()
	return hex.EncodeToString(c.sha.Sum(nil))
}

// blockKind is the first field of a block file: 1 for an exact pass, 2
// for a fast one (float32 tables, randsvd.Operator.ApplyFast).
func blockKind(fast bool) uint64 {
	if fast {
		return 2
	}
	return 1
}

// readBlock loads the X of pass p, checking that it has n rows and at
// most maxBlockVector columns, and returns it with its width, whether the
// pass is fast, and its digest.
func readBlock(path string, p, n int) ([]float64, int, bool, string, error) {
	r, err := readBinFile(path, xMagic, 32)
	if err != nil {
		return nil, 0, false, "", err
	}
	kind, pp, nn, ll := r.u64(), r.u64(), r.u64(), r.u64()
	if kind != 1 && kind != 2 || pp != uint64(p) || nn != uint64(n) || ll < 1 || ll > maxBlockVector {
		return nil, 0, false, "", fmt.Errorf("%s: block of kind %d, pass %d, %d x %d; want pass %d with %d rows", path, kind, pp, nn, ll, p, n)
	}
	l := int(ll)
	if uint64(len(r.b)) != uint64(n)*ll*8 {
		return nil, 0, false, "", fmt.Errorf("%s: sizes do not match the file", path)
	}
	x := make([]float64, n*l)
	r.f64s(x)
	fast := kind == 2
	return x, l, fast, blockDigest(p, n, l, x, fast), nil
}

// Partial file: magic, u64 version, pass, shard, shards, rows n, columns
// l, markers of the shard, the 32-byte digest of the X it was computed
// from, the shard's trace contribution and compute seconds (float64), then
// n*l float64 row-major, CRC32C.
const partMagic = "CLNLPART"

// partialHeader describes a partial.
type partialHeader struct {
	Pass, Shard, Shards, N, L, Markers int
	XDigest                            string
	Trace, Seconds                     float64
}

func writePartial(path string, h partialHeader, y []float64) error {
	dg, err := hex.DecodeString(h.XDigest)
	if err != nil || len(dg) != sha256.Size {
		return fmt.Errorf("partial %s: bad X digest %q", path, h.XDigest)
	}
	return matrixio.WriteFileAtomic(path, func(w io.Writer) error {
		c := newCRCWriter(w)
		c.bytes([]byte(partMagic))
		for _, v := range []int{1, h.Pass, h.Shard, h.Shards, h.N, h.L, h.Markers} {
			c.u64(uint64(v))
		}
		c.bytes(dg)
		c.f64s([]float64{h.Trace, h.Seconds})
		c.f64s(y)
		return c.finish(w)
	})
}

// readPartial loads a partial into y (len n*l) when it is valid for the
// expected pass, shard, shape and X digest; a missing file gives
// os.ErrNotExist, any mismatch an error saying what differs.
func readPartial(path string, want partialHeader, y []float64) (partialHeader, error) {
	r, err := readBinFile(path, partMagic, 7*8+32+16)
	if err != nil {
		return partialHeader{}, err
	}
	var h partialHeader
	ver := r.u64()
	h.Pass, h.Shard, h.Shards, h.N, h.L, h.Markers = int(r.u64()), int(r.u64()), int(r.u64()), int(r.u64()), int(r.u64()), int(r.u64())
	h.XDigest = hex.EncodeToString(r.take(sha256.Size))
	var f [2]float64
	r.f64s(f[:])
	h.Trace, h.Seconds = f[0], f[1]
	switch {
	case r.bad || ver != 1:
		return h, fmt.Errorf("%s: bad header", path)
	case h.Pass != want.Pass || h.Shard != want.Shard || h.Shards != want.Shards || h.N != want.N || h.L != want.L:
		return h, fmt.Errorf("%s: partial of pass %d shard %d/%d (%d x %d), want pass %d shard %d/%d (%d x %d)",
			path, h.Pass, h.Shard, h.Shards, h.N, h.L, want.Pass, want.Shard, want.Shards, want.N, want.L)
	case h.XDigest != want.XDigest:
		return h, fmt.Errorf("%s: computed from another X than the current one", path)
	case uint64(len(r.b)) != uint64(h.N)*uint64(h.L)*8 || len(y) != h.N*h.L:
		return h, fmt.Errorf("%s: sizes do not match the file", path)
	}
	r.f64s(y)
	return h, nil
}

// passEvent is one line of events.jsonl: a pass reduced by the driver.
type passEvent struct {
	Event string `json:"event"` // "pass", "start", "done", "failed"
	Time  string `json:"time"`
	Job   string `json:"job,omitempty"`
	Pass  int    `json:"pass,omitempty"`
	// Phase is "solve" for a pass of the eigensolver, "trace-sq" for one
	// of the exact trace(K^2) passes of the Tracy-Widom test.
	Phase         string  `json:"phase,omitempty"`
	Width         int     `json:"width,omitempty"`    // columns of X
	Computed      []int   `json:"computed,omitempty"` // shards computed in this pass by this driver's steps
	Reused        []int   `json:"reused,omitempty"`   // shards whose valid partial was already there
	Attempts      int     `json:"attempts,omitempty"`
	StepSeconds   float64 `json:"step_seconds,omitempty"`   // launch to last partial, wall
	ShardSeconds  float64 `json:"shard_seconds,omitempty"`  // slowest shard's own compute time
	ReduceSeconds float64 `json:"reduce_seconds,omitempty"` // reading and summing the partials
	MaxRel        float64 `json:"max_rel_residual,omitempty"`
	Message       string  `json:"message,omitempty"`
}

// appendEvent appends one JSON line to events.jsonl and syncs it. Only the
// driver (holding the lock) writes it.
func appendEvent(d runDir, ev passEvent) error {
	ev.Time = time.Now().UTC().Format(time.RFC3339Nano)
	b, err := json.Marshal(ev)
	if err != nil {
		return err
	}
	f, err := os.OpenFile(d.path(eventsName), os.O_WRONLY|os.O_APPEND|os.O_CREATE, 0o666)
	if err != nil {
		return fmt.Errorf("events: %w", err)
	}
	if _, err := f.Write(append(b, '\n')); err != nil {
		f.Close()
		return fmt.Errorf("events: %w", err)
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return fmt.Errorf("events: %w", err)
	}
	return f.Close()
}

// readEvents returns the events of the run (an absent file gives none; a
// torn last line, from a crash during a write, is ignored).
func readEvents(d runDir) ([]passEvent, error) {
	f, err := os.Open(d.path(eventsName))
	if errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var evs []passEvent
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<16), 1<<24)
	for sc.Scan() {
		var ev passEvent
		if json.Unmarshal(sc.Bytes(), &ev) == nil {
			evs = append(evs, ev)
		}
	}
	return evs, sc.Err()
}

// clusterDone is RUNDIR/done.json.
type clusterDone struct {
	Passes     int      `json:"passes"`
	StopReason string   `json:"stop_reason"`
	Outputs    []string `json:"outputs"`
	Finished   string   `json:"finished"`
}

func readDone(d runDir) (*clusterDone, error) {
	b, err := os.ReadFile(d.path(doneName))
	if err != nil {
		return nil, err
	}
	dn := &clusterDone{}
	if err := json.Unmarshal(b, dn); err != nil {
		return nil, fmt.Errorf("%s: %w", d.path(doneName), err)
	}
	return dn, nil
}
