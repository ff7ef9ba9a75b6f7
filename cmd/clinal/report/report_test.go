package report

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
	"gonum.org/v1/gonum/mat"
)

// pcaFixture builds a PCA input from an exact dense eigendecomposition
// (gonum's mat.EigenSym, the reference library) of K = Z^T Z / M for a
// small simulated cohort: groups of perGroup samples with allele
// frequencies drawn around shared ancestral ones, plus unlabelled samples,
// standardized as in Patterson, Price & Reich 2006 (z = (g - 2p) /
// sqrt(2p(1-p))). The scores are the unit eigenvectors.
func pcaFixture(t testing.TB, groups []string, perGroup, unlabelled, markers, k int, seed uint64) *PCAInput {
	t.Helper()
	r := rand.New(rand.NewPCG(seed, 7))
	n := len(groups)*perGroup + unlabelled
	in := &PCAInput{Title: "Meridian Archipelago registry (simulated)", K: k, Samples: n, Markers: markers,
		Passes: 9, StopReason: "converged"}
	if len(groups) > 0 {
		in.Groups = make([]string, n)
	}
	for g, name := range groups {
		for i := range perGroup {
			in.SampleIDs = append(in.SampleIDs, fmt.Sprintf("%s-%04d", name, i+1))
			in.Groups[g*perGroup+i] = name
		}
	}
	for i := range unlabelled {
		in.SampleIDs = append(in.SampleIDs, fmt.Sprintf("isle0-%04d", i+1))
	}
	z := mat.NewDense(markers, n, nil)
	g := make([]float64, n)
	for j := range markers {
		anc := 0.1 + 0.8*r.Float64()
		freq := make([]float64, len(groups)+1)
		for c := range freq {
			freq[c] = math.Min(0.98, math.Max(0.02, anc+0.12*r.NormFloat64()))
		}
		sum := 0.0
		for i := range n {
			c := len(groups)
			if i < len(groups)*perGroup {
				c = i / perGroup
			}
			g[i] = 0
			for range 2 {
				if r.Float64() < freq[c] {
					g[i]++
				}
			}
			sum += g[i]
		}
		p := sum / float64(2*n)
		if p == 0 || p == 1 {
			continue // monomorphic: contributes nothing
		}
		s := math.Sqrt(2 * p * (1 - p))
		for i := range n {
			z.Set(j, i, (g[i]-2*p)/s)
		}
	}
	var kmat mat.SymDense
	kmat.SymOuterK(1/float64(markers), z.T())
	var es mat.EigenSym
	if !es.Factorize(&kmat, true) {
		t.Fatal("EigenSym failed")
	}
	vals := es.Values(nil)
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	for i := range n {
		in.Trace += kmat.At(i, i)
	}
	in.Scores = make([][]float64, n)
	for i := range n {
		in.Scores[i] = make([]float64, k)
		for j := range k {
			in.Scores[i][j] = vecs.At(i, n-1-j)
		}
	}
	for j := range k {
		ev := vals[n-1-j]
		in.Eigenvalues = append(in.Eigenvalues, ev)
		u := vecs.ColView(n - 1 - j)
		var ku mat.VecDense
		ku.MulVec(&kmat, u)
		ku.AddScaledVec(&ku, -ev, u)
		in.Residuals = append(in.Residuals, mat.Norm(&ku, 2)/ev)
		in.Converged = append(in.Converged, true)
	}
	in.MPEdge = math.Pow(1+math.Sqrt(float64(n)/float64(markers)), 2) * in.Trace / float64(n)
	in.QC = []QCRow{{"input", 0, n}, {"sample call rate < 0.95", 0, n}, {"marker MAF < 0.01", 3, markers - 3}}
	in.Timing = []Phase{{"open", 0.01, 0.01}, {"solve", 1.25, 2.4}, {"write", 0.05, 0.04}}
	in.PeakRSS = 87 << 20
	return in
}

// readSpectrumFractions writes spectrum.tsv with matrixio.WriteSpectrum
// from the fixture, as clinal pca does (variance_fraction = eigenvalue /
// trace), and reads the variance_fraction column back.
func readSpectrumFractions(t *testing.T, in *PCAInput) []float64 {
	t.Helper()
	path := filepath.Join(t.TempDir(), "x.spectrum.tsv")
	var rows []matrixio.SpectrumRow
	for j, ev := range in.Eigenvalues {
		rows = append(rows, matrixio.SpectrumRow{Eigenvalue: ev, VarianceFraction: ev / in.Trace, Residual: in.Residuals[j],
			Converged: true, TWStatistic: math.NaN(), TWP: math.NaN()})
	}
	if err := matrixio.WriteSpectrum(path, rows); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Scan()
	col := -1
	for i, h := range strings.Split(sc.Text(), "\t") {
		if h == "variance_fraction" {
			col = i
		}
	}
	if col < 0 {
		t.Fatalf("spectrum.tsv has no variance_fraction column: %q", sc.Text())
	}
	var out []float64
	for sc.Scan() {
		out = append(out, atof(strings.Split(sc.Text(), "\t")[col]))
	}
	return out
}

var meridian = []string{"isle1", "isle2", "isle3", "isle10", "mainland", "admixed"}

func writeFixture(t *testing.T, in *PCAInput) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "cohort.report.html")
	if err := WritePCAHTML(path, in); err != nil {
		t.Fatal(err)
	}
	return path
}

func readShapes(t *testing.T, path string) *svgShapes {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	s, err := parseSVG(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return s
}

var pcLabelRE = regexp.MustCompile(`^PC([0-9]+) \(([0-9.]+)%\)$`)

// legendEntries maps legend group names to the counts printed beside them.
func legendEntries(s *svgShapes) map[string]int {
	out := map[string]int{}
	re := regexp.MustCompile(`^(.*) \(([0-9]+)\)$`)
	for _, tx := range s.texts {
		if m := re.FindStringSubmatch(tx.s); m != nil && !pcLabelRE.MatchString(tx.s) {
			out[m[1]], _ = strconv.Atoi(m[2])
		}
	}
	return out
}

// TestScatterSVG reads the PC scatter plots back from their SVG copies
// and checks them against the input they were drawn from (scores and
// eigenvalues from gonum's EigenSym; the spectrum.tsv fractions written by
// matrixio.WriteSpectrum): one disc per sample in its group's colour, disc
// positions linear in the scores (so the plot shows the data, not a
// shuffle), axis ranges that contain every score with at most the 5%
// margins, tick labels at their ticks, "PCj (x.xx%)" labels equal to
// 100 * variance_fraction to the printed two decimals, and a legend that
// names every group with its count.
func TestScatterSVG(t *testing.T) {
	cases := []struct {
		name       string
		groups     []string
		perGroup   int
		unlabelled int
	}{
		{"six groups", meridian, 14, 0},
		{"groups and unlabelled", meridian[:3], 20, 9},
		{"no labels", nil, 0, 40},
		{"ten groups: second colour cycle as rings", []string{"g1", "g2", "g3", "g4", "g5", "g6", "g7", "g8", "g9", "g10"}, 6, 0},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			in := pcaFixture(t, tc.groups, tc.perGroup, tc.unlabelled, 300, 4, 11)
			if tc.groups == nil {
				in.Groups = nil
			}
			path := writeFixture(t, in)
			frac := readSpectrumFractions(t, in)
			for _, pair := range [][2]int{{0, 1}, {2, 3}} {
				key := fmt.Sprintf("pc%d%d", pair[0]+1, pair[1]+1)
				s := readShapes(t, plotPath(path, key, "svg"))
				checkScatter(t, key, s, in, frac, pair[0], pair[1])
			}
		})
	}
}

func checkScatter(t *testing.T, key string, s *svgShapes, in *PCAInput, frac []float64, a, b int) {
	t.Helper()
	n := len(in.SampleIDs)
	if len(s.marks) != n {
		t.Fatalf("%s: %d sample discs, want %d (one per sample)", key, len(s.marks), n)
	}
	// Group colours: expected sizes from the input labels.
	gs := makeGroups(in.Groups, n)
	wantByColor := map[string]int{}
	for i := range n {
		c, hollow := gs.style(gs.of[i])
		wantByColor[hexColor(c)+fmt.Sprint(hollow)]++
	}
	gotByColor := map[string]int{}
	for _, m := range s.marks {
		gotByColor[m.color+fmt.Sprint(m.hollow)]++
	}
	if fmt.Sprint(gotByColor) != fmt.Sprint(wantByColor) {
		t.Errorf("%s: discs per colour %v, want %v", key, gotByColor, wantByColor)
	}
	// Positions: the disc centres must be an affine image of the scores.
	// Match discs to samples by sorting both along x is not needed: fit
	// each axis on the sorted coordinates (an increasing affine map keeps
	// order) and then check every sample has a disc at its predicted spot.
	xs, ys := make([]float64, n), make([]float64, n)
	for i := range n {
		xs[i], ys[i] = in.Scores[i][a], in.Scores[i][b]
	}
	mx, my := make([]float64, n), make([]float64, n)
	for i, m := range s.marks {
		mx[i], my[i] = m.x, m.y
	}
	ax, bx, rx := fitLine(sorted(xs), sorted(mx))
	ay, by, ry := fitLine(sorted(ys), sorted(my))
	// vgsvg prints 5 significant digits: 0.01 pt at these sizes.
	if ax <= 0 || ay <= 0 || rx > 0.02 || ry > 0.02 {
		t.Fatalf("%s: disc positions are not an increasing affine map of the scores: x slope %g residual %g, y slope %g residual %g",
			key, ax, rx, ay, ry)
	}
	used := make([]bool, n)
	for i := range n {
		px, py := ax*xs[i]+bx, ay*ys[i]+by
		found := false
		for j, m := range s.marks {
			if !used[j] && math.Abs(m.x-px) < 0.03 && math.Abs(m.y-py) < 0.03 {
				used[j], found = true, true
				break
			}
		}
		if !found {
			t.Fatalf("%s: no disc at sample %s's scores (%g, %g)", key, in.SampleIDs[i], xs[i], ys[i])
		}
	}
	// Axis ranges: the axis lines span [lo, hi] in data units.
	xa, ya, err := s.axes()
	if err != nil {
		t.Fatal(err)
	}
	checkRange(t, key+" x axis", (xa.x0-bx)/ax, (xa.x1-bx)/ax, xs)
	checkRange(t, key+" y axis", (ya.y0-by)/ay, (ya.y1-by)/ay, ys)
	// Tick labels sit at tick marks: for each numeric label under the x
	// axis, a tick segment at a*value+b.
	nt := 0
	for _, tx := range s.texts {
		v, err := strconv.ParseFloat(tx.s, 64)
		if err != nil || tx.y >= xa.y0 {
			continue
		}
		if tx.x < xa.x0-20 || tx.x > xa.x1+20 { // left of the plot: y-axis labels
			continue
		}
		if tx.y < xa.y0-40 {
			continue
		}
		nt++
		px := ax*v + bx
		ok := false
		for _, sg := range s.segs {
			if sg.x0 == sg.x1 && sg.y1 <= xa.y0+0.01 && math.Abs(sg.x0-px) < 0.05 {
				ok = true
			}
		}
		if !ok {
			t.Errorf("%s: x tick label %q has no tick mark at %.2f", key, tx.s, px)
		}
	}
	if nt < 2 {
		t.Errorf("%s: %d numeric x tick labels, want at least 2", key, nt)
	}
	// Axis labels: "PCj (x.xx%)" with x.xx = 100 * variance_fraction of
	// spectrum.tsv, rounded to the two printed decimals.
	labels := map[int]float64{}
	for _, tx := range s.texts {
		if m := pcLabelRE.FindStringSubmatch(tx.s); m != nil {
			j, _ := strconv.Atoi(m[1])
			labels[j], _ = strconv.ParseFloat(m[2], 64)
		}
	}
	for _, j := range []int{a, b} {
		got, ok := labels[j+1]
		if !ok {
			t.Fatalf("%s: no axis label PC%d (..%%) among %d texts", key, j+1, len(s.texts))
		}
		if want := 100 * frac[j]; math.Abs(got-want) > 0.005+1e-9 {
			t.Errorf("%s: PC%d label %.2f%%, spectrum.tsv says %.4f%%", key, j+1, got, want)
		}
		if want := fmt.Sprintf("%.2f", 100*in.Eigenvalues[j]/in.Trace); strconv.FormatFloat(got, 'f', 2, 64) != want {
			t.Errorf("%s: PC%d label %.2f%%, 100*eigenvalue/trace = %s%%", key, j+1, got, want)
		}
	}
	// Legend: every group named, with its count and a swatch of its colour.
	leg := legendEntries(s)
	wantLeg := map[string]int{}
	if len(gs.names) > 0 {
		for i := range n {
			wantLeg[gs.names[gs.of[i]]]++
		}
	}
	if fmt.Sprint(leg) != fmt.Sprint(wantLeg) {
		t.Errorf("%s: legend %v, want %v", key, leg, wantLeg)
	}
	sw := 0
	for _, r := range s.rects {
		if math.Abs(r.x1-r.x0-swatchSide) < 0.02 && math.Abs(r.y1-r.y0-swatchSide) < 0.02 {
			sw++
		}
	}
	if sw != len(gs.names) {
		t.Errorf("%s: %d legend swatches, want %d", key, sw, len(gs.names))
	}
}

func checkRange(t *testing.T, what string, lo, hi float64, v []float64) {
	t.Helper()
	if lo > hi {
		lo, hi = hi, lo
	}
	vlo, vhi := minf(v), maxf(v)
	if lo > vlo || hi < vhi {
		t.Errorf("%s spans [%g, %g], scores span [%g, %g]: not all scores inside", what, lo, hi, vlo, vhi)
	}
	if span := vhi - vlo; hi-lo > 1.1*span*1.001 {
		t.Errorf("%s spans [%g, %g], more than the scores' [%g, %g] plus 5%% margins", what, lo, hi, vlo, vhi)
	}
}

func sorted(v []float64) []float64 {
	s := append([]float64(nil), v...)
	for i := 1; i < len(s); i++ {
		for j := i; j > 0 && s[j] < s[j-1]; j-- {
			s[j], s[j-1] = s[j-1], s[j]
		}
	}
	return s
}

func hexColor(c interface{ RGBA() (r, g, b, a uint32) }) string {
	r, g, b, _ := c.RGBA()
	return fmt.Sprintf("#%02X%02X%02X", r>>8, g>>8, b>>8)
}

// TestScreeSVG: one disc per eigenvalue at heights linear in the
// eigenvalues (from gonum's EigenSym), the y axis from 0 covering them
// all, and a dashed horizontal line at the Marchenko-Pastur edge
// (1 + sqrt(N/M))^2 * trace/N computed here.
func TestScreeSVG(t *testing.T) {
	for _, k := range []int{4, 10, 25} {
		t.Run(fmt.Sprintf("k=%d", k), func(t *testing.T) {
			in := pcaFixture(t, meridian[:4], 10, 0, 250, k, 3)
			path := writeFixture(t, in)
			s := readShapes(t, plotPath(path, "scree", "svg"))
			var discs []mark
			for _, m := range s.marks {
				if m.color == hexColor(palette[1]) {
					discs = append(discs, m)
				}
			}
			// One more disc of the same colour is the legend's thumbnail.
			if len(discs) != k+1 {
				t.Fatalf("%d eigenvalue discs, want %d plus one in the legend", len(discs), k)
			}
			// Drop the legend's disc: the one whose removal leaves the rest
			// an affine image of (PC number, eigenvalue).
			var ay, by float64
			fits := 0
			for drop := range discs {
				rest := append(append([]mark(nil), discs[:drop]...), discs[drop+1:]...)
				sortMarksByX(rest)
				idx := make([]float64, k)
				px, py := make([]float64, k), make([]float64, k)
				for j := range k {
					idx[j], px[j], py[j] = float64(j+1), rest[j].x, rest[j].y
				}
				ax, _, rx := fitLine(idx, px)
				a, b, ry := fitLine(in.Eigenvalues, py)
				if ax > 0 && a > 0 && rx < 0.02 && ry < 0.02 {
					fits++
					ay, by = a, b
				}
			}
			if fits != 1 {
				t.Fatalf("%d ways to read the discs as an affine image of (PC, eigenvalue), want 1", fits)
			}
			_, ya, err := s.axes()
			if err != nil {
				t.Fatal(err)
			}
			if lo := (ya.y0 - by) / ay; math.Abs(lo) > 1e-3*in.Eigenvalues[0] {
				t.Errorf("y axis starts at %g, want 0", lo)
			}
			if hi := (ya.y1 - by) / ay; hi < in.Eigenvalues[0] || hi < in.MPEdge {
				t.Errorf("y axis ends at %g below PC1 %g or the edge %g", hi, in.Eigenvalues[0], in.MPEdge)
			}
			wantEdge := math.Pow(1+math.Sqrt(float64(in.Samples)/250), 2) * in.Trace / float64(in.Samples)
			found := false
			for _, sg := range s.segs {
				if sg.dashed && sg.y0 == sg.y1 && math.Abs(sg.x1-sg.x0) > 100 {
					if v := (sg.y0 - by) / ay; math.Abs(v-wantEdge) < 2e-3*wantEdge {
						found = true
					}
				}
			}
			if !found {
				t.Errorf("no dashed horizontal line at the Marchenko-Pastur edge %g", wantEdge)
			}
			for _, l := range s.texts {
				if strings.HasPrefix(l.s, "Marchenko-Pastur edge ") {
					if v := atof(strings.TrimPrefix(l.s, "Marchenko-Pastur edge ")); math.Abs(v-wantEdge) > 1e-3*wantEdge {
						t.Errorf("legend says edge %g, want %g", v, wantEdge)
					}
				}
			}
		})
	}
}

func sortMarksByX(m []mark) {
	for i := 1; i < len(m); i++ {
		for j := i; j > 0 && m[j].x < m[j-1].x; j-- {
			m[j], m[j-1] = m[j-1], m[j]
		}
	}
}

// TestReportHTML checks the page itself: one self-contained file (no
// script, no external reference), the plots inline, tables with the
// input's numbers, all user text escaped.
func TestReportHTML(t *testing.T) {
	in := pcaFixture(t, []string{`isle<b>1`, `a&b "q"`}, 12, 3, 200, 4, 5)
	in.Title = `Registry <script>alert(1)</script> & co`
	in.LabelsNote = "27 of 27 samples labelled <i>"
	path := writeFixture(t, in)
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	// The SVG namespace names are identifiers, not references.
	h := strings.NewReplacer(`xmlns="http://www.w3.org/2000/svg"`, "", `xmlns:xlink="http://www.w3.org/1999/xlink"`, "").Replace(string(b))
	for _, bad := range []string{"<script", "<b>1", "<i>", "http://", "https://", "src=", "@import", "url("} {
		if strings.Contains(h, bad) {
			t.Errorf("report contains %q", bad)
		}
	}
	for _, want := range []string{
		"Registry &lt;script&gt;alert(1)&lt;/script&gt; &amp; co",
		"isle&lt;b&gt;1 (12)", // legend text inside the inline SVG, escaped by vgsvg
		`<figure id="pc12">`, `<figure id="pc34">`, `<figure id="scree">`,
		"cohort.report.pc12.png", "cohort.report.scree.svg",
		fmt.Sprintf("<td>%.2f</td>", 100*in.Eigenvalues[0]/in.Trace),
		fmt.Sprintf("<td>%.3g</td>", in.Residuals[1]),
		"<td>marker MAF &lt; 0.01</td><td>3</td><td>197</td>",
		"87.0 MiB",
	} {
		if !strings.Contains(h, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if n := strings.Count(h, "<svg"); n != 3 {
		t.Errorf("%d inline SVGs, want 3", n)
	}
	// Every file the report names exists beside it.
	for _, key := range []string{"pc12", "pc34", "scree"} {
		for _, ext := range []string{"svg", "png"} {
			p := plotPath(path, key, ext)
			b, err := os.ReadFile(p)
			if err != nil {
				t.Fatal(err)
			}
			if ext == "png" && !bytes.HasPrefix(b, []byte("\x89PNG\r\n\x1a\n")) {
				t.Errorf("%s is not a PNG (signature, ISO/IEC 15948)", p)
			}
		}
	}
}

// TestSubsample: beyond MaxPoints an evenly spaced subset is drawn and
// the caption says how many.
func TestSubsample(t *testing.T) {
	cases := []struct{ n, max, want, stride int }{
		{120, 50, 40, 3}, {120, 120, 120, 1}, {120, 0, 120, 1}, {101, 50, 34, 3},
	}
	for _, tc := range cases {
		show, stride := subsample(tc.n, tc.max)
		if len(show) != tc.want || stride != tc.stride {
			t.Errorf("subsample(%d, %d): %d points stride %d, want %d stride %d", tc.n, tc.max, len(show), stride, tc.want, tc.stride)
		}
	}
	in := pcaFixture(t, meridian[:3], 40, 0, 150, 4, 9)
	in.MaxPoints = 50
	path := writeFixture(t, in)
	s := readShapes(t, plotPath(path, "pc12", "svg"))
	if len(s.marks) != 40 {
		t.Errorf("%d discs, want 40 (every 3rd of 120)", len(s.marks))
	}
	b, _ := os.ReadFile(path)
	if !strings.Contains(string(b), "40 of 120 drawn: every 3-th sample") {
		t.Errorf("caption does not say 40 of 120 drawn")
	}
}

// TestWriteFailures: a failed write leaves no output behind, and bad
// arguments are rejected before anything is written.
func TestWriteFailures(t *testing.T) {
	in := pcaFixture(t, meridian[:2], 5, 0, 100, 4, 1)
	dir := t.TempDir()
	// The report's name is taken by a directory: the rename of the page
	// fails after the plot copies were written, and they must go.
	block := filepath.Join(dir, "r.report.html")
	if err := os.Mkdir(block, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := WritePCAHTML(block, in); err == nil {
		t.Fatal("writing over a directory succeeded")
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		var names []string
		for _, e := range ents {
			names = append(names, e.Name())
		}
		t.Errorf("left behind %v, want only the directory", names)
	}
	bad := []struct {
		name string
		path string
		edit func(*PCAInput)
		bad  bool // want a BadInput error
	}{
		{"not .html", filepath.Join(dir, "r.htm"), func(*PCAInput) {}, true},
		{"score rows", filepath.Join(dir, "a.html"), func(p *PCAInput) { p.Scores = p.Scores[1:] }, false},
		{"group count", filepath.Join(dir, "b.html"), func(p *PCAInput) { p.Groups = p.Groups[1:] }, false},
		{"short rows", filepath.Join(dir, "c.html"), func(p *PCAInput) { p.Scores[3] = p.Scores[3][:2] }, false},
		{"no eigenvalues", filepath.Join(dir, "d.html"), func(p *PCAInput) { p.Eigenvalues = nil }, false},
	}
	for _, tc := range bad {
		t.Run(tc.name, func(t *testing.T) {
			c := *in
			c.Scores = append([][]float64(nil), in.Scores...)
			tc.edit(&c)
			err := WritePCAHTML(tc.path, &c)
			if err == nil {
				t.Fatal("no error")
			}
			if matrixio.IsBadInput(err) != tc.bad {
				t.Errorf("IsBadInput = %v for %v", !tc.bad, err)
			}
			if _, err := os.Stat(tc.path); !errors.Is(err, os.ErrNotExist) {
				t.Errorf("%s exists after a failed write", tc.path)
			}
		})
	}
}

// TestHistogram: values fall in the bins a hand count gives, and the QC
// report draws one bar per bin with heights proportional to the counts.
func TestHistogram(t *testing.T) {
	h := NewHistogram("maf", "Minor allele frequency", "MAF", 0, 0.5, 5)
	// Bins of width 0.1: [0,.1) [.1,.2) [.2,.3) [.3,.4) [.4,.5]; hand count.
	for _, v := range []float64{0, 0.05, 0.1, 0.15, 0.19, 0.25, 0.35, 0.36, 0.37, 0.5, -0.1, 0.7, math.NaN()} {
		h.Add(v)
	}
	want := []int64{2, 3, 1, 3, 1}
	if fmt.Sprint(h.Counts) != fmt.Sprint(want) || h.Below != 1 || h.Above != 1 || h.NaN != 1 {
		t.Fatalf("counts %v below %d above %d NaN %d, want %v 1 1 1", h.Counts, h.Below, h.Above, h.NaN, want)
	}
	path := filepath.Join(t.TempDir(), "c.qc.html")
	qin := &QCInput{Title: "QC", Samples: 10, Markers: 13, QC: []QCRow{{"marker MAF < 0.01", 2, 11}}, Hists: []*Histogram{h}}
	if err := WriteQCHTML(path, qin); err != nil {
		t.Fatal(err)
	}
	s := readShapes(t, plotPath(path, "maf", "svg"))
	var bars []rect
	for _, r := range s.rects {
		if r.color == hexColor(palette[5]) {
			bars = append(bars, r)
		}
	}
	if len(bars) != len(want) {
		t.Fatalf("%d bars, want %d", len(bars), len(want))
	}
	for i := 1; i < len(bars); i++ {
		for j := i; j > 0 && bars[j].x0 < bars[j-1].x0; j-- {
			bars[j], bars[j-1] = bars[j-1], bars[j]
		}
	}
	cnt, hgt := make([]float64, len(bars)), make([]float64, len(bars))
	for i, b := range bars {
		cnt[i], hgt[i] = float64(want[i]), b.y1-b.y0
	}
	if a, b, res := fitLine(cnt, hgt); a <= 0 || math.Abs(b) > 0.02 || res > 0.02 {
		t.Errorf("bar heights %v not proportional to counts %v", hgt, cnt)
	}
	page, _ := os.ReadFile(path)
	for _, w := range []string{"10 values in 5 bins; not shown: 2 outside [0, 0.5], 1 undefined", "<td>marker MAF &lt; 0.01</td>"} {
		if !strings.Contains(string(page), w) {
			t.Errorf("QC report lacks %q", w)
		}
	}
}

// TestNaturalOrder: groups are listed with numbers in numeric order.
func TestNaturalOrder(t *testing.T) {
	gs := makeGroups([]string{"isle10", "isle2", "", "mainland", "isle1", "isle2"}, 6)
	if got, want := strings.Join(gs.names, ","), "isle1,isle2,isle10,mainland,"+UnlabelledName; got != want {
		t.Errorf("legend order %s, want %s", got, want)
	}
}
