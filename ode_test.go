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
	m := newRodas(3, 2, f, norm)
	_, _, first := attempt(m, 1e-2)
	y1, e1, retry := attempt(m, 1e-3)
	fresh := newRodas(3, 2, f, norm)
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
