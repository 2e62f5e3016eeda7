package mech

import (
	"math"
	"testing"
)

func TestSpringForce(t *testing.T) {
	t.Parallel()
	// source: Hooke's law F = F0 + k·Δx for a linear spring (any mechanics text).
	s := Spring{Preload: 2, Rate: 800}
	const gapMax = 1.2e-3
	for _, c := range []struct{ x, want float64 }{
		{1.2e-3, 2},
		{0.2e-3, 2 + 800*1e-3},
		{0.7e-3, 2 + 800*0.5e-3},
	} {
		if got := s.Force(c.x, gapMax); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("%v.Force(%g) = %g, want %g", s, c.x, got, c.want)
		}
	}
}

func TestOrificeLoad(t *testing.T) {
	t.Parallel()
	// source: force of a uniform pressure on a flat area, F = p·A, with the
	// area of a circle π d²/4; 1 bar = 1e5 Pa (ISO 80000-4).
	area := OrificeArea(1.2e-3)
	if want := math.Pi * 0.36e-6; math.Abs(area-want) > 1e-18 {
		t.Fatalf("OrificeArea(1.2 mm) = %g, want %g", area, want)
	}
	o := OrificeLoad{Pressure: 3e5, Area: area, Travel: 0.3e-3, GapMax: 1.2e-3}
	full := 3e5 * area
	for _, c := range []struct{ x, want float64 }{
		{1.2e-3, full},
		{1.25e-3, full},     // beyond the rest stop: still seated
		{1.05e-3, full / 2}, // half the travel
		{0.9e-3, 0},
		{0.1e-3, 0},
	} {
		if got := o.Force(c.x); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("OrificeLoad.Force(%g) = %g, want %g", c.x, got, c.want)
		}
	}
}

// TestOrificeLoadPieces: the orifice load's pieces (PiecewiseLoad) are
// the load itself inside each (bit for bit) and, beyond a piece's ends,
// that piece's formula continued: the lifting piece's straight line
// p·A·(1 − lift/travel) (the model of OrificeLoad, F = p·A on the seat),
// the open piece's zero and the seated piece's p·A. Loads and the plunger
// pass the pieces on; breaks at or beyond the stops are not the plunger's.
func TestOrificeLoadPieces(t *testing.T) {
	t.Parallel()
	o := OrificeLoad{Pressure: 3e5, Area: OrificeArea(1.2e-3), Travel: 0.3e-3, GapMax: 1.2e-3}
	full := o.Pressure * o.Area
	if b := o.Breaks(); len(b) != 2 || b[0] != 0.9e-3 || b[1] != 1.2e-3 {
		t.Fatalf("breaks %v, want [0.9 mm 1.2 mm]", b)
	}
	line := func(x float64) float64 { return full * (1 - (1.2e-3-x)/0.3e-3) }
	for _, c := range []struct {
		ref, x, want float64
	}{
		{1.0e-3, 0.95e-3, o.Force(0.95e-3)}, // inside the lifting piece: the load
		{1.0e-3, 0.85e-3, line(0.85e-3)},    // beyond its lower end: the line, below zero
		{1.0e-3, 1.25e-3, line(1.25e-3)},    // beyond its upper end: the line, above p·A
		{0.5e-3, 0.95e-3, 0},                // the open piece continued
		{1.3e-3, 1.0e-3, full},              // the seated piece continued
	} {
		if got := o.ForceOn(c.x, c.ref); got != c.want && math.Abs(got-c.want) > 1e-12*full {
			t.Errorf("ForceOn(%g, piece at %g) = %.15g, want %.15g", c.x, c.ref, got, c.want)
		}
	}
	for x := 0.8e-3; x <= 1.3e-3; x += 0.01e-3 {
		for _, ref := range []float64{0.5e-3, 1.0e-3, 1.3e-3} {
			lift := 1.2e-3 - ref
			inside := (lift >= 0.3e-3 && 1.2e-3-x >= 0.3e-3) || (lift <= 0 && x >= 1.2e-3) ||
				(lift > 0 && lift < 0.3e-3 && 1.2e-3-x > 0 && 1.2e-3-x < 0.3e-3)
			if inside && o.ForceOn(x, ref) != o.Force(x) {
				t.Errorf("ForceOn(%g, piece at %g) = %.17g, Force %.17g: not the load inside its piece", x, ref, o.ForceOn(x, ref), o.Force(x))
			}
		}
	}
	two := Loads{o, ConstantLoad(0.5), OrificeLoad{Pressure: 1e5, Area: 1e-6, Travel: 0.5e-3, GapMax: 1.2e-3}}
	near := func(b []float64, want ...float64) bool {
		if len(b) != len(want) {
			return false
		}
		for k := range b {
			if math.Abs(b[k]-want[k]) > 1e-15 {
				return false
			}
		}
		return true
	}
	if b := two.Breaks(); !near(b, 0.7e-3, 0.9e-3, 1.2e-3) {
		t.Errorf("breaks of the sum %v, want [0.7 0.9 1.2] mm", b)
	}
	if got, want := two.ForceOn(0.85e-3, 1.0e-3), line(0.85e-3)+0.5+1e5*1e-6*(1-0.35/0.5); math.Abs(got-want) > 1e-12 {
		t.Errorf("sum ForceOn = %g, want %g", got, want)
	}
	p := Plunger{Mass: 1e-3, GapMin: 0.05e-3, GapMax: 1.2e-3, Spring: Spring{Preload: 2, Rate: 500}, Load: two}
	if b := p.Breaks(); !near(b, 0.7e-3, 0.9e-3) {
		t.Errorf("plunger breaks %v, want [0.7 0.9] mm (not the rest stop's)", b)
	}
	if got, want := p.PassiveForceOn(0.85e-3, 0.1, 1.0e-3), p.Spring.Force(0.85e-3, p.GapMax)+two.ForceOn(0.85e-3, 1.0e-3); math.Abs(got-want) > 1e-12 {
		t.Errorf("PassiveForceOn = %g, want %g", got, want)
	}
}

func TestImpact(t *testing.T) {
	t.Parallel()
	p := Plunger{Mass: 1e-3, GapMin: 0, GapMax: 1e-3, Restitution: 0.5, StickSpeed: 0.05}
	// source: Newton's law of restitution, v⁺ = −e·v⁻.
	after, stick := p.Impact(-0.4)
	if stick || math.Abs(after-0.2) > 1e-15 {
		t.Errorf("Impact(-0.4) = %g, %v; want 0.2, false", after, stick)
	}
	if _, stick := p.Impact(-0.08); !stick {
		t.Errorf("Impact(-0.08): rebound 0.04 m/s is below the stick speed, want stick")
	}
	if _, stick := p.Impact(0.01); !stick {
		t.Errorf("Impact(0.01): impact below the stick speed, want stick")
	}
	// A bounce sequence ends: speeds fall geometrically by e per bounce, so
	// it takes ceil(log(vStick/v0)/log(e)) bounces.
	v, n := -1.0, 0
	for {
		after, stick := p.Impact(v)
		if stick {
			break
		}
		n++
		v = -after
	}
	if want := int(math.Ceil(math.Log(0.05/1.0)/math.Log(0.5))) - 1; n != want {
		t.Errorf("bounces from 1 m/s with e=0.5, stick 0.05 m/s: %d, want %d", n, want)
	}
}

func TestValidate(t *testing.T) {
	t.Parallel()
	good := Plunger{Mass: 6e-3, GapMin: 5e-5, GapMax: 1.2e-3, StickSpeed: 0.05}
	if err := good.Validate(); err != nil {
		t.Fatalf("Validate(good) = %v", err)
	}
	bad := []func(*Plunger){
		func(p *Plunger) { p.Mass = 0 },
		func(p *Plunger) { p.Mass = math.NaN() },
		func(p *Plunger) { p.GapMax = p.GapMin },
		func(p *Plunger) { p.GapMin = -1e-6 },
		func(p *Plunger) { p.Damping = -1 },
		func(p *Plunger) { p.Restitution = 1.5 },
		func(p *Plunger) { p.StickSpeed = 0 },
		func(p *Plunger) { p.Spring.Rate = -1 },
	}
	for i, f := range bad {
		p := good
		f(&p)
		if err := p.Validate(); err == nil {
			t.Errorf("case %d: Validate(%+v) = nil, want an error", i, p)
		}
	}
}

func TestAcceleration(t *testing.T) {
	t.Parallel()
	// source: Newton's second law, m·a = ΣF.
	p := Plunger{Mass: 0.01, GapMin: 0, GapMax: 1e-3, Spring: Spring{Preload: 1, Rate: 1000},
		Damping: 2, Load: ConstantLoad(0.5), StickSpeed: 0.01}
	x, v, pull := 0.5e-3, -0.1, 3.0
	want := (1 + 1000*0.5e-3 + 0.5 + 2*0.1 - 3) / 0.01
	if got := p.Acceleration(x, v, pull); math.Abs(got-want) > 1e-9 {
		t.Errorf("Acceleration = %g, want %g", got, want)
	}
}
