package main

import (
	"bufio"
	"context"
	"flag"
	"fmt"
	"io"
	"runtime"
	"slices"
	"strings"
	"time"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/randsvd"
)

// projectOptions are the flags of clinal project.
type projectOptions struct {
	model         string
	out           string
	keepAmbiguous bool
	complement    bool
	maxMismatch   float64
	rescale       string
	shrinkage     string
	effMarkers    float64
	threads       int
	field         string
	twoIDs        bool
	idHeaders     string
	pcPrefix      string
}

func projectFlags(fs *flag.FlagSet, o *projectOptions) {
	fs.StringVar(&o.model, "model", "", "PREFIX of a finished clinal pca run (PREFIX.loadings.tsv.gz, .spectrum.tsv, .report.json)")
	fs.StringVar(&o.out, "o", "", "output prefix (PREFIX2.covariates.tsv, PREFIX2.projection.tsv, PREFIX2.projection.json)")
	fs.BoolVar(&o.keepAmbiguous, "keep-ambiguous", false, "use strand-ambiguous markers (A/T, C/G) as written (default: drop them)")
	fs.BoolVar(&o.complement, "complement", false, "also match single-base markers typed on the other strand (complemented alleles)")
	fs.Float64Var(&o.maxMismatch, "max-allele-mismatch", 0.5, "refuse the input when more than this fraction of the markers at model positions have other alleles")
	fs.StringVar(&o.rescale, "rescale", string(randsvd.RescaleMass), "absent markers: mass (rescale by the loading mass present) or none (count them as 0, as the fit did)")
	fs.StringVar(&o.shrinkage, "shrinkage", string(randsvd.ShrinkLee2010), "correction of projected scores: lee2010 or none")
	fs.Float64Var(&o.effMarkers, "effective-markers", 0, "number of independent markers for the shrinkage estimate (default: the model's markers)")
	fs.IntVar(&o.threads, "threads", runtime.NumCPU(), "compute threads (results do not depend on it)")
	fs.StringVar(&o.field, "field", "GT", "VCF input: FORMAT field to read, GT or DS")
	fs.BoolVar(&o.twoIDs, "two-id-columns", false, "write the sample ID in two leading columns of the covariates")
	fs.StringVar(&o.idHeaders, "id-headers", "", "comma-separated header names of the ID column(s)")
	fs.StringVar(&o.pcPrefix, "pc-prefix", "PC", "name prefix of the PC columns")
}

// runProject is clinal project --model PREFIX INPUT -o PREFIX2: the
// samples of INPUT (a .clinal store or a VCF, "-" for stdin) placed on the
// axes of a finished PCA. Outputs:
//
//   - PREFIX2.covariates.tsv: the corrected scores, in the layout of clinal
//     pca's covariates (header sample_id PC1 ... PCk), so both files can be
//     used the same way;
//   - PREFIX2.projection.tsv: per sample, header sample_id markers_present
//     overlap PC1_raw ... PCk_raw PC1_mass ... PCk_mass: the model markers
//     with a call, their fraction of the model's, the scores before the
//     shrinkage correction and the loading mass present per PC;
//   - PREFIX2.projection.json: inputs, options, marker matching counts,
//     the shrinkage factors per PC and the estimators used.
func runProject(ctx context.Context, e *env, args []string) error {
	var o projectOptions
	fs := flag.NewFlagSet("project", flag.ContinueOnError)
	projectFlags(fs, &o)
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	switch {
	case len(pos) != 1:
		return usage("project: want one INPUT argument (a .clinal store or a VCF), got %d (clinal project --model PREFIX INPUT -o PREFIX2)", len(pos))
	case o.model == "":
		return usage("project: --model PREFIX is required")
	case o.out == "":
		return usage("project: -o PREFIX2 is required")
	case o.threads < 1:
		return usage("project: --threads %d: want at least 1", o.threads)
	case !(o.maxMismatch > 0 && o.maxMismatch <= 1):
		return usage("project: --max-allele-mismatch %v: want a fraction in (0, 1]", o.maxMismatch)
	case o.effMarkers < 0:
		return usage("project: --effective-markers %v: want a positive number", o.effMarkers)
	}
	if err := matrixio.CheckOutputPrefix(o.out); err != nil {
		return fmt.Errorf("project: -o: %w", err)
	}
	switch randsvd.Rescale(o.rescale) {
	case randsvd.RescaleMass, randsvd.RescaleNone:
	default:
		return usage("project: --rescale %q: want mass or none", o.rescale)
	}
	switch randsvd.ShrinkageMethod(o.shrinkage) {
	case randsvd.ShrinkLee2010, randsvd.ShrinkNone:
	default:
		return usage("project: --shrinkage %q: want lee2010 or none", o.shrinkage)
	}
	t0 := time.Now()
	model, err := matrixio.ReadPCAModel(o.model)
	if err != nil {
		return err
	}
	popt := randsvd.ProjectOptions{KeepAmbiguous: o.keepAmbiguous, Complement: o.complement, MaxAlleleMismatch: o.maxMismatch,
		Rescale: randsvd.Rescale(o.rescale), Shrinkage: randsvd.ShrinkageMethod(o.shrinkage), EffectiveMarkers: o.effMarkers,
		Threads: o.threads, Field: o.field, Stdin: e.stdin}
	pr, err := randsvd.ProjectPath(ctx, model, pos[0], popt)
	if err != nil {
		return err
	}
	return writeProjection(e, pos[0], &o, model, pr, time.Since(t0))
}

// projectionReport is PREFIX2.projection.json.
type projectionReport struct {
	Version   string                  `json:"version"`
	Command   string                  `json:"command"`
	Model     projectionModel         `json:"model"`
	Input     projectionInput         `json:"input"`
	Options   projectionOptionsJSON   `json:"options"`
	Markers   randsvd.MatchSummary    `json:"markers"`
	Overlap   projectionOverlap       `json:"overlap"`
	Shrinkage randsvd.Shrinkage       `json:"shrinkage"`
	Estimator map[string]string       `json:"estimator"`
	Import    *matrixio.ImportSummary `json:"vcf_import,omitempty"`
	Outputs   []string                `json:"outputs"`
	Wall      float64                 `json:"wall_seconds"`
}

type projectionModel struct {
	Prefix      string    `json:"prefix"`
	K           int       `json:"k"`
	MarkersUsed int       `json:"markers_used"`
	SamplesUsed int       `json:"samples_used"`
	Eigenvalues []float64 `json:"eigenvalues"`
	Trace       float64   `json:"trace"`
}

type projectionInput struct {
	Path    string `json:"path"`
	Samples int    `json:"samples"`
	Markers int    `json:"markers"`
}

type projectionOptionsJSON struct {
	KeepAmbiguous     bool    `json:"keep_ambiguous"`
	Complement        bool    `json:"complement"`
	MaxAlleleMismatch float64 `json:"max_allele_mismatch"`
	Rescale           string  `json:"rescale"`
	Shrinkage         string  `json:"shrinkage"`
	EffectiveMarkers  float64 `json:"effective_markers,omitempty"`
	Field             string  `json:"field"`
	Threads           int     `json:"threads"`
}

type projectionOverlap struct {
	Min    float64 `json:"min"`
	Median float64 `json:"median"`
	Max    float64 `json:"max"`
}

func writeProjection(e *env, input string, o *projectOptions, model *matrixio.PCAModel, pr *randsvd.Projection, wall time.Duration) error {
	k := pr.K
	copt := matrixio.CovariateOptions{TwoIDColumns: o.twoIDs, Prefix: o.pcPrefix}
	if o.idHeaders != "" {
		copt.IDHeaders = strings.Split(o.idHeaders, ",")
	}
	covPath, tabPath, jsonPath := o.out+".covariates.tsv", o.out+".projection.tsv", o.out+".projection.json"
	if err := matrixio.WriteCovariates(covPath, pr.Samples, k, func(i, j int) float64 { return pr.Corrected[i*k+j] }, copt); err != nil {
		return err
	}
	err := matrixio.WriteFileAtomic(tabPath, func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		bw.WriteString("sample_id\tmarkers_present\toverlap")
		for j := 1; j <= k; j++ {
			fmt.Fprintf(bw, "\t%s%d_raw", o.pcPrefix, j)
		}
		for j := 1; j <= k; j++ {
			fmt.Fprintf(bw, "\t%s%d_mass", o.pcPrefix, j)
		}
		bw.WriteByte('\n')
		for i, id := range pr.Samples {
			fmt.Fprintf(bw, "%s\t%d\t%s", id, pr.Present[i], matrixio.FormatFloat(pr.Overlap[i]))
			for j := 0; j < k; j++ {
				bw.WriteString("\t" + matrixio.FormatFloat(pr.Raw[i*k+j]))
			}
			for j := 0; j < k; j++ {
				bw.WriteString("\t" + matrixio.FormatFloat(pr.Mass[i*k+j]))
			}
			bw.WriteByte('\n')
		}
		return bw.Flush()
	})
	if err != nil {
		return err
	}
	ov := slices.Clone(pr.Overlap)
	slices.Sort(ov)
	rep := projectionReport{Version: version, Command: "project",
		Model: projectionModel{Prefix: model.Prefix, K: k, MarkersUsed: model.MarkersUsed, SamplesUsed: model.SamplesUsed,
			Eigenvalues: model.Eigenvalues, Trace: model.Trace},
		Input: projectionInput{Path: input, Samples: len(pr.Samples), Markers: pr.Match.InputMarkers},
		Options: projectionOptionsJSON{KeepAmbiguous: o.keepAmbiguous, Complement: o.complement, MaxAlleleMismatch: o.maxMismatch,
			Rescale: string(pr.Rescale), Shrinkage: o.shrinkage, EffectiveMarkers: o.effMarkers, Field: o.field, Threads: o.threads},
		Markers:   pr.Match,
		Overlap:   projectionOverlap{Min: ov[0], Median: ov[len(ov)/2], Max: ov[len(ov)-1]},
		Shrinkage: pr.Shrinkage,
		Estimator: map[string]string{
			"raw":       "score_k = sum_j z_j * loading_jk / (mass_k * sqrt(markers_used * eigenvalue_k)), z_j = (g_j - 2 freq_j) / scale_j over the model markers with a call, g_j counting the model's allele; mass_k = sum of loading_jk^2 over those markers (1 when rescale is none)",
			"corrected": "raw score_k / factor_k (Lee, Zou and Wright 2010, Ann. Stat. 38:3605): factor_k = (ell_k - 1) / (ell_k - 1 + gamma), gamma = markers / (samples_used - 1), ell_k the population spike solving d_k = ell_k (1 + gamma / (ell_k - 1)) for the sample spike d_k in noise units; factor 1 at or below the edge",
			"overlap":   "model markers with a call in the sample / model markers",
		},
		Import:  pr.Import,
		Outputs: []string{covPath, tabPath, jsonPath},
		Wall:    wall.Seconds(),
	}
	if err := matrixio.WriteJSON(jsonPath, &rep); err != nil {
		return err
	}
	var fac []string
	for j, f := range pr.Shrinkage.Factors {
		if pr.Shrinkage.Corrected[j] {
			fac = append(fac, fmt.Sprintf("%s%d %.3f", o.pcPrefix, j+1, f))
		}
	}
	facs := "none above the noise edge"
	if pr.Shrinkage.Method == string(randsvd.ShrinkNone) {
		facs = "off"
	} else if len(fac) > 0 {
		facs = strings.Join(fac, ", ")
	}
	m := pr.Match
	fmt.Fprintf(e.stdout, "project: %d samples onto %d PCs of %s: %d of %d model markers used (%d REF/ALT swapped, %d strand-ambiguous %s, %d allele mismatches); median overlap %.3f; shrinkage factors %s; outputs %s.*\n",
		len(pr.Samples), k, model.Prefix, m.Used, m.ModelMarkers, m.Swapped, m.Ambiguous, map[bool]string{true: "dropped", false: "kept"}[m.AmbiguousDropped],
		m.AlleleMismatch, rep.Overlap.Median, facs, o.out)
	return nil
}
