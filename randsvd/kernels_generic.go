//go:build !amd64 || purego

package randsvd

// useAVX2 is false off amd64: the portable kernels run.
const useAVX2 = false

func gatherTile(dst, tab []float64, raw []byte, rows rowSet, g, ng, stride, lp int) {
	gatherTileGeneric(dst, tab, raw, rows.offs, g, ng, stride, lp)
}

func addRows(dst, src, v []float64, rows, lp int) {
	addRowsGeneric(dst, src, v, rows, lp)
}

func sumRows(dst, x []float64, idx []int32, lp int) { sumRowsGeneric(dst, x, idx, lp) }

func gather32Tile(dst []float64, tab []float32, raw []byte, rows rowSet, g, ng, stride, lp int) {
	gather32TileGeneric(dst, tab, raw, rows.offs, g, ng, stride, lp)
}

func addRows32(dst, src, v []float32, rows, lp int) { addRows32Generic(dst, src, v, rows, lp) }

func fmaRows(dst, rows, w []float64, count, wstride, lp int) {
	fmaRowsGeneric(dst, rows, w, count, wstride, lp)
}

// useAVX512 is false off amd64 (a variable, as there: tests set it).
var useAVX512 = false

// missingVector lists nothing off amd64: appendMissing's scalar scan does
// every word.
func missingVector(buf []int32, k int, row []byte) ([]int32, int, int) { return buf, k, 0 }

// transposeRuns does no runs off amd64: transposeTile does them all.
func transposeRuns(out, r0, r1, r2, r3 []byte, runs int) int { return 0 }

// Kernels names the kernels this process's passes run on: "portable" (pure
// Go) off amd64 or with the purego tag.
func Kernels() string { return "portable" }
