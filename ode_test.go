package coilkick

import (
	"math"
	"testing"
)

// testSys is a linear system y' = A·y with an optional ball-and-floor
// event, used to check the integrator against closed forms.
type testSys struct {
	a       [][]float64
	tEnd    float64
	floor   bool // y[0] is height, y[1] velocity; bounce with restitution e at y[0] = 0
	e       float64
	g       float64
	bounces []float64
	samples [][2]float64 // (t, y0) at accepted step ends
}

func (s *testSys) deriv(_ float64, y, dy []float64) {
	if s.floor {
		dy[0], dy[1] = y[1], -s.g
		return
	}
	for i := range dy {
		v := 0.0
		for j := range y {
			v += s.a[i][j] * y[j]
		}
		dy[i] = v
	}
}

func (s *testSys) guards(_ float64, y, g []float64) int {
	if !s.floor {
		return 0
	}
	g[0] = -y[0]
	return 1
}

func (s *testSys) nextTimeEvent(t float64) float64 {
	if s.tEnd > t {
		return s.tEnd
	}
	return math.Inf(1)
}

func (s *testSys) event(t float64, y []float64, k int) (bool, error) {
	if k < 0 {
		return true, nil
	}
	s.bounces = append(s.bounces, t)
	y[0] = 0
	y[1] = -s.e * y[1]
	return false, nil
}

func (s *testSys) stiff() bool { return false }

func (s *testSys) dynamic() []int { return nil }

func (s *testSys) accepted(v *stepView) {
	s.samples = append(s.samples, [2]float64{v.t1, v.y1[0]})
}

func TestODEHarmonicOscillator(t *testing.T) {
	t.Parallel()
	// source: y'' = −ω²y has y = cos(ωt) for y(0)=1, y'(0)=0 (closed form).
	const w = 2 * math.Pi * 50
	for _, stiff := range []bool{false, true} {
		s := &testSys{a: [][]float64{{0, 1}, {-w * w, 0}}, tEnd: 0.1}
		set := odeSettings{RelTol: 1e-9, Scale: []float64{1, w}, MaxSteps: 1e6, MaxStep: 0.01, Stiff: stiff}
		if stiff {
			set.RelTol = 1e-7
		}
		in := newODE(s, 2, set)
		y := []float64{1, 0}
		if err := in.run(0, y); err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for _, p := range s.samples {
			worst = math.Max(worst, math.Abs(p[1]-math.Cos(w*p[0])))
		}
		lim := 2e-7
		if stiff {
			lim = 2e-6 // RODAS4 at the looser tolerance 1e-7
		}
		if worst > lim {
			t.Errorf("stiff=%v: worst error %.3g, want <= %g (steps %d)", stiff, worst, lim, in.stats.Steps)
		}
		t.Logf("stiff=%v: worst error %.3g, steps %d", stiff, worst, in.stats.Steps)
	}
}

func TestODEBouncingBall(t *testing.T) {
	t.Parallel()
	// source: projectile motion h(t) = h0 − g t²/2; first impact at
	// sqrt(2 h0/g), then flights of 2 e^k v1/g with v1 = sqrt(2 g h0)
	// (Newton's restitution law).
	const h0, g, e = 1.0, 9.81, 0.5
	s := &testSys{floor: true, e: e, g: g, tEnd: 1.2} // before the Zeno point at 1.354 s
	in := newODE(s, 2, odeSettings{RelTol: 1e-9, Scale: []float64{1, 1}, MaxSteps: 1e5, MaxStep: 0.1})
	if err := in.run(0, []float64{h0, 0}); err != nil {
		t.Fatal(err)
	}
	v1 := math.Sqrt(2 * g * h0)
	want := math.Sqrt(2 * h0 / g)
	for k := 0; k < 3; k++ {
		if k >= len(s.bounces) {
			t.Fatalf("only %d bounces", len(s.bounces))
		}
		if d := math.Abs(s.bounces[k] - want); d > 1e-10 {
			t.Errorf("bounce %d at %.12g s, want %.12g s", k, s.bounces[k], want)
		}
		want += 2 * math.Pow(e, float64(k+1)) * v1 / g
	}
}

func TestODEStiffDecay(t *testing.T) {
	t.Parallel()
	// A stiff linear pair: y0' = −1e6 (y0 − y1), y1' = −y1 with y(0) = (0, 1).
	// source: closed form y1 = e^(−t), y0 = (1e6/(1e6−1))(e^(−t) − e^(−1e6 t)).
	s := &testSys{a: [][]float64{{-1e6, 1e6}, {0, -1}}, tEnd: 2}
	in := newODE(s, 2, odeSettings{RelTol: 1e-6, Scale: []float64{1, 1}, MaxSteps: 1e5, MaxStep: 0.5, Stiff: true})
	y := []float64{0, 1}
	if err := in.run(0, y); err != nil {
		t.Fatal(err)
	}
	want := 1e6 / (1e6 - 1) * (math.Exp(-2) - math.Exp(-2e6))
	if d := math.Abs(y[0]-want) / want; d > 1e-5 { // tolerance 1e-6, global error a few times that
		t.Errorf("y0(2) = %.9g, want %.9g (rel %.3g)", y[0], want, d)
	}
	// An explicit method would need some 2/1e6 s steps, a million of them;
	// the L-stable method should take well under a hundred.
	if in.stats.Steps > 200 {
		t.Errorf("Rosenbrock took %d steps on a stiff decay, want < 2000", in.stats.Steps)
	}
	t.Logf("stiff decay: %d steps, %d rejected", in.stats.Steps, in.stats.Rejected)
}

func TestODEStepBudget(t *testing.T) {
	t.Parallel()
	s := &testSys{a: [][]float64{{0, 1}, {-1e6, 0}}, tEnd: 100}
	in := newODE(s, 2, odeSettings{RelTol: 1e-9, Scale: []float64{1, 1}, MaxSteps: 500, MaxStep: 1})
	err := in.run(0, []float64{1, 0})
	if err == nil || !errorsIs(err, errStepBudget) {
		t.Fatalf("run with a small budget: err = %v, want the step budget error", err)
	}
}

// TestODEStiffnessDetection: the explicit method notices a stiff decay
// (h·|λ| at its stability limit) and hands the segment to RODAS4.
func TestODEStiffnessDetection(t *testing.T) {
	t.Parallel()
	// source: as TestODEStiffDecay, y0 = (1e6/(1e6−1))(e^(−t) − e^(−1e6 t)).
	s := &testSys{a: [][]float64{{-1e6, 1e6}, {0, -1}}, tEnd: 2}
	in := newODE(s, 2, odeSettings{RelTol: 1e-6, Scale: []float64{1, 1}, MaxSteps: 1e5, MaxStep: 0.5})
	y := []float64{0, 1}
	if err := in.run(0, y); err != nil {
		t.Fatal(err)
	}
	want := 1e6 / (1e6 - 1) * (math.Exp(-2) - math.Exp(-2e6))
	if d := math.Abs(y[0]-want) / want; d > 1e-5 {
		t.Errorf("y0(2) = %.9g, want %.9g (rel %.3g)", y[0], want, d)
	}
	// Explicit throughout: about 2/(3.3e-6) = 600 000 steps.
	if in.stats.Switches != 1 || in.stats.Steps > 500 {
		t.Errorf("%d switches, %d steps (%d implicit)", in.stats.Switches, in.stats.Steps, in.stats.StiffSteps)
	}
	t.Logf("%d steps, %d implicit", in.stats.Steps, in.stats.StiffSteps)
}

// kinkSys is a bilinear oscillator d²y/dt² = −ω²·y with ω = w1 for y > 0 and
// w2 for y < 0: the restoring force is continuous at y = 0 but its slope
// jumps there, as a table magnet's force does at a gap node. With pieces
// it is a pieceSystem: f is evaluated on the present side's law, continued
// past y = 0, and the integrator lands on the crossing.
type kinkSys struct {
	w1, w2  float64
	side    float64 // +1 or −1: the law in use (pieces); 0: by the sign of y
	tEnd    float64
	samples [][2]float64
}

func (s *kinkSys) deriv(_ float64, y, dy []float64) {
	side := s.side
	if side == 0 {
		side = math.Copysign(1, y[0])
	}
	w := s.w1
	if side < 0 {
		w = s.w2
	}
	dy[0], dy[1] = y[1], -w*w*y[0]
}

func (s *kinkSys) guards(_ float64, _, _ []float64) int { return 0 }

func (s *kinkSys) nextTimeEvent(t float64) float64 {
	if s.tEnd > t {
		return s.tEnd
	}
	return math.Inf(1)
}

func (s *kinkSys) event(_ float64, _ []float64, _ int) (bool, error) { return true, nil }
func (s *kinkSys) stiff() bool                                       { return false }
func (s *kinkSys) dynamic() []int                                    { return nil }
func (s *kinkSys) accepted(v *stepView) {
	s.samples = append(s.samples, [2]float64{v.t1, v.y1[0]})
}

// kinkPieces is kinkSys as a pieceSystem.
type kinkPieces struct{ *kinkSys }

func (s kinkPieces) enterPiece(y []float64) {
	s.side = math.Copysign(1, y[0])
	if y[0] == 0 {
		s.side = math.Copysign(1, y[1])
	}
}

func (s kinkPieces) crossPiece(int) { s.side = -s.side }

func (s kinkPieces) pieceGuards(y, g []float64) int {
	g[0] = -s.side * y[0]
	return 1
}

// bilinear returns the closed form of kinkSys from y = 1, y' = 0: a
// quarter cosine at w1, a half sine at w2 (amplitude w1/w2, the speed at
// y = 0 being w1 both ways), a quarter sine at w1; period π/w1 + π/w2.
func bilinear(w1, w2, t float64) float64 {
	period := math.Pi/w1 + math.Pi/w2
	t = math.Mod(t, period)
	t1 := math.Pi / (2 * w1)
	t2 := t1 + math.Pi/w2
	switch {
	case t < t1:
		return math.Cos(w1 * t)
	case t < t2:
		return -w1 / w2 * math.Sin(w2*(t-t1))
	}
	return math.Sin(w1 * (t - t2))
}

// TestODEPieceCrossings: a right-hand side with a kink (slope jump of the
// force) is integrated to its closed form, and landing on the kink
// (pieceSystem) saves the rejected steps a step over it costs.
func TestODEPieceCrossings(t *testing.T) {
	t.Parallel()
	// source: the bilinear oscillator's closed form is the harmonic
	// oscillator's (y = cos ωt, any mechanics text) joined at y = 0 with
	// equal speed (energy conservation), see bilinear.
	const w1, w2 = 2 * math.Pi * 50, 2 * math.Pi * 120
	run := func(pieces bool) (worst float64, st odeStats) {
		s := &kinkSys{w1: w1, w2: w2, tEnd: 0.1}
		var sys odeSystem = s
		if pieces {
			sys = kinkPieces{s}
		}
		in := newODE(sys, 2, odeSettings{RelTol: 1e-9, Scale: []float64{1, w1}, MaxSteps: 1e6, MaxStep: 0.01})
		if err := in.run(0, []float64{1, 0}); err != nil {
			t.Fatal(err)
		}
		for _, p := range s.samples {
			worst = math.Max(worst, math.Abs(p[1]-bilinear(w1, w2, p[0])))
		}
		return worst, in.stats
	}
	worstP, stP := run(true)
	worstK, stK := run(false)
	t.Logf("pieces: worst %.3g, %d steps, %d rejected, %d crossings; plain: worst %.3g, %d steps, %d rejected",
		worstP, stP.Steps, stP.Rejected, stP.Pieces, worstK, stK.Steps, stK.Rejected)
	// 0.1 s is 7.06 periods (π/w1 + π/w2 = 14.2 ms): 14 crossings of y = 0.
	if stP.Pieces != 14 {
		t.Errorf("%d piece crossings, want 14", stP.Pieces)
	}
	if worstP > 1e-7 {
		t.Errorf("with pieces: worst error %.3g, want <= 1e-7", worstP)
	}
	// Stepping over the kink: 169 rejections at this tolerance; landing on
	// it: 8.
	if stP.Rejected > 20 || stK.Rejected < 5*stP.Rejected {
		t.Errorf("rejected steps: %d with pieces, %d without", stP.Rejected, stK.Rejected)
	}
}

// TestRodasKeepsJacobianForRetry: the retry of a rejected step (same time,
// state and f) reuses the finite-difference Jacobian — the result is bit for
// bit that of a fresh stepper, with nj evaluations fewer — and a new
// segment (setColumns) or another state takes it afresh.
func TestRodasKeepsJacobianForRetry(t *testing.T) {
	t.Parallel()
	s := &testSys{a: [][]float64{{-1e6, 1e6, 0}, {0, -1, 0}, {1, 1, 0}}}
	evals := 0
	f := func(t float64, y, dy []float64) { evals++; s.deriv(t, y, dy) }
	norm := func([]float64, []float64, []float64) float64 { return 2 } // rejected: no evaluation at y1
	y := []float64{0.3, 1, 0}
	f0 := make([]float64, 3)
	s.deriv(0, y, f0)
	attempt := func(m *rodas, h float64) ([]float64, float64, int) {
		y1 := make([]float64, 3)
		e0 := evals
		e := m.attempt(0, h, y, f0, y1)
		return y1, e, evals - e0
	}
	m := newRodas(rodas5p, 3, 2, f, norm, nil)
	_, _, first := attempt(m, 1e-2)
	y1, e1, retry := attempt(m, 1e-3)
	fresh := newRodas(rodas5p, 3, 2, f, norm, nil)
	y1f, e1f, _ := attempt(fresh, 1e-3)
	if first-retry != 2 {
		t.Errorf("evaluations: %d for the first attempt, %d for the retry; want 2 (the Jacobian's columns) fewer", first, retry)
	}
	for i := range y1 {
		if y1[i] != y1f[i] || e1 != e1f {
			t.Fatalf("retry y1 %v err %g, fresh stepper %v err %g", y1, e1, y1f, e1f)
		}
	}
	m.setColumns(nil)
	if _, _, again := attempt(m, 1e-3); again != retry+2 {
		t.Errorf("after setColumns: %d evaluations, want the Jacobian again (%d)", again, retry+2)
	}
	y[0] = 0.31
	s.deriv(0, y, f0)
	if _, _, moved := attempt(m, 1e-3); moved != retry+2 {
		t.Errorf("from another state: %d evaluations, want %d", moved, retry+2)
	}
}

// rodas4 is RODAS4 (Hairer & Wanner, Solving ODEs II, IV.7, the
// coefficients of their code RODAS, METH = 1): six stages, order 4(3), a
// continuous extension of order 3. The integrator used it before Rodas5P;
// here it checks the stage machinery on a second published tableau.
var rodas4 = &rosenbrockTableau{
	name:  "RODAS4 (Hairer–Wanner)",
	gamma: 0.25,
	a: [][]float64{
		{1.544},
		{0.9466785280815826, 0.2557011698983284},
		{3.314825187068521, 2.896124015972201, 0.9986419139977817},
		{1.221224509226641, 6.019134481288629, 12.53708332932087, -0.6878860361058950},
	},
	c: [][]float64{
		{-5.6688},
		{-2.430093356833875, -0.2063599157091915},
		{-0.1073529058151375, -9.594562251023355, -20.47028614809616},
		{7.496443313967647, -10.24680431464352, -33.99990352819905, 11.70890893206160},
		{8.083246795921522, -7.981132988064893, -31.52159432874371, 16.31930543123136, -6.058818238834054},
	},
	d: [][]float64{
		{10.12623508344586, -7.487995877610167, -34.80091861555747, -7.992771707568823, 1.025137723295662},
		{-0.6762803392801253, 6.087714651680015, 16.43084320892478, 24.76722511418386, -6.594389125716872},
	},
	order: 4,
}

// hopf is the Hopf normal form y1' = −y2 + y1·(1 − r²), y2' = y1 + y2·(1 −
// r²), r² = y1² + y2²: a nonlinear coupled system with the closed form
// r(t) = 1/√(1 + (1/r0² − 1)·e^(−2t)), θ(t) = θ0 + t (polar coordinates:
// r' = r·(1 − r²), θ' = 1; Strogatz, Nonlinear Dynamics and Chaos, 8.2).
func hopf(_ float64, y, dy []float64) {
	q := 1 - y[0]*y[0] - y[1]*y[1]
	dy[0] = -y[1] + y[0]*q
	dy[1] = y[0] + y[1]*q
}

// hopfExact returns the closed form at time t from y(0) = (r0, 0).
func hopfExact(r0, t float64) [2]float64 {
	r := 1 / math.Sqrt(1+(1/(r0*r0)-1)*math.Exp(-2*t))
	return [2]float64{r * math.Cos(t), r * math.Sin(t)}
}

// TestRosenbrockOrders: one step from the exact state, on a nonlinear
// system with a closed form, the local errors of the step, of its embedded
// estimate and of its continuous extension fall with h as the orders the
// methods' authors give: RODAS4 order 4(3), continuous extension 3 (Hairer
// & Wanner, Solving ODEs II, IV.7); Rodas5P order 5(4), continuous
// extension 4 (Steinebach 2023). A local error of order p is O(h^(p+1)):
// halving h divides it by 2^(p+1). The stage machinery (rodas) and the
// tableaus are checked together: a wrong coefficient loses an order.
func TestRosenbrockOrders(t *testing.T) {
	t.Parallel()
	const r0 = 0.5
	y0 := []float64{r0, 0}
	f0 := make([]float64, 2)
	hopf(0, y0, f0)
	type localErrors struct{ step, estimate, dense float64 }
	measure := func(tab *rosenbrockTableau, h float64) localErrors {
		m := newRodas(tab, 2, 2, hopf, func(e, _, _ []float64) float64 { return math.Hypot(e[0], e[1]) }, []float64{1, 1})
		y1 := make([]float64, 2)
		est := m.attempt(0, h, y0, f0, y1)
		ex := hopfExact(r0, h)
		mid := make([]float64, 2)
		m.dense(0.4, mid)
		exMid := hopfExact(r0, 0.4*h)
		return localErrors{math.Hypot(y1[0]-ex[0], y1[1]-ex[1]), est, math.Hypot(mid[0]-exMid[0], mid[1]-exMid[1])}
	}
	for _, c := range []struct {
		tab                   *rosenbrockTableau
		step, estimate, dense int // orders: local error O(h^(order+1)), the estimate's O(h^order)
	}{
		{rodas4, 4, 4, 3},
		{rodas5p, 5, 5, 4},
	} {
		// The observed exponent between h = 0.02 and 0.01. The estimate
		// is the one attempt returns, filtered through (I − γh·J)⁻¹: with
		// J's eigenvalues of size 1 and γh ≤ 0.005 that is nearly the
		// identity and keeps the order.
		a, b := measure(c.tab, 0.02), measure(c.tab, 0.01)
		for _, o := range []struct {
			what      string
			big, half float64
			want      int
		}{
			{"step", a.step, b.step, c.step + 1},
			{"error estimate", a.estimate, b.estimate, c.estimate},
			{"continuous extension", a.dense, b.dense, c.dense + 1},
		} {
			got := math.Log2(o.big / o.half)
			t.Logf("%s: %s local error %.3g at h = 0.02, %.3g at 0.01: h^%.2f", c.tab.name, o.what, o.big, o.half, got)
			if math.Abs(got-float64(o.want)) > 0.3 {
				t.Errorf("%s: %s local error falls as h^%.2f, want h^%d (%.3g at h = 0.02, %.3g at 0.01)", c.tab.name, o.what, got, o.want, o.big, o.half)
			}
		}
	}
	// L-stability: on y' = λ·y with h·λ = −1e8 one step leaves y·R(−1e8),
	// R(∞) = 0 for these stiffly accurate methods.
	lin := func(_ float64, y, dy []float64) { dy[0] = -1e8 * y[0] }
	for _, tab := range []*rosenbrockTableau{rodas4, rodas5p} {
		m := newRodas(tab, 1, 1, lin, func(e, _, _ []float64) float64 { return math.Abs(e[0]) }, nil)
		y1 := []float64{0}
		f := []float64{-1e8}
		if m.attempt(0, 1, []float64{1}, f, y1); !(math.Abs(y1[0]) < 1e-6) {
			t.Errorf("%s: y' = −1e8·y, one step of 1 s from 1 leaves %g, want about 0 (L-stable)", tab.name, y1[0])
		}
	}
}

// switchSys is y' = 0 until a command at t = 1, then y' = −k·(y − 1), a
// fast decay that the system declares stiff from the command on; the run
// ends at t = 2. It records the solution at probe times from the dense
// output.
type switchSys struct {
	on     bool
	probes []float64
	got    []float64
	buf    []float64
}

func (s *switchSys) deriv(_ float64, y, dy []float64) {
	dy[0] = 0
	if s.on {
		dy[0] = -1e4 * (y[0] - 1)
	}
}
func (s *switchSys) guards(float64, []float64, []float64) int { return 0 }
func (s *switchSys) nextTimeEvent(t float64) float64 {
	switch {
	case t < 1:
		return 1
	case t < 2:
		return 2
	}
	return math.Inf(1)
}
func (s *switchSys) event(t float64, _ []float64, _ int) (bool, error) {
	s.on = true
	return t >= 2, nil
}
func (s *switchSys) stiff() bool    { return s.on }
func (s *switchSys) dynamic() []int { return nil }
func (s *switchSys) accepted(v *stepView) {
	for k, tp := range s.probes {
		if tp > v.t0 && tp <= v.t1 {
			v.interp(tp, s.buf)
			s.got[k] = s.buf[0]
		}
	}
}

// TestODEMethodChangeAtCommandRestarts: when a command moves the run to
// the other method, the integrator starts afresh with a new first step,
// even when both methods' step-size exponents are equal (DOPRI5 and
// Rodas5P are both of order 5): continuing with the step the explicit
// method had grown to (the maximum, 0.5 s, on y' = 0) would try to step
// over the 0.1 ms decay that starts at the command, and be rejected until
// the step is small enough. Closed form: y = 1 − e^(−k·(t−1)).
func TestODEMethodChangeAtCommandRestarts(t *testing.T) {
	t.Parallel()
	s := &switchSys{probes: []float64{1 + 5e-5, 1 + 2e-4, 1 + 1e-3}, buf: make([]float64, 1)}
	s.got = make([]float64, len(s.probes))
	in := newODE(s, 1, odeSettings{RelTol: 1e-8, Scale: []float64{1}, MaxSteps: 1e5, MaxStep: 0.5})
	if err := in.run(0, []float64{0}); err != nil {
		t.Fatal(err)
	}
	for k, tp := range s.probes {
		want := 1 - math.Exp(-1e4*(tp-1))
		if math.Abs(s.got[k]-want) > 1e-6 {
			t.Errorf("y(%g) = %.9g, want %.9g (steps %d)", tp, s.got[k], want, in.stats.Steps)
		}
	}
	// Continuing with 0.5 s, the first attempts after the command are
	// rejected until the step is small enough: 7 rejections against 2.
	if in.stats.Rejected > 3 {
		t.Errorf("%d rejected steps, want at most 3: the run did not start afresh at the change of method", in.stats.Rejected)
	}
	t.Logf("%d steps, %d rejected", in.stats.Steps, in.stats.Rejected)
}
