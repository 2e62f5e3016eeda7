package magnet

import "math"

// pchipSlopes sets d[k] to the node slopes of the monotone piecewise cubic
// Hermite interpolant of strictly increasing data y(x) (x ascending), by the
// method of F. N. Fritsch and R. E. Carlson, "Monotone Piecewise Cubic
// Interpolation", SIAM J. Numer. Anal. 17(2), 238–246 (1980): start from
// the mean of the adjacent secants (one-sided secant at the ends), then on
// each interval scale the slope pair (α, β) = (d_k, d_k+1)/δ_k into the
// circle α² + β² ≤ 9, a sufficient condition for monotonicity (their
// region S).
func pchipSlopes(x, y, d []float64) {
	n := len(x)
	if n == 2 {
		s := (y[1] - y[0]) / (x[1] - x[0])
		d[0], d[1] = s, s
		return
	}
	prev := (y[1] - y[0]) / (x[1] - x[0])
	d[0] = prev
	for k := 1; k < n-1; k++ {
		next := (y[k+1] - y[k]) / (x[k+1] - x[k])
		d[k] = 0.5 * (prev + next)
		prev = next
	}
	d[n-1] = prev
	for k := 0; k < n-1; k++ {
		delta := (y[k+1] - y[k]) / (x[k+1] - x[k])
		a, b := d[k]/delta, d[k+1]/delta
		if r := a*a + b*b; r > 9 {
			tau := 3 / math.Sqrt(r)
			d[k] = tau * a * delta
			d[k+1] = tau * b * delta
		}
	}
}

// hermiteCoeffs returns c0..c3 of the cubic y0 + c1·s + c2·s² + c3·s³ on
// [0, h] with values y0, y1 and slopes d0, d1 at the ends (cubic Hermite
// form, any numerical analysis text).
func hermiteCoeffs(h, y0, y1, d0, d1 float64) (c0, c1, c2, c3 float64) {
	delta := (y1 - y0) / h
	return y0, d0, (3*delta - 2*d0 - d1) / h, (d0 + d1 - 2*delta) / (h * h)
}

// solveCubic returns s in [0, h] with c0 + c1·s + c2·s² + c3·s³ = target,
// for a cubic increasing on [0, h], by Newton's method safeguarded with
// bisection on a shrinking bracket. base is the abscissa of s = 0; the
// iteration stops when the step is below rootTol relative to base + s.
// Without a bracket it returns the nearer end.
func solveCubic(c0, c1, c2, c3, target, h, base float64) float64 {
	flo := c0 - target
	if flo >= 0 {
		return 0
	}
	fhi := c0 + h*(c1+h*(c2+h*c3)) - target
	if fhi <= 0 {
		return h
	}
	lo, hi := 0.0, h
	s := h * (-flo) / (fhi - flo) // secant start
	for it := 0; it < maxRootIter; it++ {
		f := c0 + s*(c1+s*(c2+s*c3)) - target
		if f == 0 {
			return s
		}
		if f < 0 {
			lo = s
		} else {
			hi = s
		}
		df := c1 + s*(2*c2+3*c3*s)
		next := 0.5 * (lo + hi)
		if df > 0 {
			if n := s - f/df; n > lo && n < hi {
				next = n
			}
		}
		tol := rootTol * (base + next)
		if math.Abs(next-s) <= tol || hi-lo <= tol {
			return next
		}
		s = next
	}
	return s
}

// rootTol is the relative step at which solveCubic stops; Newton converges
// quadratically, so the error left is far below it.
const rootTol = 1e-14

// maxRootIter bounds solveCubic; bisection alone would reach rootTol in
// about 50 halvings.
const maxRootIter = 100
