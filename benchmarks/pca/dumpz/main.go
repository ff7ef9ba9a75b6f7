// Command dumpz writes the standardized matrix of a .clinal store (Patterson
// et al. 2006 scaling, missing as 0: the convention of clinal pca) as a
// float32 .npy file of shape (samples, markers), so in-memory peers
// (numpy, sklearn) can be timed on exactly the matrix clinal streams. It is
// a benchmark helper, not part of the product; it holds the dense matrix
// only in the file it writes, one marker column at a time.
package main

import (
	"bufio"
	"context"
	"encoding/binary"
	"fmt"
	"math"
	"os"

	"github.com/clinal/clinal/matrixio"
)

func main() {
	if len(os.Args) != 3 {
		fmt.Fprintln(os.Stderr, "usage: dumpz STORE OUT.npy")
		os.Exit(2)
	}
	if err := run(os.Args[1], os.Args[2]); err != nil {
		fmt.Fprintln(os.Stderr, "dumpz:", err)
		os.Exit(1)
	}
}

func run(storePath, out string) error {
	st, err := matrixio.Open(storePath)
	if err != nil {
		return err
	}
	defer st.Close()
	n, m := st.NumSamples(), st.NumMarkers()
	// Keep polymorphic markers only, as the operator does.
	var keep []int
	for j, c := range st.Counts() {
		p := c.AltFreq()
		if p > 0 && p < 1 {
			keep = append(keep, j)
		}
	}
	// Marker-major on disk is (markers, samples) in C order; we write the
	// header for shape (markers, samples) and the reader transposes (a view).
	f, err := os.Create(out)
	if err != nil {
		return err
	}
	defer f.Close()
	w := bufio.NewWriterSize(f, 1<<22)
	hdr := fmt.Sprintf("{'descr': '<f4', 'fortran_order': False, 'shape': (%d, %d), }", len(keep), n)
	for (10+len(hdr)+1)%64 != 0 {
		hdr += " "
	}
	hdr += "\n"
	w.WriteString("\x93NUMPY\x01\x00")
	binary.Write(w, binary.LittleEndian, uint16(len(hdr)))
	w.WriteString(hdr)
	isKept := make([]bool, m)
	for _, j := range keep {
		isKept[j] = true
	}
	g := make([]byte, n)
	buf := make([]byte, 4*n)
	err = st.Stream(context.Background(), st.AllChunks(), 2, func(c *matrixio.Chunk) error {
		for q := 0; q < c.N; q++ {
			j := c.First + q
			if !isKept[j] {
				continue
			}
			matrixio.DecodeGenotypes(c.Row(q, st.RowBytes()), g)
			p := st.Counts()[j].AltFreq()
			sd := math.Sqrt(2 * p * (1 - p))
			for i, v := range g {
				z := float32(0)
				if v != matrixio.Missing {
					z = float32((float64(v) - 2*p) / sd)
				}
				binary.LittleEndian.PutUint32(buf[4*i:], math.Float32bits(z))
			}
			if _, err := w.Write(buf); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	return w.Flush()
}
