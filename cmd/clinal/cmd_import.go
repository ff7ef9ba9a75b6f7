package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"sort"
	"strings"
	"text/tabwriter"

	"github.com/clinal/clinal/matrixio"
)

// runImport: clinal import -o OUT.clinal [flags] INPUT...
func runImport(ctx context.Context, e *env, args []string) error {
	fs := flag.NewFlagSet("import", flag.ContinueOnError)
	out := fs.String("o", "", "output store (.clinal)")
	field := fs.String("field", "GT", "VCF FORMAT field: GT (hard calls) or DS (dosages, float store)")
	matrix := fs.Bool("matrix", false, "inputs are dense numeric TSV matrices, not VCF")
	markersAsRows := fs.Bool("markers-as-rows", false, "with --matrix: one row per marker (first column marker ID, header sample IDs)")
	haploid := fs.String("haploid", "hom", "haploid GT calls: hom (0 -> 0, 1 -> 2) or missing")
	split := fs.Bool("split-multiallelic", false, "split multi-allelic records into one biallelic marker per ALT (default: skip them)")
	threads := fs.Int("threads", 2, "parser and compressor goroutines")
	chunk := fs.Int("chunk-markers", 0, "markers per store chunk (0: about 2 MiB per chunk)")
	tmpDir := fs.String("tmp-dir", "", "with --matrix (samples as rows): directory for the transpose spool (default: beside the output)")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if *out == "" {
		return usage("import: -o OUT.clinal is required")
	}
	if len(pos) == 0 {
		return usage("import: no input files (use - for standard input)")
	}
	if *matrix {
		sum, err := matrixio.ImportDense(ctx, pos, *out, matrixio.DenseOptions{
			MarkersAsRows: *markersAsRows, Threads: *threads, ChunkMarkers: *chunk, Stdin: e.stdin, TempDir: *tmpDir})
		if err != nil {
			return err
		}
		fmt.Fprintf(e.stdout, "Imported %d samples x %d markers from %d dense matrix file(s) into %s (float32 store; %d missing values) in %.1f s.\n",
			sum.Samples, sum.Markers, len(sum.Files), *out, sum.MissingValues, sum.Seconds)
		return nil
	}
	sum, err := matrixio.ImportVCF(ctx, pos, *out, matrixio.ImportOptions{
		Field: *field, Haploid: *haploid, SplitMultiallelic: *split, Threads: *threads,
		ChunkMarkers: *chunk, Stdin: e.stdin})
	if err != nil {
		return err
	}
	multi := fmt.Sprintf("%d multi-allelic records skipped", sum.SkippedMultiallelic)
	if *split {
		multi = fmt.Sprintf("%d multi-allelic records split", sum.SplitMultiallelic)
	}
	fmt.Fprintf(e.stdout, "Read %d records for %d samples from %d VCF file(s) and wrote %d markers (%s, %s) to %s; %s, %d with over-long fields skipped, %d monomorphic kept; %d haploid calls (%s), %d partially missing calls stored as missing, %d missing calls in all; %.1f s wall.\n",
		sum.Records, sum.Samples, len(sum.Files), sum.Markers, sum.Field, sum.Codec, *out,
		multi, sum.SkippedLongFields, sum.Monomorphic, sum.HaploidCalls, *haploid, sum.PartialMissingCalls, sum.MissingCalls, sum.Seconds)
	return nil
}

// runInspect: clinal inspect STORE [--json] [--verify]
func runInspect(ctx context.Context, e *env, args []string) error {
	fs := flag.NewFlagSet("inspect", flag.ContinueOnError)
	asJSON := fs.Bool("json", false, "print JSON (top-level integer fields samples and markers)")
	verify := fs.Bool("verify", false, "read every chunk and check its CRC32C")
	first := fs.Int("first", 5, "number of leading markers to show")
	threads := fs.Int("threads", 2, "chunk readers for --verify")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usage("inspect: want exactly one STORE argument, got %d", len(pos))
	}
	info, err := matrixio.InspectStore(ctx, pos[0], matrixio.InspectOptions{Verify: *verify, Threads: *threads, FirstMarkers: *first})
	if err != nil {
		return err
	}
	if *asJSON {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(info)
	}
	w := tabwriter.NewWriter(e.stdout, 0, 4, 2, ' ', 0)
	fmt.Fprintf(w, "store\t%s\n", info.Path)
	fmt.Fprintf(w, "samples\t%d\n", info.Samples)
	fmt.Fprintf(w, "markers\t%d\n", info.Markers)
	fmt.Fprintf(w, "codec\t%s\n", info.Codec)
	fmt.Fprintf(w, "chunks\t%d of up to %d markers\n", info.Chunks, info.ChunkMarkers)
	ratio := 0.0
	if info.CompressedBytes > 0 {
		ratio = float64(info.RawBytes) / float64(info.CompressedBytes)
	}
	fmt.Fprintf(w, "bytes\tfile %d; chunks %d compressed, %d decoded (%.1fx)\n", info.FileBytes, info.CompressedBytes, info.RawBytes, ratio)
	fmt.Fprintf(w, "missing\t%.4f%% of values\n", 100*info.MissingRate)
	if info.Source != "" {
		fmt.Fprintf(w, "source\t%s\n", info.Source)
	}
	if info.Created != "" {
		fmt.Fprintf(w, "created\t%s\n", info.Created)
	}
	if len(info.Params) > 0 {
		keys := make([]string, 0, len(info.Params))
		for k := range info.Params {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		var ps []string
		for _, k := range keys {
			ps = append(ps, k+"="+info.Params[k])
		}
		fmt.Fprintf(w, "params\t%s\n", strings.Join(ps, " "))
	}
	var cs []string
	for _, c := range info.Chromosomes {
		cs = append(cs, fmt.Sprintf("%s (%d)", c.Chrom, c.Markers))
	}
	fmt.Fprintf(w, "chromosomes\t%s\n", strings.Join(cs, ", "))
	fmt.Fprintf(w, "first samples\t%s\n", strings.Join(info.FirstSamples, " "))
	if *verify {
		fmt.Fprintf(w, "verified\tall %d chunks: CRC32C and sizes ok\n", info.Chunks)
	}
	if err := w.Flush(); err != nil {
		return err
	}
	fmt.Fprintln(e.stdout, "first markers:")
	w = tabwriter.NewWriter(e.stdout, 0, 4, 2, ' ', 0)
	fmt.Fprintln(w, "  chrom\tpos\tid\tref\talt\thom_ref\thet\thom_alt\tmissing\talt_freq")
	for _, m := range info.FirstMarkers {
		f := "NA"
		if m.AltFreq != nil {
			f = fmt.Sprintf("%.4f", *m.AltFreq)
		}
		fmt.Fprintf(w, "  %s\t%d\t%s\t%s\t%s\t%d\t%d\t%d\t%d\t%s\n", m.Chrom, m.Pos, m.ID, m.Ref, m.Alt, m.HomRef, m.Het, m.HomAlt, m.Missing, f)
	}
	return w.Flush()
}

// runExport: clinal export -o OUT.vcf.gz STORE [--keep-samples FILE] [--chromosomes LIST]
func runExport(ctx context.Context, e *env, args []string) error {
	fs := flag.NewFlagSet("export", flag.ContinueOnError)
	out := fs.String("o", "", "output VCF (BGZF-compressed; .vcf.gz)")
	keep := fs.String("keep-samples", "", "file of sample IDs to export, one per line (default: all)")
	chroms := fs.String("chromosomes", "", "chromosomes to export, e.g. 1-22,X (default: all)")
	threads := fs.Int("threads", 2, "chunk decoders and BGZF compressors")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if *out == "" {
		return usage("export: -o OUT.vcf.gz is required")
	}
	if len(pos) != 1 {
		return usage("export: want exactly one STORE argument, got %d", len(pos))
	}
	sum, err := matrixio.ExportVCF(ctx, pos[0], *out, matrixio.ExportOptions{KeepSamplesFile: *keep, Chromosomes: *chroms, Threads: *threads})
	if err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "Wrote %d markers x %d samples (%s) to %s in %.1f s.\n", sum.Markers, sum.Samples, sum.Field, sum.Output, sum.Seconds)
	return nil
}
