package coilkick

import (
	"math"
	"slices"
)

// dopri is the Dormand–Prince 5(4) pair (Dormand & Prince 1980) with
// first-same-as-last stages and the CONTD5 dense output of Hairer, Nørsett
// & Wanner (Solving ODEs I, 2nd ed., II.6).
type dopri struct {
	nj                         int // fed-back components: the stages' arguments need only these
	f                          func(t float64, y, dy []float64)
	norm                       func(err, y0, y1 []float64) float64
	k2, k3, k4, k5, k6, k7, yt []float64
	errv                       []float64
	r1, r2, r3, r4, r5         []float64 // dense output coefficients
	k1                         []float64 // copy of f0 of the last attempt
	y6                         []float64 // the sixth stage's argument
	hLambda                    float64   // stiffness estimate of the last attempt
}

func newDopri(n, nj int, f func(float64, []float64, []float64), norm func(err, y0, y1 []float64) float64) *dopri {
	v := func() []float64 { return make([]float64, n) }
	return &dopri{nj: nj, f: f, norm: norm, k2: v(), k3: v(), k4: v(), k5: v(), k6: v(), k7: v(), yt: v(), errv: v(),
		r1: v(), r2: v(), r3: v(), r4: v(), r5: v(), k1: v(), y6: v()}
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
	// The stages' arguments: f reads only the fed-back components (the
	// quadratures do not feed back), except the sixth's, kept whole for
	// the stiffness estimate.
	nj := m.nj
	for i := range nj {
		yt[i] = y[i] + h*dpA21*k1[i]
	}
	m.f(t+dpC2*h, yt, m.k2)
	for i := range nj {
		yt[i] = y[i] + h*(dpA31*k1[i]+dpA32*m.k2[i])
	}
	m.f(t+dpC3*h, yt, m.k3)
	for i := range nj {
		yt[i] = y[i] + h*(dpA41*k1[i]+dpA42*m.k2[i]+dpA43*m.k3[i])
	}
	m.f(t+dpC4*h, yt, m.k4)
	for i := range nj {
		yt[i] = y[i] + h*(dpA51*k1[i]+dpA52*m.k2[i]+dpA53*m.k3[i]+dpA54*m.k4[i])
	}
	m.f(t+dpC5*h, yt, m.k5)
	for i := range y {
		yt[i] = y[i] + h*(dpA61*k1[i]+dpA62*m.k2[i]+dpA63*m.k3[i]+dpA64*m.k4[i]+dpA65*m.k5[i])
	}
	m.f(t+h, yt, m.k6)
	copy(m.y6, yt)
	for i := range y {
		y1[i] = y[i] + h*(dpA71*k1[i]+dpA73*m.k3[i]+dpA74*m.k4[i]+dpA75*m.k5[i]+dpA76*m.k6[i])
	}
	m.f(t+h, y1, m.k7)
	// Stiffness estimate h·|λ| from the last two stages, both at t + h
	// (Hairer & Wanner, Solving ODEs II, IV.2, as in their code DOPRI5).
	num, den := 0.0, 0.0
	for i := range y {
		dk, dyy := m.k7[i]-m.k6[i], y1[i]-m.y6[i]
		num += dk * dk
		den += dyy * dyy
	}
	m.hLambda = 0
	if den > 0 {
		m.hLambda = h * math.Sqrt(num/den)
	}
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
	m.denseN(th, out, len(out))
}

func (m *dopri) denseFed(th float64, out []float64) { m.denseN(th, out, m.nj) }

// denseN writes the first n components of the interpolant at θ.
func (m *dopri) denseN(th float64, out []float64, n int) {
	t1 := 1 - th
	for i := range n {
		out[i] = m.r1[i] + th*(m.r2[i]+t1*(m.r3[i]+th*(m.r4[i]+t1*m.r5[i])))
	}
}

// rodas is a stiffly accurate, L-stable Rosenbrock method with an
// embedded error estimate and a continuous extension, in the form of Hairer
// & Wanner's code RODAS (Solving Ordinary Differential Equations II, 2nd
// ed., IV.7), for autonomous systems (time dependence enters only through
// events). Its tableau (rosenbrockTableau) is Rodas5P. The
// Jacobian is taken by forward differences on the first nj components
// (the rest are quadratures that do not feed back). Stage form:
//
//	(1/(γh) − J)·k_i = f(Y_i) + Σ_j (c_ij/h)·k_j,
//	Y_i = y0 + Σ_j a_ij·k_j for the stages with a row of a, then
//	Y_i = Y_i−1 + k_i−1 (stiff accuracy), y1 = Y_s + k_s, error estimate k_s.
type rodas struct {
	tab           *rosenbrockTableau
	f             func(t float64, y, dy []float64)
	norm          func(err, y0, y1 []float64) float64
	n, nj         int
	jac           []float64 // n×n row-major
	w             []float64 // d×d row-major, d = len(cols): W on the taken columns
	piv           []int
	xb            []float64 // scratch: the taken components of a stage's right-hand side
	k             [][]float64
	fa, yt        []float64
	y0c, y1c, f1v []float64
	cont          [][]float64 // the dense output's coefficients, one per row of tab.d
	fac           float64     // 1/(γh) of the last attempt
	cols          []int       // Jacobian columns taken (the others are zero)
	typical       []float64   // each component's typical size, for the finite differences
	all           []int       // 0 … nj−1
	// jacOK: jac holds the Jacobian at (jacT, y0c) with f there f0c (kept
	// after a rejected step, whose retry starts from the same point).
	jacOK bool
	jacT  float64
	f0c   []float64
}

// rosenbrockTableau is a stiffly accurate Rosenbrock method in RODAS form:
// the stages 1 … len(a) take their arguments from the rows of a (a[i−1]
// the weights of k_0 … k_i−1 for stage i), the later ones chain; c[i−1]
// are stage i's weights of k_j/h; the continuous extension is
// y(θ) = (1−θ)·y0 + θ·(y1 + (1−θ)·(D_1 + θ·(D_2 + θ·(…)))) with D_r =
// Σ_j d[r−1][j]·k_j.
type rosenbrockTableau struct {
	name  string
	gamma float64
	a, c  [][]float64
	d     [][]float64
	order int // of the error estimate's lower formula + 1
}

// stages returns the number of stages.
func (tb *rosenbrockTableau) stages() int { return len(tb.c) + 1 }

// rodas5p is Rodas5P (G. Steinebach, "Construction of Rosenbrock–Wanner
// method Rodas5P and numerical benchmarks within the Julia Differential
// Equations package", BIT Numer. Math. 63, 27, 2023): eight stages, order
// 5(4), a continuous extension of order 4.
var rodas5p = &rosenbrockTableau{
	name:  "Rodas5P (Steinebach)",
	gamma: 0.21193756319429014,
	a: [][]float64{
		{3.0},
		{2.849394379747939, 0.45842242204463923},
		{-6.954028509809101, 2.489845061869568, -10.358996098473584},
		{2.8029986275628964, 0.5072464736228206, -0.3988312541770524, -0.04721187230404641},
		{-7.502846399306121, 2.561846144803919, -11.627539656261098, -0.18268767659942256, 0.030198172008377946},
	},
	c: [][]float64{
		{-14.155112264123755},
		{-17.97296035885952, -2.859693295451294},
		{147.12150275711716, -1.41221402718213, 71.68940251302358},
		{165.43517024871676, -0.4592823456491126, 42.90938336958603, -5.961986721573306},
		{24.854864614690072, -3.0009227002832186, 47.4931110020768, 5.5814197821558125, -0.6610691825249471},
		{30.91273214028599, -3.1208243349937974, 77.79954646070892, 34.28646028294783, -19.097331116725623, -28.087943162872662},
		{37.80277123390563, -3.2571969029072276, 112.26918849496327, 66.9347231244047, -40.06618937091002, -54.66780262877968, -9.48861652309627},
	},
	d: [][]float64{
		{25.948786856663858, -2.5579724845846235, 10.433815404888879, -2.3679251022685204, 0.524948541321073, 1.1241088310450404, 0.4272876194431874, -0.17202221070155493},
		{-9.91568850695171, -0.9689944594115154, 3.0438037242978453, -24.495224566215796, 20.176138334709044, 15.98066361424651, -6.789040303419874, -6.710236069923372},
		{11.419903575922262, 2.8879645146136994, 72.92137995996029, 80.12511834622643, -52.072871366152654, -59.78993625266729, -0.15582684282751913, 4.883087185713722},
	},
	order: 5,
}

// setColumns sets the Jacobian columns to take (nil: all nj).
// Only the taken columns of jac are ever read (factorAndStages, solve),
// and jacobian writes them whole, so the others need no clearing.
func (m *rodas) setColumns(cols []int) {
	if cols == nil {
		cols = m.all
	}
	m.cols = cols
	m.jacOK = false
}

// newRodas returns the method of tableau tab for n components, the first
// nj fed back, with right-hand side f, error norm norm, and each
// component's typical size (its error scale; 1e-8 where not positive).
func newRodas(tab *rosenbrockTableau, n, nj int, f func(float64, []float64, []float64), norm func(err, y0, y1 []float64) float64, typical []float64) *rodas {
	v := func() []float64 { return make([]float64, n) }
	m := &rodas{tab: tab, f: f, norm: norm, n: n, nj: nj, jac: make([]float64, n*n), w: make([]float64, n*n),
		piv: make([]int, n), xb: v(), f0c: v(), fa: v(), yt: v(), y0c: v(), y1c: v(), f1v: v(), typical: v()}
	for i := range m.typical {
		m.typical[i] = 1e-8
		if i < len(typical) && typical[i] > 0 {
			m.typical[i] = typical[i]
		}
	}
	m.k = make([][]float64, tab.stages())
	for i := range m.k {
		m.k[i] = v()
	}
	m.cont = make([][]float64, len(tab.d))
	for i := range m.cont {
		m.cont[i] = v()
	}
	for j := 0; j < nj; j++ {
		m.all = append(m.all, j)
	}
	m.cols = m.all
	return m
}

func (m *rodas) order() int { return m.tab.order }

func (m *rodas) f1() []float64 { return m.f1v }

// stage solves (1/(γh) − J)·k = f(yt) + Σ_j c_j·k_j/h into k[s].
func (m *rodas) stage(t, h float64, s int, c []float64) {
	m.f(t, m.yt, m.fa)
	ks := m.k[s]
	for i := range ks {
		v := m.fa[i]
		for j, cj := range c {
			v += cj * m.k[j][i] / h
		}
		ks[i] = v
	}
	m.solve(ks)
}

// solve solves W·x = b in place in b, W = [[W11, 0], [−J21, fac·I]]:
// x1 = W11⁻¹·b1, then x2 = (b2 + J21·x1)/fac. In W11 the columns not
// taken (cols) are zero and so are the rows of those states (frozen: f is
// identically zero there), so W11 is fac·I there and the LU factors are
// of the taken block alone: the same operations as on the whole of W11,
// minus the products with its zeros.
func (m *rodas) solve(b []float64) {
	n, nj := m.n, m.nj
	d := len(m.cols)
	xb := m.xb[:d]
	for a, j := range m.cols {
		xb[a] = b[j]
	}
	for j := 0; j < nj; j++ {
		b[j] /= m.fac
	}
	luSolve(m.w, m.piv, d, xb)
	for a, j := range m.cols {
		b[j] = xb[a]
	}
	for i := nj; i < n; i++ {
		v := b[i]
		for _, j := range m.cols {
			v += m.jac[i*n+j] * b[j]
		}
		b[i] = v / m.fac
	}
}

func (m *rodas) attempt(t, h float64, y, f0, y1 []float64) float64 {
	// Jacobian by forward differences, on the columns of the fed-back
	// states that the present modes let change (a frozen state's row is
	// zero, so its stage increments are zero and its column is not needed);
	// the same as the last attempt's when this one starts from the same
	// time, state and f (the retry of a rejected step), so kept then.
	if !(m.jacOK && t == m.jacT && slices.Equal(y, m.y0c) && slices.Equal(f0, m.f0c)) {
		m.jacobian(t, y, f0)
	}
	m.jacT, m.jacOK = t, true
	copy(m.y0c, y)
	copy(m.f0c, f0)
	if !m.factorAndStages(t, h, y, f0, y1) {
		return math.Inf(1)
	}
	// The error estimate filtered through (I − γh·J)⁻¹ = W⁻¹/(γh)
	// (Shampine's filter; Hairer & Wanner, Solving ODEs II, IV.8, for
	// RADAU5): unchanged on the slow components, it damps the estimate's
	// fast ones, which the embedded formula does not damp as the method
	// does, so that a fast mode's decay at a step's start (after an event)
	// is not taken for an error.
	errv := m.fa
	for i, e := range m.k[len(m.k)-1] {
		errv[i] = e * m.fac
	}
	m.solve(errv)
	errNorm := m.norm(errv, y, y1)
	if errNorm <= 1 {
		m.f(t+h, y1, m.f1v) // f at the new point: the next step's f0
	}
	return errNorm
}

// jacobian sets the taken columns of jac by forward differences at (t, y)
// with f(t, y) = f0: component j is moved by √ε·max(|y_j|, its typical
// size), so that a component at or near zero is not moved by a rounding
// error (a garbage column costs the method its order).
func (m *rodas) jacobian(t float64, y, f0 []float64) {
	n := m.n
	for _, j := range m.cols {
		dj := math.Sqrt(2.2e-16) * math.Max(math.Abs(y[j]), m.typical[j])
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
}

// factorAndStages factors W for the step h and computes the stages, y1
// and the dense output's coefficients (the last stage is the error
// estimate); it reports false when W is singular.
func (m *rodas) factorAndStages(t, h float64, y, f0, y1 []float64) bool {
	n := m.n
	// W = 1/(γh)·I − J is block lower triangular: the quadratures (rows
	// and columns from nj on) do not feed back, so only the nj×nj block
	// is factored, and of it only the taken columns (see solve).
	fac := 1 / (m.tab.gamma * h)
	m.fac = fac
	d := len(m.cols)
	for a, i := range m.cols {
		for b, j := range m.cols {
			v := -m.jac[i*n+j]
			if i == j {
				v += fac
			}
			m.w[a*d+b] = v
		}
	}
	if !luFactor(m.w, m.piv, d) {
		return false
	}
	k := m.k
	copy(k[0], f0)
	m.solve(k[0])
	// The stages' arguments: f reads only the fed-back components, except
	// the last row of a's, which the chained stages and y1 continue.
	tab := m.tab
	for s := 1; s < len(k); s++ {
		if s <= len(tab.a) {
			row := tab.a[s-1]
			nArg := m.nj
			if s == len(tab.a) {
				nArg = n
			}
			for i := range nArg {
				v := y[i]
				for j, aj := range row {
					v += aj * k[j][i]
				}
				m.yt[i] = v
			}
		} else {
			for i := range n {
				m.yt[i] += k[s-1][i]
			}
		}
		m.stage(t, h, s, tab.c[s-1])
	}
	last := k[len(k)-1]
	for i := range n {
		y1[i] = m.yt[i] + last[i]
	}
	for r, row := range tab.d {
		cr := m.cont[r]
		for i := range n {
			v := 0.0
			for j, dj := range row {
				v += dj * k[j][i]
			}
			cr[i] = v
		}
	}
	copy(m.y1c, y1)
	return true
}

// dense is the continuous extension: y(θ) = (1−θ)·y0 + θ·(y1 + (1−θ)·
// (D_1 + θ·(D_2 + …))).
func (m *rodas) dense(th float64, out []float64) {
	m.denseN(th, out, len(out))
}

func (m *rodas) denseFed(th float64, out []float64) { m.denseN(th, out, m.nj) }

// denseN writes the first n components of the interpolant at θ.
func (m *rodas) denseN(th float64, out []float64, n int) {
	t1 := 1 - th
	last := len(m.cont) - 1
	for i := range n {
		p := m.cont[last][i]
		for r := last - 1; r >= 0; r-- {
			p = m.cont[r][i] + th*p
		}
		out[i] = t1*m.y0c[i] + th*(m.y1c[i]+t1*p)
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
