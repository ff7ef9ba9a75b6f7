package synth

import (
	"bufio"
	"context"
	"fmt"
	"io"

	"github.com/clinal/clinal/matrixio"
)

// Source is the source text recorded in the outputs' headers.
const Source = "clinal simulate (Balding-Nichols 1995 populations)"

// WriteStore writes the cohort as a .clinal store at path, its
// configuration recorded in the header's parameters. threads goroutines
// generate markers and as many compress chunks. On error (or cancellation)
// nothing is left at path.
func (c *Cohort) WriteStore(ctx context.Context, path string, threads int) error {
	w, err := matrixio.Create(path, c.samples, matrixio.WriterOptions{
		Source: Source, Params: c.Params(), Threads: max(1, threads)})
	if err != nil {
		return err
	}
	if err := c.Generate(ctx, threads, w.AddGenotypes); err != nil {
		w.Abort()
		return fmt.Errorf("write %s: %w", path, err)
	}
	return w.Close()
}

// WriteVCF writes the cohort as a BGZF-compressed VCF (GT field) at path.
// threads goroutines generate markers and as many compress blocks. On error
// (or cancellation) nothing is left at path.
func (c *Cohort) WriteVCF(ctx context.Context, path string, threads int) error {
	w, err := matrixio.CreateVCF(path, c.samples, matrixio.VCFWriterOptions{
		Source: Source, Threads: max(1, threads)})
	if err != nil {
		return err
	}
	if err := c.Generate(ctx, threads, w.Write); err != nil {
		w.Abort()
		return fmt.Errorf("write %s: %w", path, err)
	}
	return w.Close()
}

// WriteLabels writes the sample groups as a TSV with header
// "sample_id<TAB>group", one row per sample in output order, atomically.
func (c *Cohort) WriteLabels(path string) error {
	return matrixio.WriteFileAtomic(path, func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		bw.WriteString("sample_id\tgroup\n")
		for i, s := range c.samples {
			bw.WriteString(s)
			bw.WriteByte('\t')
			bw.WriteString(c.groups[i])
			bw.WriteByte('\n')
		}
		if err := bw.Flush(); err != nil {
			return fmt.Errorf("write %s: %w", path, err)
		}
		return nil
	})
}
