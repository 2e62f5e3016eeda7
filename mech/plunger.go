package mech

import (
	"errors"
	"fmt"
	"math"
	"slices"
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

// Force returns the pressure force (N, along +x) at gap x (m): the piece
// that holds at x (ForceOn).
func (o OrificeLoad) Force(x float64) float64 { return o.ForceOn(x, x) }

// Breaks returns the gaps (m) where the force's slope jumps: where the
// seal starts to lift and where it is fully open (PiecewiseLoad).
func (o OrificeLoad) Breaks() []float64 {
	return []float64{o.GapMax - o.Travel, o.GapMax}
}

// ForceOn returns the force (N) at gap x of the piece of Force that holds
// at gap ref (fully open, lifting, or seated), continued beyond the
// piece's ends: inside the piece it is Force bit for bit.
func (o OrificeLoad) ForceOn(x, ref float64) float64 {
	lift := o.GapMax - ref
	switch {
	case lift <= 0:
		return o.Pressure * o.Area
	case lift >= o.Travel:
		return 0
	}
	return o.Pressure * o.Area * (1 - (o.GapMax-x)/o.Travel)
}

// PiecewiseLoad is a load whose force is smooth in the gap only piecewise:
// continuous, but its slope jumps at the break gaps. An integrator that
// steps over a break loses its order and rejects step after step; it lands
// on the breaks instead, evaluating the force within a step on one piece,
// continued smoothly past the piece's ends (ForceOn).
type PiecewiseLoad interface {
	Load
	// Breaks returns the break gaps (m), ascending.
	Breaks() []float64
	// ForceOn returns the force (N) at gap x of the piece holding at gap
	// ref, continued beyond that piece's ends.
	ForceOn(x, ref float64) float64
}

// LoadBreaks returns the break gaps (m) of l, ascending, or nil for a load
// that is smooth in the gap.
func LoadBreaks(l Load) []float64 {
	if pl, ok := l.(PiecewiseLoad); ok {
		return pl.Breaks()
	}
	return nil
}

// LoadForceOn returns the force (N) at gap x of l's piece holding at gap
// ref (PiecewiseLoad.ForceOn); Force(x) for a smooth load.
func LoadForceOn(l Load, x, ref float64) float64 {
	if pl, ok := l.(PiecewiseLoad); ok {
		return pl.ForceOn(x, ref)
	}
	return l.Force(x)
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

// Breaks returns the members' break gaps (m), ascending, without repeats.
func (l Loads) Breaks() []float64 {
	var b []float64
	for _, ld := range l {
		b = append(b, LoadBreaks(ld)...)
	}
	slices.Sort(b)
	return slices.Compact(b)
}

// ForceOn returns the sum of the members' forces (N) on their pieces
// holding at gap ref (LoadForceOn).
func (l Loads) ForceOn(x, ref float64) float64 {
	f := 0.0
	for _, ld := range l {
		f += LoadForceOn(ld, x, ref)
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
func (p *Plunger) PassiveForce(x, v float64) float64 { return p.PassiveForceOn(x, v, x) }

// Breaks returns the gaps (m) strictly between the stops where the passive
// force's slope jumps (its load's breaks), ascending; nil when it is smooth
// there.
func (p *Plunger) Breaks() []float64 {
	if p.Load == nil {
		return nil
	}
	var b []float64
	for _, x := range LoadBreaks(p.Load) {
		if x > p.GapMin && x < p.GapMax {
			b = append(b, x)
		}
	}
	return b
}

// PassiveForceOn is PassiveForce with the load on its piece holding at gap
// ref (LoadForceOn), continued beyond that piece's ends.
func (p *Plunger) PassiveForceOn(x, v, ref float64) float64 {
	f := p.Spring.Force(x, p.GapMax) - p.Damping*v
	if p.Load != nil {
		f += LoadForceOn(p.Load, x, ref)
	}
	return f
}

// Acceleration returns dv/dt (m/s²) for a free plunger at gap x, velocity v
// and magnetic pull pull (N, toward the smaller gap): Newton's second law,
// m·dv/dt = F_passive − F_pull.
func (p *Plunger) Acceleration(x, v, pull float64) float64 { return p.AccelerationOn(x, v, pull, x) }

// AccelerationOn is Acceleration with the load on its piece holding at gap
// ref (PassiveForceOn).
func (p *Plunger) AccelerationOn(x, v, pull, ref float64) float64 {
	return (p.PassiveForceOn(x, v, ref) - pull) / p.Mass
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
