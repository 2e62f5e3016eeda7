package coilkick

import "math"

// dopri is the Dormand–Prince 5(4) pair (Dormand & Prince 1980) with
// first-same-as-last stages and the CONTD5 dense output of Hairer, Nørsett
// & Wanner (Solving ODEs I, 2nd ed., II.6).
type dopri struct {
	f                          func(t float64, y, dy []float64)
	norm                       func(err, y0, y1 []float64) float64
	k2, k3, k4, k5, k6, k7, yt []float64
	errv                       []float64
	r1, r2, r3, r4, r5         []float64 // dense output coefficients
	k1                         []float64 // copy of f0 of the last attempt
}

func newDopri(n int, f func(float64, []float64, []float64), norm func(err, y0, y1 []float64) float64) *dopri {
	v := func() []float64 { return make([]float64, n) }
	return &dopri{f: f, norm: norm, k2: v(), k3: v(), k4: v(), k5: v(), k6: v(), k7: v(), yt: v(), errv: v(),
		r1: v(), r2: v(), r3: v(), r4: v(), r5: v(), k1: v()}
}

// Butcher tableau of Dormand & Prince (1980).
const (
	dpC2, dpC3, dpC4, dpC5 = 1.0 / 5, 3.0 / 10, 4.0 / 5, 8.0 / 9

	dpA21                      = 1.0 / 5
	dpA31, dpA32               = 3.0 / 40, 9.0 / 40
	dpA41, dpA42, dpA43        = 44.0 / 45, -56.0 / 15, 32.0 / 9
	dpA51, dpA52, dpA53, dpA54 = 19372.0 / 6561, -25360.0 / 2187, 64448.0 / 6561, -212.0 / 729
	dpA61, dpA62, dpA63        = 9017.0 / 3168, -355.0 / 33, 46732.0 / 5247
	dpA64, dpA65               = 49.0 / 176, -5103.0 / 18656
	dpA71, dpA73, dpA74        = 35.0 / 384, 500.0 / 1113, 125.0 / 192
	dpA75, dpA76               = -2187.0 / 6784, 11.0 / 84

	// error coefficients: 5th-order minus 4th-order weights
	dpE1, dpE3, dpE4 = 71.0 / 57600, -71.0 / 16695, 71.0 / 1920
	dpE5, dpE6, dpE7 = -17253.0 / 339200, 22.0 / 525, -1.0 / 40

	// dense output (CONTD5)
	dpD1, dpD3 = -12715105075.0 / 11282082432, 87487479700.0 / 32700410799
	dpD4, dpD5 = -10690763975.0 / 1880347072, 701980252875.0 / 199316789632
	dpD6, dpD7 = -1453857185.0 / 822651844, 69997945.0 / 29380423
)

func (m *dopri) order() int { return 5 }

func (m *dopri) f1() []float64 { return m.k7 }

func (m *dopri) attempt(t, h float64, y, k1, y1 []float64) float64 {
	yt := m.yt
	copy(m.k1, k1)
	for i := range y {
		yt[i] = y[i] + h*dpA21*k1[i]
	}
	m.f(t+dpC2*h, yt, m.k2)
	for i := range y {
		yt[i] = y[i] + h*(dpA31*k1[i]+dpA32*m.k2[i])
	}
	m.f(t+dpC3*h, yt, m.k3)
	for i := range y {
		yt[i] = y[i] + h*(dpA41*k1[i]+dpA42*m.k2[i]+dpA43*m.k3[i])
	}
	m.f(t+dpC4*h, yt, m.k4)
	for i := range y {
		yt[i] = y[i] + h*(dpA51*k1[i]+dpA52*m.k2[i]+dpA53*m.k3[i]+dpA54*m.k4[i])
	}
	m.f(t+dpC5*h, yt, m.k5)
	for i := range y {
		yt[i] = y[i] + h*(dpA61*k1[i]+dpA62*m.k2[i]+dpA63*m.k3[i]+dpA64*m.k4[i]+dpA65*m.k5[i])
	}
	m.f(t+h, yt, m.k6)
	for i := range y {
		y1[i] = y[i] + h*(dpA71*k1[i]+dpA73*m.k3[i]+dpA74*m.k4[i]+dpA75*m.k5[i]+dpA76*m.k6[i])
	}
	m.f(t+h, y1, m.k7)
	for i := range y {
		m.errv[i] = h * (dpE1*k1[i] + dpE3*m.k3[i] + dpE4*m.k4[i] + dpE5*m.k5[i] + dpE6*m.k6[i] + dpE7*m.k7[i])
	}
	// Dense output coefficients.
	for i := range y {
		dy := y1[i] - y[i]
		bspl := h*k1[i] - dy
		m.r1[i] = y[i]
		m.r2[i] = dy
		m.r3[i] = bspl
		m.r4[i] = dy - h*m.k7[i] - bspl
		m.r5[i] = h * (dpD1*k1[i] + dpD3*m.k3[i] + dpD4*m.k4[i] + dpD5*m.k5[i] + dpD6*m.k6[i] + dpD7*m.k7[i])
	}
	return m.norm(m.errv, y, y1)
}

func (m *dopri) dense(th float64, out []float64) {
	t1 := 1 - th
	for i := range out {
		out[i] = m.r1[i] + th*(m.r2[i]+t1*(m.r3[i]+th*(m.r4[i]+t1*m.r5[i])))
	}
}

// rosenbrock is the L-stable linearly implicit 2(3) pair of Shampine &
// Reichelt (SIAM J. Sci. Comput. 18, 1997), for autonomous systems (time
// dependence enters only through events), with the Jacobian by forward
// differences on the first nj components.
type rosenbrock struct {
	f          func(t float64, y, dy []float64)
	norm       func(err, y0, y1 []float64) float64
	n, nj      int
	jac, w     []float64 // n×n row-major
	piv        []int
	k1, k2, k3 []float64
	fa, fb, yt []float64
	errv, y0c  []float64
	hLast      float64
}

const (
	rsD   = 0.29289321881345254 // 1/(2+√2)
	rsE32 = 7.414213562373095   // 6+√2
)

func newRosenbrock(n, nj int, f func(float64, []float64, []float64), norm func(err, y0, y1 []float64) float64) *rosenbrock {
	v := func() []float64 { return make([]float64, n) }
	return &rosenbrock{f: f, norm: norm, n: n, nj: nj, jac: make([]float64, n*n), w: make([]float64, n*n),
		piv: make([]int, n), k1: v(), k2: v(), k3: v(), fa: v(), fb: v(), yt: v(), errv: v(), y0c: v()}
}

func (m *rosenbrock) order() int { return 3 }

func (m *rosenbrock) f1() []float64 { return m.fb }

func (m *rosenbrock) attempt(t, h float64, y, f0, y1 []float64) float64 {
	n := m.n
	copy(m.y0c, y)
	m.hLast = h
	// Jacobian by forward differences (columns of the fed-back states).
	for j := 0; j < m.nj; j++ {
		dj := math.Sqrt(2.2e-16) * math.Max(math.Abs(y[j]), 1e-8)
		if y[j] < 0 {
			dj = -dj
		}
		copy(m.yt, y)
		m.yt[j] += dj
		dj = m.yt[j] - y[j]
		m.f(t, m.yt, m.fa)
		for i := 0; i < n; i++ {
			m.jac[i*n+j] = (m.fa[i] - f0[i]) / dj
		}
	}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := 0.0
			if j < m.nj {
				v = -h * rsD * m.jac[i*n+j]
			}
			if i == j {
				v++
			}
			m.w[i*n+j] = v
		}
	}
	if !luFactor(m.w, m.piv, n) {
		return math.Inf(1)
	}
	copy(m.k1, f0)
	luSolve(m.w, m.piv, n, m.k1)
	for i := range y {
		m.yt[i] = y[i] + 0.5*h*m.k1[i]
	}
	m.f(t+0.5*h, m.yt, m.fa) // F1
	for i := range y {
		m.k2[i] = m.fa[i] - m.k1[i]
	}
	luSolve(m.w, m.piv, n, m.k2)
	for i := range y {
		m.k2[i] += m.k1[i]
		y1[i] = y[i] + h*m.k2[i]
	}
	m.f(t+h, y1, m.fb) // F2
	for i := range y {
		m.k3[i] = m.fb[i] - rsE32*(m.k2[i]-m.fa[i]) - 2*(m.k1[i]-f0[i])
	}
	luSolve(m.w, m.piv, n, m.k3)
	for i := range y {
		m.errv[i] = h / 6 * (m.k1[i] - 2*m.k2[i] + m.k3[i])
	}
	return m.norm(m.errv, y, y1)
}

func (m *rosenbrock) dense(th float64, out []float64) {
	h := m.hLast
	c1 := th * (1 - th) / (1 - 2*rsD)
	c2 := th * (th - 2*rsD) / (1 - 2*rsD)
	for i := range out {
		out[i] = m.y0c[i] + h*(c1*m.k1[i]+c2*m.k2[i])
	}
}

// luFactor factors the n×n row-major matrix a in place with partial
// pivoting (Doolittle; Golub & Van Loan, Matrix Computations, 3.4). It
// reports false for a singular matrix. No allocation.
func luFactor(a []float64, piv []int, n int) bool {
	for k := 0; k < n; k++ {
		p, best := k, math.Abs(a[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := math.Abs(a[i*n+k]); v > best {
				p, best = i, v
			}
		}
		piv[k] = p
		if best == 0 || math.IsNaN(best) {
			return false
		}
		if p != k {
			for j := 0; j < n; j++ {
				a[k*n+j], a[p*n+j] = a[p*n+j], a[k*n+j]
			}
		}
		inv := 1 / a[k*n+k]
		for i := k + 1; i < n; i++ {
			l := a[i*n+k] * inv
			if l == 0 {
				continue
			}
			a[i*n+k] = l
			for j := k + 1; j < n; j++ {
				a[i*n+j] -= l * a[k*n+j]
			}
		}
	}
	return true
}

// luSolve solves a·x = b in place in b with the factors from luFactor.
func luSolve(a []float64, piv []int, n int, b []float64) {
	for k := 0; k < n; k++ {
		if p := piv[k]; p != k {
			b[k], b[p] = b[p], b[k]
		}
	}
	for i := 1; i < n; i++ {
		s := b[i]
		for j := 0; j < i; j++ {
			s -= a[i*n+j] * b[j]
		}
		b[i] = s
	}
	for i := n - 1; i >= 0; i-- {
		s := b[i]
		for j := i + 1; j < n; j++ {
			s -= a[i*n+j] * b[j]
		}
		b[i] = s / a[i*n+i]
	}
}
