//go:build !amd64 || purego

package randsvd

// useAVX2 is false off amd64: the portable kernels run.
const useAVX2 = false

func gatherAdd(dst, tab []float64, raw []byte, offs []int32, g, lp int) {
	gatherAddGeneric(dst, tab, raw, offs, g, lp)
}

func scatterAdd(buck, src []float64, raw []byte, offs []int32, g, lp int) {
	scatterAddGeneric(buck, src, raw, offs, g, lp)
}

func gatherAdd4(dst, tab []float64, raw []byte, offs []int32, g, lp int) {
	gatherAdd4Generic(dst, tab, raw, offs, g, lp)
}

func scatterAdd4(buck, src []float64, raw []byte, offs []int32, g, lp int) {
	scatterAdd4Generic(buck, src, raw, offs, g, lp)
}

func marginal(y, buck []float64, l1, l2 *[64]uint8, lp int) {
	marginalGeneric(y, buck, l1, l2, lp)
}

func addRows(dst, src, v []float64, rows, lp int) {
	addRowsGeneric(dst, src, v, rows, lp)
}
