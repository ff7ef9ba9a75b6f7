//go:build amd64 && !purego

package randsvd

import "golang.org/x/sys/cpu"

// useAVX2 selects the vector kernels. Additions are element-wise in the
// same order as the generic kernels, so both give bit-identical results.
var useAVX2 = cpu.X86.HasAVX2

//go:noescape
func gatherAddAVX2(dst, tab *float64, raw *byte, offs *int32, n, grp, lp int)

//go:noescape
func scatterAddAVX2(buck, src *float64, raw *byte, offs *int32, n, grp, lp int)

func gatherAdd(dst, tab []float64, raw []byte, offs []int32, g, lp int) {
	if !useAVX2 || len(offs) == 0 || lp == 0 {
		gatherAddGeneric(dst, tab, raw, offs, g, lp)
		return
	}
	checkKernel(len(dst), len(tab), len(raw), offs, g, lp, len(offs)*lp, 256*lp)
	gatherAddAVX2(&dst[0], &tab[0], &raw[0], &offs[0], len(offs), g, lp)
}

func scatterAdd(buck, src []float64, raw []byte, offs []int32, g, lp int) {
	if !useAVX2 || len(offs) == 0 || lp == 0 {
		scatterAddGeneric(buck, src, raw, offs, g, lp)
		return
	}
	checkKernel(len(src), len(buck), len(raw), offs, g, lp, len(offs)*lp, 256*lp)
	scatterAddAVX2(&buck[0], &src[0], &raw[0], &offs[0], len(offs), g, lp)
}

// checkKernel guards the assembly against out-of-range arguments (a
// programmer error): the per-marker rows, the 256-row table and the
// offsets must lie inside their slices.
func checkKernel(rowsLen, tabLen, rawLen int, offs []int32, g, lp, wantRows, wantTab int) {
	if lp%4 != 0 || rowsLen < wantRows || tabLen < wantTab {
		panic("randsvd: kernel shape out of range")
	}
	last := int(offs[len(offs)-1]) + g
	if int(offs[0])+g < 0 || last >= rawLen || int(offs[0])+g >= rawLen {
		panic("randsvd: kernel offsets out of range")
	}
}

//go:noescape
func gatherAdd4AVX2(dst, tab *float64, raw *byte, offs *int32, n, grp, lp int)

//go:noescape
func scatterAdd4AVX2(buck, src *float64, raw *byte, offs *int32, n, grp, lp int)

func gatherAdd4(dst, tab []float64, raw []byte, offs []int32, g, lp int) {
	if !useAVX2 || len(offs) == 0 || lp == 0 {
		gatherAdd4Generic(dst, tab, raw, offs, g, lp)
		return
	}
	checkKernel(len(dst), len(tab), len(raw), offs, g+3, lp, len(offs)*lp, 4*256*lp)
	gatherAdd4AVX2(&dst[0], &tab[0], &raw[0], &offs[0], len(offs), g, lp)
}

func scatterAdd4(buck, src []float64, raw []byte, offs []int32, g, lp int) {
	if !useAVX2 || len(offs) == 0 || lp == 0 {
		scatterAdd4Generic(buck, src, raw, offs, g, lp)
		return
	}
	checkKernel(len(src), len(buck), len(raw), offs, g+3, lp, len(offs)*lp, 4*256*lp)
	scatterAdd4AVX2(&buck[0], &src[0], &raw[0], &offs[0], len(offs), g, lp)
}

//go:noescape
func marginalAVX2(y, buck *float64, l1, l2 *uint8, lp int)

func marginal(y, buck []float64, l1, l2 *[64]uint8, lp int) {
	if !useAVX2 || lp == 0 {
		marginalGeneric(y, buck, l1, l2, lp)
		return
	}
	if len(y) < lp || len(buck) < 256*lp || lp%4 != 0 {
		panic("randsvd: marginal shape out of range")
	}
	marginalAVX2(&y[0], &buck[0], &l1[0], &l2[0], lp)
}

//go:noescape
func addRowsAVX2(dst, src, v *float64, rows, lp int)

// addRows sets dst[r] = src[r] + v for r < rows.
func addRows(dst, src, v []float64, rows, lp int) {
	if !useAVX2 || rows == 0 || lp == 0 {
		addRowsGeneric(dst, src, v, rows, lp)
		return
	}
	if lp%4 != 0 || len(dst) < rows*lp || len(src) < rows*lp || len(v) < lp {
		panic("randsvd: addRows shape out of range")
	}
	addRowsAVX2(&dst[0], &src[0], &v[0], rows, lp)
}
