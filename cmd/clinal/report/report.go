// Package report renders clinal's self-contained HTML reports: one file
// with inline SVG plots, CSS and tables, no scripts and no network
// references, so it opens from a cluster's scratch directory or an e-mail
// attachment alike. Each plot is also written beside the report as SVG and
// PNG for slides and papers.
//
// The PCA report shows the QC summary, a scree plot with the
// Marchenko-Pastur edge, PC1-PC2 and PC3-PC4 scatter plots coloured by
// group, the convergence table and timing and memory. The QC report shows
// the QC summary and histograms. Plots are drawn with gonum.org/v1/plot.
//
// The package does not print; callers pass everything it shows in an
// input struct, so it depends on no solver or store type.
package report

import (
	"bytes"
	"errors"
	"fmt"
	"github.com/clinal/clinal/randsvd"
	"html/template"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"sync"

	"github.com/clinal/clinal/matrixio"
)

// QCRow is one line of the QC summary: a filter (or a stage such as
// "input") and how many samples or markers it removed and left.
type QCRow struct {
	Name    string
	Removed int
	Kept    int
}

// Phase is the wall-clock and CPU time of one phase of a run, in seconds.
type Phase struct {
	Name string
	Wall float64
	CPU  float64
}

// DefaultMaxPoints is the most samples drawn in a scatter plot when
// PCAInput.MaxPoints is 0. Beyond it an evenly spaced subset (every s-th
// sample in store order) is drawn and the caption says so; a million discs
// would make a report of a hundred megabytes that no browser draws
// smoothly.
const DefaultMaxPoints = 50000

// PCAInput is everything the PCA report shows.
type PCAInput struct {
	Title      string
	SampleIDs  []string
	Groups     []string    // group per sample ("" if unknown); nil: no labels
	Scores     [][]float64 // per sample, at least K values (PC1..PCK)
	LabelsNote string      // e.g. LabelStats.String(); shown under the plots

	Eigenvalues []float64 // K eigenvalues of the standardized relationship matrix
	Residuals   []float64 // relative residual ||K u - lambda u|| / lambda per PC
	Converged   []bool
	TWP         []float64 // Tracy-Widom p-value per PC; nil or NaN: not computed
	Trace       float64   // sum of all eigenvalues: % variance = 100*eigenvalue/trace
	MPEdge      float64   // Marchenko-Pastur upper edge on the eigenvalue scale; 0: none
	Passes      int
	StopReason  string

	QC      []QCRow
	Timing  []Phase
	PeakRSS int64 // bytes

	Samples, Markers, K int // used by the PCA
	MaxPoints           int // scatter plot cap (0: DefaultMaxPoints)
}

// plotPath returns the path of plot key's copy with extension ext: the
// report path minus ".html" plus ".KEY.EXT".
func plotPath(path, key, ext string) string {
	return strings.TrimSuffix(path, ".html") + "." + key + "." + ext
}

// WritePCAHTML writes the PCA report to path (atomically) and the SVG and
// PNG copies of its plots beside it: PATH minus .html plus .scree.svg,
// .scree.png, .pc12.svg, .pc12.png and, with K >= 4, .pc34.svg, .pc34.png.
func WritePCAHTML(path string, in *PCAInput) error {
	_, err := WritePCAReport(path, in)
	return err
}

// WritePCAReport is WritePCAHTML that also returns the files written, the
// report last.
func WritePCAReport(path string, in *PCAInput) ([]string, error) {
	f, err := RenderPCAFigures(in)
	if err != nil {
		return nil, fmt.Errorf("report %s: %w", path, err)
	}
	return WritePCAReportFigures(path, in, f)
}

// PCAFigures are the drawn plots of a PCA report. Drawing them is most of
// a report's cost and needs only the results (not the timing table), so a
// caller can draw them while it writes its other outputs.
type PCAFigures struct {
	figs []*figure
	gs   groupSet
}

// RenderPCAFigures draws the plots of the report of in.
func RenderPCAFigures(in *PCAInput) (*PCAFigures, error) {
	if err := checkPCAInput(in); err != nil {
		return nil, err
	}
	k := len(in.Eigenvalues)
	n := len(in.SampleIDs)
	gs := makeGroups(in.Groups, n)
	show, stride := subsample(n, in.MaxPoints)
	caption := fmt.Sprintf("Each disc is one sample (%d of %d drawn", len(show), n)
	if stride > 1 {
		caption += fmt.Sprintf(": every %d-th sample in store order", stride)
	}
	caption += "). Axis labels give each PC's share of the total variance, 100 x eigenvalue / trace."
	if len(gs.names) > 0 {
		caption += " Colours: groups from the labels file; the legend gives each group's count of drawn samples."
	}
	if in.LabelsNote != "" {
		caption += " Labels: " + in.LabelsNote + "."
	}
	// Each figure is its own plot and canvases, so they are drawn at once
	// (with 50,000 samples a scatter plot takes about half a second).
	var draws []func() (*figure, error)
	for _, pair := range [][2]int{{0, 1}, {2, 3}} {
		if pair[1] >= k {
			break
		}
		key := fmt.Sprintf("pc%d%d", pair[0]+1, pair[1]+1)
		draws = append(draws, func() (*figure, error) {
			f, err := scatterFigure(in, gs, show, pair[0], pair[1], key)
			if f != nil {
				f.Caption = caption
			}
			return f, err
		})
	}
	draws = append(draws, func() (*figure, error) {
		f, err := screeFigure(in)
		if f != nil {
			f.Caption = "Eigenvalues of the top PCs of the standardized relationship matrix. PCs above the dashed " +
				"Marchenko-Pastur edge stand out of what unstructured noise of this shape would give."
		}
		return f, err
	})
	figs := make([]*figure, len(draws))
	errs := make([]error, len(draws))
	var wg sync.WaitGroup
	for i, d := range draws {
		wg.Add(1)
		go func() {
			defer wg.Done()
			figs[i], errs[i] = d()
		}()
	}
	wg.Wait()
	if err := errors.Join(errs...); err != nil {
		return nil, err
	}
	return &PCAFigures{figs: figs, gs: gs}, nil
}

// WritePCAReportFigures writes the report of in with plots drawn by
// RenderPCAFigures from the same results (in may have gained its timing
// since), as WritePCAReport.
func WritePCAReportFigures(path string, in *PCAInput, f *PCAFigures) ([]string, error) {
	if err := checkPCAInput(in); err != nil {
		return nil, fmt.Errorf("report %s: %w", path, err)
	}
	return writeReport(path, pcaPage(in, f.gs), f.figs)
}

// subsample returns the sample indices drawn: all of them, or every
// stride-th when there are more than max.
func subsample(n, maxPoints int) ([]int, int) {
	if maxPoints <= 0 {
		maxPoints = DefaultMaxPoints
	}
	stride := 1
	if n > maxPoints {
		stride = (n + maxPoints - 1) / maxPoints
	}
	show := make([]int, 0, (n+stride-1)/stride)
	for i := 0; i < n; i += stride {
		show = append(show, i)
	}
	return show, stride
}

func checkPCAInput(in *PCAInput) error {
	k := len(in.Eigenvalues)
	switch {
	case k == 0:
		return fmt.Errorf("no eigenvalues")
	case len(in.Scores) != len(in.SampleIDs):
		return fmt.Errorf("%d score rows for %d sample IDs", len(in.Scores), len(in.SampleIDs))
	case in.Groups != nil && len(in.Groups) != len(in.SampleIDs):
		return fmt.Errorf("%d groups for %d sample IDs", len(in.Groups), len(in.SampleIDs))
	case len(in.Residuals) != 0 && len(in.Residuals) != k:
		return fmt.Errorf("%d residuals for %d eigenvalues", len(in.Residuals), k)
	case len(in.Converged) != 0 && len(in.Converged) != k:
		return fmt.Errorf("%d convergence flags for %d eigenvalues", len(in.Converged), k)
	case len(in.TWP) != 0 && len(in.TWP) != k:
		return fmt.Errorf("%d Tracy-Widom p-values for %d eigenvalues", len(in.TWP), k)
	}
	need := min(k, 4)
	for i, row := range in.Scores {
		if len(row) < need {
			return fmt.Errorf("sample %d has %d scores, want at least %d", i, len(row), need)
		}
	}
	return nil
}

// Histogram is a fixed-bin histogram filled one value at a time, so a
// caller can stream per-marker statistics without keeping them.
type Histogram struct {
	Name          string // file-name part of the plot copies: [a-z0-9-]+
	Title, XLabel string
	Min, Max      float64
	Counts        []int64
	Below, Above  int64 // values outside [Min, Max]
	NaN           int64 // values that are NaN (e.g. no calls)
}

// NewHistogram returns an empty histogram of bins equal bins over
// [min, max].
func NewHistogram(name, title, xlabel string, min, max float64, bins int) *Histogram {
	return &Histogram{Name: name, Title: title, XLabel: xlabel, Min: min, Max: max, Counts: make([]int64, bins)}
}

// Add counts v; v == Max falls in the last bin.
func (h *Histogram) Add(v float64) {
	switch {
	case math.IsNaN(v):
		h.NaN++
	case v < h.Min:
		h.Below++
	case v > h.Max:
		h.Above++
	default:
		b := int(float64(len(h.Counts)) * (v - h.Min) / (h.Max - h.Min))
		h.Counts[min(b, len(h.Counts)-1)]++
	}
}

// QCInput is everything the QC report shows.
type QCInput struct {
	Title            string
	Samples, Markers int // in the input
	QC               []QCRow
	Hists            []*Histogram // e.g. sample call rate, marker call rate, MAF
	Timing           []Phase
	PeakRSS          int64
}

var histName = regexp.MustCompile(`^[a-z0-9-]+$`)

// WriteQCHTML writes the QC report to path (atomically) and the SVG and
// PNG copies of each histogram beside it (PATH minus .html plus
// .NAME.svg and .NAME.png).
func WriteQCHTML(path string, in *QCInput) error {
	var figs []*figure
	for _, h := range in.Hists {
		if !histName.MatchString(h.Name) {
			return fmt.Errorf("report %s: histogram name %q: want [a-z0-9-]+", path, h.Name)
		}
		f, err := histFigure(h)
		if err != nil {
			return fmt.Errorf("report %s: %w", path, err)
		}
		var out []string
		if h.Below+h.Above > 0 {
			out = append(out, fmt.Sprintf("%d outside [%g, %g]", h.Below+h.Above, h.Min, h.Max))
		}
		if h.NaN > 0 {
			out = append(out, fmt.Sprintf("%d undefined", h.NaN))
		}
		f.Caption = fmt.Sprintf("%d values in %d bins", sum(h.Counts), len(h.Counts))
		if len(out) > 0 {
			f.Caption += "; not shown: " + strings.Join(out, ", ")
		}
		figs = append(figs, f)
	}
	page := &pageData{Title: in.Title, Kind: "QC",
		Summary: []kv{{"samples in the input", fmt.Sprint(in.Samples)}, {"markers in the input", fmt.Sprint(in.Markers)}},
		QC:      in.QC}
	page.Timing, page.Memory = timingRows(in.Timing, in.PeakRSS)
	_, err := writeReport(path, page, figs)
	return err
}

func sum(c []int64) int64 {
	s := int64(0)
	for _, v := range c {
		s += v
	}
	return s
}

// writeReport writes the plot copies and then the page, all atomically;
// if any write fails the copies already written are removed.
func writeReport(path string, page *pageData, figs []*figure) ([]string, error) {
	if !strings.HasSuffix(path, ".html") {
		return nil, matrixio.BadInput("report %s: the name must end in .html", path)
	}
	var written []string
	fail := func(err error) ([]string, error) {
		for _, w := range written {
			os.Remove(w)
		}
		return nil, err
	}
	for _, f := range figs {
		for _, c := range []struct {
			ext  string
			data []byte
		}{{"svg", f.SVG}, {"png", f.PNG}} {
			p := plotPath(path, f.Key, c.ext)
			if err := matrixio.WriteFileAtomic(p, func(w io.Writer) error { _, err := w.Write(c.data); return err }); err != nil {
				return fail(err)
			}
			written = append(written, p)
		}
		page.Figures = append(page.Figures, pageFigure{ID: f.Key, Title: f.Title, Caption: f.Caption,
			SVG: template.HTML(inlineSVG(f.SVG)), SVGFile: filepath.Base(plotPath(path, f.Key, "svg")),
			PNGFile: filepath.Base(plotPath(path, f.Key, "png"))})
	}
	var buf bytes.Buffer
	if err := pageTemplate.Execute(&buf, page); err != nil {
		return fail(fmt.Errorf("report %s: %w", path, err))
	}
	if err := matrixio.WriteFileAtomic(path, func(w io.Writer) error { _, err := w.Write(buf.Bytes()); return err }); err != nil {
		return fail(err)
	}
	return append(written, path), nil
}

// inlineSVG drops the XML declaration and comment in front of the <svg>
// element so the markup can sit inside HTML.
func inlineSVG(b []byte) string {
	s := string(b)
	if i := strings.Index(s, "<svg"); i >= 0 {
		s = s[i:]
	}
	return s
}

// formatBytes renders a byte count with a binary unit (as the memory plan
// prints it).
func formatBytes(b int64) string { return randsvd.FormatBytes(b) }
