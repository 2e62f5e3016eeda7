package plot

import "math"

// MinMax reduces a series sampled at rising xs to at most 2·cols + 2
// points for drawing cols pixel columns over [x0, x1]: in each column it
// keeps the smallest and the largest y (in their order), plus the first
// and last point of the series, so that the drawn envelope of a fast
// chopping ripple is the same as with every point. Points outside
// [x0, x1] are dropped. A series that already fits is returned as is.
func MinMax(xs, ys []float64, x0, x1 float64, cols int) (ox, oy []float64) {
	n := min(len(xs), len(ys))
	if cols < 1 {
		cols = 1
	}
	if n <= 2*cols+2 || !(x1 > x0) {
		return xs[:n], ys[:n]
	}
	ox = make([]float64, 0, 2*cols+2)
	oy = make([]float64, 0, 2*cols+2)
	emit := func(k int) {
		if l := len(ox); l > 0 && ox[l-1] == xs[k] && oy[l-1] == ys[k] {
			return
		}
		ox, oy = append(ox, xs[k]), append(oy, ys[k])
	}
	scale := float64(cols) / (x1 - x0)
	col := func(x float64) int {
		c := int(math.Floor((x - x0) * scale))
		return max(0, min(cols-1, c))
	}
	first, last := -1, -1
	for k := 0; k < n; k++ {
		if xs[k] >= x0 && xs[k] <= x1 {
			if first < 0 {
				first = k
			}
			last = k
		}
	}
	if first < 0 {
		return nil, nil
	}
	emit(first)
	k := first
	for k <= last {
		c := col(xs[k])
		lo, hi := k, k
		j := k
		for ; j <= last && col(xs[j]) == c; j++ {
			if ys[j] < ys[lo] || math.IsNaN(ys[j]) {
				lo = j
			}
			if ys[j] > ys[hi] {
				hi = j
			}
		}
		a, b := min(lo, hi), max(lo, hi)
		emit(a)
		emit(b)
		k = j
	}
	emit(last)
	return ox, oy
}
