package mech

import (
	"errors"
	"fmt"
	"math"
)

// Spring is a linear return spring that pushes the gap open.
type Spring struct {
	Preload float64 // N, force at the rest gap
	Rate    float64 // N/m
}

// Force returns the spring force (N, along +x) at gap x (m) for a plunger
// whose rest gap is gapMax: Preload + Rate·(gapMax − x) (Hooke's law).
func (s Spring) Force(x, gapMax float64) float64 {
	return s.Preload + s.Rate*(gapMax-x)
}

// Load is a position-dependent external force on the plunger, N along +x.
type Load interface {
	Force(x float64) float64
}

// ConstantLoad is a force that does not depend on position (N, along +x):
// a weight component, say. Negative values help pull-in.
type ConstantLoad float64

// Force returns the constant force (N).
func (c ConstantLoad) Force(float64) float64 { return float64(c) }

// OrificeLoad is the force of a pressure difference on a valve seat: a
// normally closed valve whose seal is held shut by the fluid pressure acting
// on the orifice area. At the rest gap the force is Pressure·Area (force
// from uniform pressure on a flat area, F = p·A); it falls linearly to zero
// as the seal lifts by Travel (a plain model of the pressure equalising once
// the seat opens, common practice, no source).
type OrificeLoad struct {
	Pressure float64 // Pa
	Area     float64 // m²
	Travel   float64 // m
	GapMax   float64 // m, rest gap where the seal sits
}

// OrificeArea returns the area (m²) of a circular orifice of diameter d (m).
func OrificeArea(d float64) float64 { return math.Pi * d * d / 4 }

// Force returns the pressure force (N, along +x) at gap x (m).
func (o OrificeLoad) Force(x float64) float64 {
	lift := o.GapMax - x
	switch {
	case lift <= 0:
		return o.Pressure * o.Area
	case lift >= o.Travel:
		return 0
	}
	return o.Pressure * o.Area * (1 - lift/o.Travel)
}

// Loads sums several loads.
type Loads []Load

// Force returns the sum of the loads' forces (N).
func (l Loads) Force(x float64) float64 {
	f := 0.0
	for _, ld := range l {
		f += ld.Force(x)
	}
	return f
}

// Plunger is the moving part with its spring, load and stops.
type Plunger struct {
	Mass        float64 // kg
	GapMin      float64 // m, energized stop
	GapMax      float64 // m, rest stop
	Spring      Spring
	Load        Load    // nil for none
	Damping     float64 // N·s/m, viscous
	Restitution float64 // 0..1: rebound speed ÷ impact speed at either stop
	StickSpeed  float64 // m/s: an impact, or a rebound, slower than this ends in sticking
}

// Validate reports a plunger that cannot be simulated.
func (p *Plunger) Validate() error {
	switch {
	case !(p.Mass > 0):
		return fmt.Errorf("mech: mass must be positive, got %g kg", p.Mass)
	case p.GapMin < 0:
		return fmt.Errorf("mech: seated gap must not be negative, got %g m", p.GapMin)
	case !(p.GapMax > p.GapMin):
		return fmt.Errorf("mech: rest gap %g m must exceed seated gap %g m", p.GapMax, p.GapMin)
	case p.Spring.Preload < 0 || p.Spring.Rate < 0:
		return errors.New("mech: spring preload and rate must not be negative")
	case p.Damping < 0:
		return fmt.Errorf("mech: damping must not be negative, got %g N·s/m", p.Damping)
	case p.Restitution < 0 || p.Restitution > 1:
		return fmt.Errorf("mech: restitution must be within 0..1, got %g", p.Restitution)
	case !(p.StickSpeed > 0):
		return fmt.Errorf("mech: stick speed must be positive, got %g m/s", p.StickSpeed)
	}
	return nil
}

// PassiveForce returns the force on the plunger other than the magnet's
// (N, along +x) at gap x (m) and velocity v (m/s): spring + load − c·v.
func (p *Plunger) PassiveForce(x, v float64) float64 {
	f := p.Spring.Force(x, p.GapMax) - p.Damping*v
	if p.Load != nil {
		f += p.Load.Force(x)
	}
	return f
}

// Acceleration returns dv/dt (m/s²) for a free plunger at gap x, velocity v
// and magnetic pull pull (N, toward the smaller gap): Newton's second law,
// m·dv/dt = F_passive − F_pull.
func (p *Plunger) Acceleration(x, v, pull float64) float64 {
	return (p.PassiveForce(x, v) - pull) / p.Mass
}

// Impact returns the velocity after hitting a stop at velocity v (m/s) and
// whether the plunger sticks there: the rebound is −e·v (coefficient of
// restitution, Newton's impact law); an impact, or a rebound, slower than
// StickSpeed ends in sticking, so that a decaying bounce sequence ends
// after a finite number of bounces instead of chattering.
func (p *Plunger) Impact(v float64) (after float64, stick bool) {
	speed := math.Abs(v)
	rebound := p.Restitution * speed
	if speed < p.StickSpeed || rebound < p.StickSpeed {
		return 0, true
	}
	return -p.Restitution * v, false
}
