package main

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/matrixio/synth"
	"github.com/clinal/clinal/randsvd"
	"gonum.org/v1/gonum/mat"
)

// benchPoint is one measured dataset size of clinal bench: what the pca
// child reported (report.json) and what getrusage said about it. With
// repeated runs, wall and CPU are the smallest seen (the least disturbed
// by other load on the machine) and the peak RSS the largest.
type benchPoint struct {
	Samples     int       `json:"samples"`
	Markers     int       `json:"markers"`
	SamplesUsed int       `json:"samples_used"`
	MarkersUsed int       `json:"markers_used"`
	K           int       `json:"k"`
	BlockSize   int       `json:"block_size"`
	Threads     int       `json:"threads"`
	Passes      int       `json:"passes"`
	Repeats     int       `json:"repeats"`
	Wall        float64   `json:"pca_wall_seconds"`   // child wall clock
	CPU         float64   `json:"pca_cpu_seconds"`    // child user + system
	SolveWall   float64   `json:"solve_wall_seconds"` // solve phase of report.json, in the run of least wall
	SolveCPU    float64   `json:"solve_cpu_seconds"`  // solve phase CPU, in the run of least CPU
	PeakRSS     int64     `json:"pca_peak_rss_bytes"` // child getrusage ru_maxrss
	Plan        planParts `json:"plan"`               // randsvd.PlanMemory's budget of the run (report.json memory_plan)
}

// linFit is a least-squares fit y = sum_i coef_i * term_i with its
// errors, all relative: (predicted - measured) / measured.
type linFit struct {
	Formula        string    `json:"formula"`
	Terms          []string  `json:"terms"`
	Coef           []float64 `json:"coefficients"`
	MaxRelResidual float64   `json:"max_relative_residual"`
	LOOMaxRelError float64   `json:"leave_one_out_max_relative_error"`
	HeldOut        heldOut   `json:"held_out_largest"`
}

// heldOut is the prediction of the largest size (most samples x markers)
// from the fit to all the others: the extrapolation a forecast makes.
type heldOut struct {
	Samples   int     `json:"samples"`
	Markers   int     `json:"markers"`
	Measured  float64 `json:"measured"`
	Predicted float64 `json:"predicted"`
	RelError  float64 `json:"relative_error"`
}

// machineInfo says where a model was calibrated.
type machineInfo struct {
	CPU     string `json:"cpu"`
	CPUs    int    `json:"cpus"`
	Arch    string `json:"arch"`
	Go      string `json:"go"`
	Version string `json:"clinal_version"`
}

// benchModel is bench-model.json: the cost model fitted to a bench run.
//
//	memory: peak RSS = a + b_s * solver + b_o * other + b_t * tables
//	wall:   seconds  = c0 + c_pass * N*M*l*passes/threads + c_once * N*M/threads + c_mk * M + c_n * N
//	CPU:    seconds  = d0 + d_pass * N*M*l*passes + d_once * N*M + d_mk * M + d_n * N
//
// solver, other and tables are the parts of randsvd.PlanMemory's budget
// (planParts), l = k + oversample the solver's block. A pass is one
// product of Z^T Z / M with an N x l block, 4*N*M*l flops (design:
// performance model), so its cost goes with N*M*l; the per-pass
// coefficients are fitted to the solve phase of report.json, the one-off
// ones to the rest of the run, each with its own intercept (c0 and d0 are
// their sums). The one-off work is a pass over the genotypes (QC recount;
// loadings when the run has no refinement stash: N*M), per-marker work
// (marker tables, formatting the loadings file: M) and per-sample work
// (the covariate file and the report's plots: N), the last two taken as
// not sped up by threads.
type benchModel struct {
	Comment     string       `json:"comment"`
	Created     string       `json:"created"`
	Machine     machineInfo  `json:"machine"`
	K           int          `json:"k"`
	Oversample  int          `json:"oversample"` // 0: the default max(10, k/2)
	Threads     int          `json:"threads"`
	PassesRange [2]int       `json:"passes_range"`
	PCAFlags    []string     `json:"pca_flags"`
	Memory      linFit       `json:"memory"`
	Wall        linFit       `json:"wall"`
	CPU         linFit       `json:"cpu"`
	Points      []benchPoint `json:"points"`
}

// planParts is randsvd.PlanMemory's budget split three ways: the
// solver's blocks (N x l float64), the per-marker and per-sample tables,
// and the rest (chunk buffers, kernel workspace, runtime reserve), which
// depends on N, l and threads but not on M.
type planParts struct {
	Solver int64 `json:"solver_bytes"`
	Tables int64 `json:"table_bytes"`
	Other  int64 `json:"other_bytes"`
}

func (p planParts) total() int64 { return p.Solver + p.Tables + p.Other }

// partsOf splits a plan.
func partsOf(solver, tables, total int64) planParts {
	return planParts{Solver: solver, Tables: tables, Other: total - solver - tables}
}

// planFor returns randsvd.PlanMemory's budget for a cohort of n samples
// and m markers in a geno2 store with the default chunk size, which need
// not exist: it writes two small proxy stores of n samples (one and two
// chunks of markers) into a temporary directory, asks PlanMemory about
// both, and extends the tables linearly to m markers (the only part that
// depends on the marker count). So the forecast follows PlanMemory as it
// changes, without a copy of its formula.
func planFor(ctx context.Context, n, m, k, oversample, threads int) (planParts, error) {
	dir, err := os.MkdirTemp("", "clinal-bench-plan-")
	if err != nil {
		return planParts{}, fmt.Errorf("bench: %w", err)
	}
	defer os.RemoveAll(dir)
	m1 := matrixio.DefaultChunkMarkers(matrixio.CodecGeno2, n)
	var plans [2]randsvd.MemoryPlan
	for i, mk := range []int{m1, 2 * m1} {
		cfg := synth.DefaultConfig()
		cfg.Samples, cfg.Markers, cfg.Chromosomes = n, mk, 1
		c, err := synth.New(cfg)
		if err != nil {
			return planParts{}, fmt.Errorf("bench: proxy store of %d samples: %w", n, err)
		}
		path := filepath.Join(dir, fmt.Sprintf("proxy%d.clinal", i))
		if err := c.WriteStore(ctx, path, max(1, min(threads, 4))); err != nil {
			return planParts{}, fmt.Errorf("bench: proxy store: %w", err)
		}
		st, err := matrixio.Open(path)
		if err != nil {
			return planParts{}, fmt.Errorf("bench: proxy store: %w", err)
		}
		plans[i], err = randsvd.PlanMemory(st, k, oversample, threads, 0)
		st.Close()
		if err != nil {
			return planParts{}, err
		}
	}
	perMarker := float64(plans[1].TableBytes-plans[0].TableBytes) / float64(m1)
	tables := plans[0].TableBytes + int64(math.Round(perMarker*float64(m-m1)))
	p := partsOf(plans[0].SolverBytes, plans[0].TableBytes, plans[0].TotalBytes)
	p.Tables = tables
	return p, nil
}

// blockSize is the solver's block of vectors l = k + oversample (default
// oversample max(10, k/2), as in randsvd.PlanMemory), at most n.
func blockSize(n, k, oversample int) int {
	if oversample <= 0 {
		oversample = max(10, k/2)
	}
	return min(k+oversample, n)
}

// The regressors of the three fits.
func memTerms(p planParts) []float64 {
	return []float64{1, float64(p.Solver), float64(p.Other), float64(p.Tables)}
}

// The per-sample term carries the outputs that grow with N alone (the
// covariate file, the report's scatter plots of up to 50,000 samples);
// models written before it had four terms and read with c_n = 0.
func wallTerms(n, m, l, passes, threads int) []float64 {
	nm := float64(n) * float64(m) / float64(threads)
	return []float64{1, nm * float64(l) * float64(passes), nm, float64(m), float64(n)}
}

func cpuTerms(n, m, l, passes int) []float64 { return wallTerms(n, m, l, passes, 1) }

// wls fits y ~ X by least squares on relative errors (each row divided by
// its y, so a 1 s run counts as much as a 100 s one). A coefficient that
// comes out negative (a cost cannot be) is fixed at zero and the rest
// refitted (a simple active-set non-negative least squares).
func wls(x [][]float64, y []float64) ([]float64, error) {
	p := len(x[0])
	active := make([]bool, p)
	for i := range active {
		active[i] = true
	}
	for {
		var cols []int
		for j, a := range active {
			if a {
				cols = append(cols, j)
			}
		}
		if len(cols) == 0 || len(y) == 0 {
			return nil, fmt.Errorf("%d sizes for %d terms", len(y), len(cols))
		}
		a := mat.NewDense(len(y), len(cols), nil)
		b := mat.NewVecDense(len(y), nil)
		for i := range y {
			if !(y[i] > 0) {
				return nil, fmt.Errorf("measurement %d is %g, want > 0", i, y[i])
			}
			for c, j := range cols {
				a.Set(i, c, x[i][j]/y[i])
			}
			b.SetVec(i, 1)
		}
		// Scale columns to unit norm: the terms span 1 to 1e12.
		scale := make([]float64, len(cols))
		for c := range cols {
			scale[c] = mat.Norm(a.ColView(c), 2)
			if scale[c] == 0 {
				scale[c] = 1
			}
			for i := range y {
				a.Set(i, c, a.At(i, c)/scale[c])
			}
		}
		// Minimum-norm least squares through the SVD, so that terms that
		// cannot be told apart on these sizes (rank deficiency, or fewer
		// sizes than terms when one of four is left out) share the weight
		// instead of failing.
		var svd mat.SVD
		if !svd.Factorize(a, mat.SVDThin) {
			return nil, fmt.Errorf("least squares: SVD failed")
		}
		sv := svd.Values(nil)
		rank := 0
		for _, v := range sv {
			if v > 1e-9*sv[0] {
				rank++
			}
		}
		var sol mat.VecDense
		svd.SolveVecTo(&sol, b, rank)
		coef := make([]float64, p)
		worst, wj := 0.0, -1
		for c, j := range cols {
			coef[j] = sol.AtVec(c) / scale[c]
			if v := sol.AtVec(c); v < worst {
				worst, wj = v, j
			}
		}
		if wj < 0 {
			return coef, nil
		}
		active[wj] = false // drop the most negative term and refit
	}
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// largestPoint is the index of the size with the most samples x markers
// (ties: more samples).
func largestPoint(pts []benchPoint) int {
	l := 0
	for i, p := range pts {
		q := pts[l]
		if a, b := p.Samples*p.Markers, q.Samples*q.Markers; a > b || (a == b && p.Samples > q.Samples) {
			l = i
		}
	}
	return l
}

// fitStats fits with fit(indices) on rows x, y and fills the errors: the
// residuals of the fit to all rows, leave-one-out errors, and the largest
// size held out.
func fitStats(f *linFit, x [][]float64, y []float64, pts []benchPoint, fit func(idx []int) ([]float64, error)) error {
	all := make([]int, len(y))
	for i := range all {
		all[i] = i
	}
	coef, err := fit(all)
	if err != nil {
		return err
	}
	f.Coef = coef
	f.MaxRelResidual, f.LOOMaxRelError = 0, 0
	for i := range y {
		f.MaxRelResidual = math.Max(f.MaxRelResidual, math.Abs(dot(coef, x[i])/y[i]-1))
	}
	largest := largestPoint(pts)
	for i := range y {
		var rest []int
		for j := range y {
			if j != i {
				rest = append(rest, j)
			}
		}
		c, err := fit(rest)
		if err != nil {
			return fmt.Errorf("leave out %dx%d: %w", pts[i].Samples, pts[i].Markers, err)
		}
		pred := dot(c, x[i])
		e := pred/y[i] - 1
		f.LOOMaxRelError = math.Max(f.LOOMaxRelError, math.Abs(e))
		if i == largest {
			f.HeldOut = heldOut{Samples: pts[i].Samples, Markers: pts[i].Markers, Measured: y[i], Predicted: pred, RelError: e}
		}
	}
	return nil
}

// fitSplit fits a time model y = c0 + c_pass*x_pass + c_once*x_once +
// c_mk*x_mk + c_n*x_n from the solve phase (c_pass) and the rest of the
// run (c_once, c_mk, c_n), each with an intercept.
func fitSplit(x [][]float64, solve, rest []float64) func(idx []int) ([]float64, error) {
	return func(idx []int) ([]float64, error) {
		var xs, xr [][]float64
		var ys, yr []float64
		for _, i := range idx {
			xs, ys = append(xs, []float64{1, x[i][1]}), append(ys, solve[i])
			xr, yr = append(xr, []float64{1, x[i][2], x[i][3], x[i][4]}), append(yr, rest[i])
		}
		cs, err := wls(xs, ys)
		if err != nil {
			return nil, err
		}
		cr, err := wls(xr, yr)
		if err != nil {
			return nil, err
		}
		return []float64{cs[0] + cr[0], cs[1], cr[1], cr[2], cr[3]}, nil
	}
}

// fitModel fits the memory, wall and CPU models to the measured points.
func fitModel(m *benchModel) error {
	pts := m.Points
	if len(pts) < 4 {
		return fmt.Errorf("bench model: %d sizes measured, want at least 4 (one is held out)", len(pts))
	}
	xm := make([][]float64, len(pts))
	ym := make([]float64, len(pts))
	xw := make([][]float64, len(pts))
	yw, sw, rw := make([]float64, len(pts)), make([]float64, len(pts)), make([]float64, len(pts))
	xc := make([][]float64, len(pts))
	yc, sc, rc := make([]float64, len(pts)), make([]float64, len(pts)), make([]float64, len(pts))
	for i, p := range pts {
		xm[i], ym[i] = memTerms(p.Plan), float64(p.PeakRSS)
		xw[i], yw[i] = wallTerms(p.Samples, p.Markers, p.BlockSize, p.Passes, p.Threads), p.Wall
		sw[i], rw[i] = p.SolveWall, math.Max(p.Wall-p.SolveWall, 1e-3)
		xc[i], yc[i] = cpuTerms(p.Samples, p.Markers, p.BlockSize, p.Passes), p.CPU
		sc[i], rc[i] = p.SolveCPU, math.Max(p.CPU-p.SolveCPU, 1e-3)
	}
	m.Memory = linFit{Formula: "peak_rss_bytes = a + b_s * solver + b_o * other + b_t * tables (parts of randsvd.PlanMemory's budget)",
		Terms: []string{"1", "solver_bytes", "other_bytes", "table_bytes"}}
	if err := fitStats(&m.Memory, xm, ym, pts, func(idx []int) ([]float64, error) { return wls(pick(xm, ym, idx)) }); err != nil {
		return fmt.Errorf("bench memory model: %w", err)
	}
	m.Wall = linFit{Formula: "wall_seconds = c0 + c_pass * N*M*l*passes/threads + c_once * N*M/threads + c_mk * M + c_n * N (l = k + oversample)",
		Terms: []string{"1", "N*M*l*passes/threads", "N*M/threads", "M", "N"}}
	if err := fitStats(&m.Wall, xw, yw, pts, fitSplit(xw, sw, rw)); err != nil {
		return fmt.Errorf("bench wall-time model: %w", err)
	}
	m.CPU = linFit{Formula: "cpu_seconds = d0 + d_pass * N*M*l*passes + d_once * N*M + d_mk * M + d_n * N",
		Terms: []string{"1", "N*M*l*passes", "N*M", "M", "N"}}
	if err := fitStats(&m.CPU, xc, yc, pts, fitSplit(xc, sc, rc)); err != nil {
		return fmt.Errorf("bench CPU-time model: %w", err)
	}
	m.PassesRange = [2]int{math.MaxInt, 0}
	for _, p := range pts {
		m.PassesRange[0] = min(m.PassesRange[0], p.Passes)
		m.PassesRange[1] = max(m.PassesRange[1], p.Passes)
	}
	return nil
}

func pick(x [][]float64, y []float64, idx []int) ([][]float64, []float64) {
	var xs [][]float64
	var ys []float64
	for _, i := range idx {
		xs, ys = append(xs, x[i]), append(ys, y[i])
	}
	return xs, ys
}

// forecast is a prediction with its interval and assumptions.
type forecast struct {
	Samples, Markers, K, BlockSize, Threads, Passes int
	Plan                                            planParts
	Floor                                           int64 // solver blocks + tables: allocated whatever the runtime does
	Memory, MemoryLo, MemoryHi                      float64
	Wall, WallLo, WallHi                            float64
	PerPass, Once                                   float64 // wall seconds
	CPU, CPULo, CPUHi                               float64
	MemErr, WallErr, CPUErr                         float64 // relative half-widths
}

// halfWidth is the relative half-width of a fit's forecast interval: the
// larger of its worst relative residual and its worst leave-one-out error.
func (f linFit) halfWidth() float64 { return math.Max(f.MaxRelResidual, f.LOOMaxRelError) }

// predict forecasts peak memory, wall and CPU time for a run whose
// PlanMemory budget is plan. Memory is never below the floor of the
// solver's blocks and the tables.
func (m *benchModel) predict(n, mk, k, threads, passes int, plan planParts) forecast {
	f := forecast{Samples: n, Markers: mk, K: k, Threads: threads, Passes: passes, Plan: plan}
	f.BlockSize = blockSize(n, k, m.Oversample)
	f.Floor = plan.Solver + plan.Tables
	f.MemErr = m.Memory.halfWidth()
	f.Memory = math.Max(dot(m.Memory.Coef, memTerms(plan)), float64(f.Floor))
	f.MemoryLo = math.Max(f.Memory*(1-f.MemErr), float64(f.Floor))
	f.MemoryHi = f.Memory * (1 + f.MemErr)
	t := wallTerms(n, mk, f.BlockSize, passes, threads)
	f.PerPass = m.Wall.Coef[1] * t[1] / float64(max(passes, 1))
	f.Once = dot(m.Wall.Coef[2:], t[2:])
	f.Wall = dot(m.Wall.Coef, t)
	f.WallErr = m.Wall.halfWidth()
	f.WallLo, f.WallHi = f.Wall*(1-f.WallErr), f.Wall*(1+f.WallErr)
	f.CPU = dot(m.CPU.Coef, cpuTerms(n, mk, f.BlockSize, passes))
	f.CPUErr = m.CPU.halfWidth()
	f.CPULo, f.CPUHi = f.CPU*(1-f.CPUErr), f.CPU*(1+f.CPUErr)
	return f
}

// loadModel reads bench-model.json.
func loadModel(path string) (*benchModel, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("bench --model: %w", err)
	}
	return parseModel(path, b)
}

func parseModel(name string, b []byte) (*benchModel, error) {
	var m benchModel
	if err := json.Unmarshal(b, &m); err != nil {
		return nil, matrixio.BadInput("%s: not a bench model: %v", name, err)
	}
	time := func(c []float64) bool { return len(c) == 4 || len(c) == 5 } // 4: before the per-sample term
	if len(m.Memory.Coef) != 4 || !time(m.Wall.Coef) || !time(m.CPU.Coef) || m.K < 1 || m.Threads < 1 || len(m.Points) == 0 {
		return nil, matrixio.BadInput("%s: bench model lacks coefficients (memory %d of 4, wall %d of 5, CPU %d of 5), k, threads or points",
			name, len(m.Memory.Coef), len(m.Wall.Coef), len(m.CPU.Coef))
	}
	return &m, nil
}

// sizeRange returns the smallest and largest samples and markers measured.
func (m *benchModel) sizeRange() (n0, n1, m0, m1 int) {
	ns, ms := []int{}, []int{}
	for _, p := range m.Points {
		ns, ms = append(ns, p.Samples), append(ms, p.Markers)
	}
	sort.Ints(ns)
	sort.Ints(ms)
	return ns[0], ns[len(ns)-1], ms[0], ms[len(ms)-1]
}

// rssOverPlan returns the smallest and largest ratio of measured peak RSS
// to randsvd.PlanMemory's total over the calibration runs.
func (m *benchModel) rssOverPlan() (lo, hi float64) {
	lo, hi = math.Inf(1), 0
	for _, p := range m.Points {
		if t := p.Plan.total(); t > 0 {
			r := float64(p.PeakRSS) / float64(t)
			lo, hi = math.Min(lo, r), math.Max(hi, r)
		}
	}
	return lo, hi
}
