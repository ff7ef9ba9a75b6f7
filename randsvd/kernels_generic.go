//go:build !amd64 || purego

package randsvd

// useAVX2 is false off amd64: the portable kernels run.
const useAVX2 = false

func gatherTile(dst, tab []float64, raw []byte, offs []int32, g, ng, lp int) {
	gatherTileGeneric(dst, tab, raw, offs, g, ng, lp)
}

func scatterTile(buck, src []float64, raw []byte, offs []int32, g, ng, lp int) {
	scatterTileGeneric(buck, src, raw, offs, g, ng, lp)
}

func marginal(y, buck []float64, l1, l2 *[64]uint8, lp int) {
	marginalGeneric(y, buck, l1, l2, lp)
}

func addRows(dst, src, v []float64, rows, lp int) {
	addRowsGeneric(dst, src, v, rows, lp)
}

func sumRows(dst, x []float64, idx []int32, lp int) { sumRowsGeneric(dst, x, idx, lp) }

func addRow(y, v []float64, idx []int32, lp int) { addRowGeneric(y, v, idx, lp) }

func gather32Tile(dst []float64, tab []float32, raw []byte, offs []int32, g, ng, lp int) {
	gather32TileGeneric(dst, tab, raw, offs, g, ng, lp)
}

func scatter32Tile(buck, src []float32, raw []byte, offs []int32, g, ng, lp int) {
	scatter32TileGeneric(buck, src, raw, offs, g, ng, lp)
}

func marginal32(y []float64, buck []float32, l1, l2 *[64]uint8, lp int) {
	marginal32Generic(y, buck, l1, l2, lp)
}

func addRows32(dst, src, v []float32, rows, lp int) { addRows32Generic(dst, src, v, rows, lp) }

func fmaRows(dst, rows, w []float64, count, wstride, lp int) {
	fmaRowsGeneric(dst, rows, w, count, wstride, lp)
}
