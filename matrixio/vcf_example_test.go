package matrixio_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"

	"github.com/clinal/clinal/matrixio"
)

// ExampleImportVCF imports the hand-written fixture testdata/vcf/calls.vcf
// (8 records, one of them multi-allelic) into a store.
func ExampleImportVCF() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	out := filepath.Join(dir, "calls.clinal")
	sum, err := matrixio.ImportVCF(context.Background(), []string{"../testdata/vcf/calls.vcf"}, out, matrixio.ImportOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d samples, %d records, %d markers, %d multi-allelic skipped, %d haploid calls\n",
		sum.Samples, sum.Records, sum.Markers, sum.SkippedMultiallelic, sum.HaploidCalls)
	// Output: 4 samples, 8 records, 7 markers, 1 multi-allelic skipped, 4 haploid calls
}

// ExampleCreateVCF writes two records as BGZF VCF and reads them back.
func ExampleCreateVCF() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "two.vcf.gz")
	w, err := matrixio.CreateVCF(path, []string{"isle1-0001", "isle1-0002"}, matrixio.VCFWriterOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	w.Write(matrixio.Marker{Chrom: "1", Pos: 1200, ID: "snp1", Ref: "A", Alt: "G"}, []byte{0, 2})
	w.Write(matrixio.Marker{Chrom: "1", Pos: 1350, ID: "snp2", Ref: "C", Alt: "T"}, []byte{1, matrixio.Missing})
	if err := w.Close(); err != nil {
		fmt.Println(err)
		return
	}
	st := filepath.Join(dir, "two.clinal")
	if _, err := matrixio.ImportVCF(context.Background(), []string{path}, st, matrixio.ImportOptions{}); err != nil {
		fmt.Println(err)
		return
	}
	info, _ := matrixio.InspectStore(context.Background(), st, matrixio.InspectOptions{Verify: true})
	for _, m := range info.FirstMarkers {
		fmt.Println(m.ID, m.HomRef, m.Het, m.HomAlt, m.Missing)
	}
	// Output:
	// snp1 1 0 1 0
	// snp2 0 1 0 1
}
