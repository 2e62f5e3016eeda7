package coilkick

import (
	"math"
	"testing"
)

// TestLoadBreaksArePieces: the irrigation demo's orifice load (seal
// travel 0.3 mm below its 1.2 mm rest gap) has a kink at 0.9 mm. The free
// plunger's pieces end there (the gap law's piece is the whole line), the
// right-hand side evaluates the load of the present piece continued past
// its end — the straight line of the lifting seal below 0.9 mm, zero
// above it from the open side — and crossing the end moves to the next
// piece, chosen by the side crossed. Expected values: Newton's second law
// m·dv/dt = spring + load − c·v − pull, with the seal's load p·A·(1 −
// lift/travel) (the OrificeLoad model: F = p·A on the seat, the linear
// fall over the travel common practice, no source).
func TestLoadBreaksArePieces(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r, y := newRun(md, &Options{}, 1e-8)
	s := r.system
	s.mmode = mechFree
	p := md.Plunger
	brk := p.GapMax - 0.3e-3
	if len(s.loadBreaks) != 1 || math.Abs(s.loadBreaks[0]-brk) > 1e-15 {
		t.Fatalf("load breaks %v, want [%g]", s.loadBreaks, brk)
	}
	full := p.Load.Force(p.GapMax)
	dy := make([]float64, nState)
	g := make([]float64, maxPieceGuards)
	accel := func(x float64) float64 {
		y[sGap], y[sVel] = x, 0.1
		s.deriv(0, y, dy)
		return dy[sVel]
	}
	pullAt := func(x float64) float64 {
		y[sGap] = x
		_, pull := s.currentForce(y)
		return pull
	}
	y[sFlux] = md.Magnet.FluxLinkage(0.2, 1e-3) // a pull of some newtons
	// On the lifting piece (entered above the break, moving to the seat).
	y[sGap], y[sVel] = 1.0e-3, -0.1
	s.enterPiece(y)
	if n := s.pieceGuards(y, g); n != 2 || g[0] != brk-1.0e-3 || g[1] != -1 {
		t.Errorf("lifting piece guards %v (%d), want [%g −1]", g[:n], n, brk-1.0e-3)
	}
	for _, x := range []float64{1.0e-3, brk - 0.05e-3} {
		a := accel(x)
		line := full * (1 - (p.GapMax-x)/0.3e-3)
		want := (p.Spring.Force(x, p.GapMax) - p.Damping*0.1 + line - pullAt(x)) / p.Mass
		if math.Abs(a-want) > 1e-9*math.Abs(want) {
			t.Errorf("lifting piece at %g m: dv/dt %g, want %g (the seal's line)", x, a, want)
		}
	}
	if a, kinked := accel(brk-0.05e-3), p.Acceleration(brk-0.05e-3, 0.1, pullAt(brk-0.05e-3)); a == kinked {
		t.Errorf("below the break the lifting piece gives the model's own value %g, not its continuation", a)
	}
	// Crossing its lower end moves to the open piece.
	s.crossPiece(0)
	y[sGap] = brk
	if n := s.pieceGuards(y, g); n != 2 || g[0] != -1 || g[1] != 0 {
		t.Errorf("open piece guards at the break %v (%d), want [−1 0]", g[:n], n)
	}
	x := brk + 0.05e-3 // overshoot back above the break: the open piece's zero load
	want := (p.Spring.Force(x, p.GapMax) - p.Damping*0.1 - pullAt(x)) / p.Mass
	if a := accel(x); math.Abs(a-want) > 1e-9*math.Abs(want) {
		t.Errorf("open piece at %g m: dv/dt %g, want %g (no load)", x, a, want)
	}
	// At the break itself, the side is chosen by the velocity.
	y[sGap], y[sVel] = brk, 0.2
	s.enterPiece(y)
	if lo, hi := s.pieceSpan(); lo != brk || !math.IsInf(hi, 1) {
		t.Errorf("entered at the break moving up: span %g..%g, want %g..+Inf", lo, hi, brk)
	}
}
