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
