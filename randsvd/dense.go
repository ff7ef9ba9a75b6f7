package randsvd

import "math"

// Float (dosage) stores have no four-value alphabet to tabulate, so both
// products of a pass are dense: a chunk is decoded and standardized into a
// float64 block Z_b (markers x samples), then
//
//	W_q = sum_i z_qi X_i        (one marker's row: fmaRows over the samples)
//	Y_i += sum_q z_qi W_q       (one sample's row: fmaRows over the markers,
//	                             weights strided by N)
//
// with the accumulator row held in registers (up to 32 values per kernel
// call) and every term added by one fused multiply-add, in index order, so
// the vector kernel and fmaRowsGeneric agree bit for bit and the result
// does not depend on the thread count (markers are split for the first
// product, fixed sample segments for the second).

// fmaRowsGeneric sets dst[:lp] = fma(w[c*wstride], rows[c], dst) for
// c = 0..count-1 in order (math.FMA: one rounding per term, as the vector
// kernel).
func fmaRowsGeneric(dst, rows, w []float64, count, wstride, lp int) {
	d := dst[:lp]
	for c := 0; c < count; c++ {
		a := w[c*wstride]
		r := rows[c*lp : c*lp+lp]
		for k := range d {
			d[k] = math.FMA(a, r[k], d[k])
		}
	}
}
