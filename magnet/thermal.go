package magnet

import (
	"fmt"
	"math"
	"strings"
)

// CopperSpecificHeat is the specific heat capacity of copper, J/(kg·K): 385
// J/(kg·K) = 0.385 J/(g·K), the handbook value near 20 °C (from memory, no
// source checked). The winding's heat capacity is about its copper mass
// times this value; insulation, bobbin and varnish add to it.
const CopperSpecificHeat = 385.0

// copperInferredZero is k of the resistance method for copper, °C: the
// temperature at which the linear R(θ) of copper extrapolates to zero
// (IEEE Std 112 / IEEE Std 119 resistance method, k = 234.5 °C).
const copperInferredZero = 234.5

// zeroCelsius is 0 °C in K (SI Brochure, 9th ed., 2.3.1).
const zeroCelsius = 273.15

// Thermal is a lumped thermal network of the coil: a winding node and,
// optionally, a housing node. Temperatures are in K, powers in W, times in
// s:
//
//	one node (HousingCapacity == 0):  Cw dTw/dt = P − (Tw − Ta)/Rwa
//	two nodes:  Cw dTw/dt = P − (Tw − Th)/Rwh
//	            Ch dTh/dt = (Tw − Th)/Rwh − (Th − Ta)/Rha
//
// with P the power dissipated in the winding and Ta the ambient
// temperature. This is the first-order (one node) or second-order (RC
// ladder, two nodes) lumped-capacitance model (lumped-capacitance method:
// Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, ch. 5; thermal
// resistances and their networks: ibid., ch. 3). Each node has one uniform
// temperature: the winding node stands for the mean winding temperature,
// which is what the resistance method measures, not the hot spot.
//
// A one-node network uses WindingCapacity and WindingToAmbient and leaves
// the two-node fields 0; a two-node network uses WindingCapacity,
// WindingToHousing, HousingCapacity and HousingToAmbient and leaves
// WindingToAmbient 0 (Validate rejects a mix, which would be ambiguous).
//
// Deriv, SteadyRise, Advance and TimeConstants allocate nothing and do not
// check the network: call Validate once (FromRating and FromSurface
// return validated networks).
type Thermal struct {
	WindingCapacity  float64 // J/K (Cw)
	WindingToAmbient float64 // K/W (Rwa), one-node model
	WindingToHousing float64 // K/W (Rwh), two-node model
	HousingCapacity  float64 // J/K (Ch), 0 for one node
	HousingToAmbient float64 // K/W (Rha), two-node model
}

// TwoNode reports whether the network has a housing node
// (HousingCapacity != 0).
func (th Thermal) TwoNode() bool { return th.HousingCapacity != 0 }

// Validate reports the first field out of range. The winding capacity
// (J/K) must be positive and finite. One node: the winding-to-ambient
// resistance (K/W) positive and finite, the two-node resistances 0. Two
// nodes: the housing capacity (J/K) and both resistances (K/W) positive and
// finite, the winding-to-ambient resistance 0.
func (th Thermal) Validate() error {
	pos := func(v float64) bool { return v > 0 && !math.IsInf(v, 0) }
	switch {
	case !pos(th.WindingCapacity):
		return fmt.Errorf("magnet: thermal winding capacity must be positive and finite, got %g J/K", th.WindingCapacity)
	case !(th.HousingCapacity >= 0) || math.IsInf(th.HousingCapacity, 0):
		return fmt.Errorf("magnet: thermal housing capacity must be positive and finite (0 for a one-node model), got %g J/K", th.HousingCapacity)
	}
	if !th.TwoNode() {
		switch {
		case !pos(th.WindingToAmbient):
			return fmt.Errorf("magnet: thermal winding-to-ambient resistance must be positive and finite in a one-node model, got %g K/W", th.WindingToAmbient)
		case th.WindingToHousing != 0 || th.HousingToAmbient != 0:
			return fmt.Errorf("magnet: thermal winding-to-housing (%g K/W) and housing-to-ambient (%g K/W) resistances must be 0 in a one-node model (housing capacity 0)", th.WindingToHousing, th.HousingToAmbient)
		}
		return nil
	}
	switch {
	case !pos(th.WindingToHousing):
		return fmt.Errorf("magnet: thermal winding-to-housing resistance must be positive and finite in a two-node model, got %g K/W", th.WindingToHousing)
	case !pos(th.HousingToAmbient):
		return fmt.Errorf("magnet: thermal housing-to-ambient resistance must be positive and finite in a two-node model, got %g K/W", th.HousingToAmbient)
	case th.WindingToAmbient != 0:
		return fmt.Errorf("magnet: thermal winding-to-ambient resistance must be 0 in a two-node model (use winding-to-housing and housing-to-ambient), got %g K/W", th.WindingToAmbient)
	}
	return nil
}

// FromRating returns a one-node network from datasheet-style figures: the
// steady temperature rise (K) at a power (W) and the thermal time constant
// (s), R = rise/power and C = tau/R (the steady state and the time constant
// τ = R·C of the first-order lumped-capacitance model, Incropera & DeWitt,
// Fundamentals of Heat and Mass Transfer, ch. 5).
func FromRating(rise, power, tau float64) (Thermal, error) {
	pos := func(v float64) bool { return v > 0 && !math.IsInf(v, 0) }
	switch {
	case !pos(rise):
		return Thermal{}, fmt.Errorf("magnet: rated temperature rise must be positive and finite, got %g K", rise)
	case !pos(power):
		return Thermal{}, fmt.Errorf("magnet: rated power must be positive and finite, got %g W", power)
	case !pos(tau):
		return Thermal{}, fmt.Errorf("magnet: thermal time constant must be positive and finite, got %g s", tau)
	}
	r := rise / power
	th := Thermal{WindingCapacity: tau / r, WindingToAmbient: r}
	if err := th.Validate(); err != nil {
		return Thermal{}, fmt.Errorf("magnet: rating %g K at %g W, τ = %g s gives an unusable network: %w", rise, power, tau, err)
	}
	return th, nil
}

// FromSurface returns a one-node network from geometry: the cooling
// surface area (m²), the heat-transfer coefficient h (W/(m²·K)) and the
// winding's heat capacity (J/K, e.g. copper mass × CopperSpecificHeat).
// R = 1/(h·A) (Newton's law of cooling, Incropera & DeWitt, Fundamentals of
// Heat and Mass Transfer, ch. 1). For a coil in still air h is typically
// 10–15 W/(m²·K) (common practice, no source; from memory, this covers
// natural convection and radiation together).
func FromSurface(area, h, capacity float64) (Thermal, error) {
	pos := func(v float64) bool { return v > 0 && !math.IsInf(v, 0) }
	switch {
	case !pos(area):
		return Thermal{}, fmt.Errorf("magnet: cooling surface area must be positive and finite, got %g m²", area)
	case !pos(h):
		return Thermal{}, fmt.Errorf("magnet: heat-transfer coefficient must be positive and finite, got %g W/(m²·K)", h)
	case !pos(capacity):
		return Thermal{}, fmt.Errorf("magnet: winding heat capacity must be positive and finite, got %g J/K", capacity)
	}
	th := Thermal{WindingCapacity: capacity, WindingToAmbient: 1 / (h * area)}
	if err := th.Validate(); err != nil {
		return Thermal{}, fmt.Errorf("magnet: surface %g m² with h = %g W/(m²·K) gives an unusable network: %w", area, h, err)
	}
	return th, nil
}

// Deriv returns dTw/dt and dTh/dt (K/s) of the network equations (see
// Thermal) at winding temperature tw (K), housing temperature thh (K,
// ignored for one node, whose dth is 0), power p (W) dissipated in the
// winding and ambient temperature ta (K). It allocates nothing.
func (th Thermal) Deriv(tw, thh, p, ta float64) (dtw, dth float64) {
	if !th.TwoNode() {
		return (p - (tw-ta)/th.WindingToAmbient) / th.WindingCapacity, 0
	}
	q := (tw - thh) / th.WindingToHousing // W, winding to housing
	dtw = (p - q) / th.WindingCapacity
	dth = (q - (thh-ta)/th.HousingToAmbient) / th.HousingCapacity
	return dtw, dth
}

// SteadyRise returns the steady winding temperature rise above ambient (K)
// at constant power p (W): P·Rwa for one node, P·(Rwh + Rha) for two (the
// resistances in series carry all of P in the steady state).
func (th Thermal) SteadyRise(p float64) float64 {
	if !th.TwoNode() {
		return p * th.WindingToAmbient
	}
	return p * (th.WindingToHousing + th.HousingToAmbient)
}

// ladder returns the two-node system matrix A of d(T − T∞)/dt = A·(T − T∞),
// state (Tw, Th):
//
//	A = [ −1/(Cw·Rwh)    1/(Cw·Rwh)            ]
//	    [  1/(Ch·Rwh)   −(1/Rwh + 1/Rha)/Ch    ]
//
// and its eigenvalues, slow (nearer 0) and fast. a12·a21 > 0 and
// det A = 1/(Cw·Ch·Rwh·Rha) > 0, trace < 0, so both are real, negative and
// distinct (any 2×2 matrix: λ = (tr ± √((a11 − a22)² + 4·a12·a21))/2). The
// fast one is formed without cancellation and the slow one from
// λslow = det/λfast.
func (th Thermal) ladder() (a11, a12, a21, a22, slow, fast float64) {
	gwh, gha := 1/th.WindingToHousing, 1/th.HousingToAmbient // W/K
	a11 = -gwh / th.WindingCapacity
	a12 = gwh / th.WindingCapacity
	a21 = gwh / th.HousingCapacity
	a22 = -(gwh + gha) / th.HousingCapacity
	d := a11 - a22
	s := math.Sqrt(d*d + 4*a12*a21)
	fast = 0.5*(a11+a22) - 0.5*s
	det := (gwh / th.WindingCapacity) * (gha / th.HousingCapacity)
	slow = det / fast
	return a11, a12, a21, a22, slow, fast
}

// TimeConstants returns the time constants (s) of the network, −1/λ for
// each eigenvalue λ of its system matrix: for one node slow = Rwa·Cw and
// fast = 0 (no second mode); for two nodes slow ≥ fast > 0 (see Advance).
func (th Thermal) TimeConstants() (slow, fast float64) {
	if !th.TwoNode() {
		return th.WindingToAmbient * th.WindingCapacity, 0
	}
	_, _, _, _, ls, lf := th.ladder()
	return -1 / ls, -1 / lf
}

// Advance returns the node temperatures (K) after time dt (s) at constant
// power p (W) and ambient ta (K), starting from winding tw and housing thh
// (K). The solution is exact, not a numerical step, so dt may be of any
// length; dt ≤ 0 or NaN returns the start unchanged and dt = +Inf the
// steady state. It allocates nothing.
//
// One node (thh is returned unchanged): the exponential solution of the
// first-order lumped-capacitance model (Incropera & DeWitt, Fundamentals of
// Heat and Mass Transfer, ch. 5), τ = Rwa·Cw, T∞ = Ta + P·Rwa:
//
//	Tw(dt) = Tw + (T∞ − Tw)·(1 − e^(−dt/τ))
//
// Two nodes: with y = T − T∞, T∞ = (Ta + P·(Rwh + Rha), Ta + P·Rha), the
// linear system y' = A·y (see ladder) has y(dt) = e^(A·dt)·y(0), and for a
// 2×2 matrix with distinct eigenvalues λs, λf, m = (λs + λf)/2 (Sylvester's
// formula, i.e. Cayley–Hamilton for a 2×2 matrix; the divided difference φ
// and its cancellation for close eigenvalues are discussed in Moler & Van
// Loan, Nineteen Dubious Ways to Compute the Exponential of a Matrix,
// SIAM Review, 1978 and 2003, reference from memory):
//
//	e^(A·t) = c·I + φ·(A − m·I),  c = (e^(λs·t) + e^(λf·t))/2,
//	                              φ = (e^(λs·t) − e^(λf·t))/(λs − λf)
//
// evaluated as T(dt) = T + (e^(A·dt) − I)·y(0) with expm1, so short steps
// keep full precision and nearly equal time constants (φ → t·e^(λ·t)) do
// not cancel.
func (th Thermal) Advance(tw, thh, p, ta, dt float64) (tw2, th2 float64) {
	if !(dt > 0) {
		return tw, thh
	}
	if math.IsInf(dt, 1) {
		if !th.TwoNode() {
			return ta + p*th.WindingToAmbient, thh
		}
		return ta + p*(th.WindingToHousing+th.HousingToAmbient), ta + p*th.HousingToAmbient
	}
	if !th.TwoNode() {
		tinf := ta + p*th.WindingToAmbient
		g := -math.Expm1(-dt / (th.WindingToAmbient * th.WindingCapacity)) // 1 − e^(−dt/τ)
		return tw + (tinf-tw)*g, thh
	}
	a11, a12, a21, a22, ls, lf := th.ladder()
	yw := tw - (ta + p*(th.WindingToHousing+th.HousingToAmbient))
	yh := thh - (ta + p*th.HousingToAmbient)

	m := 0.5 * (ls + lf)
	es := math.Exp(ls * dt)
	cm1 := 0.5 * (math.Expm1(ls*dt) + math.Expm1(lf*dt)) // c − 1
	// φ = e^(λs·t)·(1 − e^(−(λs − λf)·t))/(λs − λf); λs − λf > 0 in exact
	// arithmetic, but may round to 0 (or just below) for nearly equal
	// eigenvalues, where φ → t·e^(λs·t).
	gap := ls - lf
	phi := es * dt
	if x := gap * dt; x != 0 {
		phi = es * (-math.Expm1(-x) / gap)
	}
	dw := cm1*yw + phi*((a11-m)*yw+a12*yh)
	dh := cm1*yh + phi*(a21*yw+(a22-m)*yh)
	return tw + dw, thh + dh
}

// insulationClasses are the thermal classes of IEC 60085 (Electrical
// insulation — Thermal evaluation and designation), °C, by letter.
var insulationClasses = [...]struct {
	letter, number string
	limit          float64 // °C
}{
	{"A", "105", 105}, {"E", "120", 120}, {"B", "130", 130}, {"F", "155", 155},
	{"H", "180", 180}, {"N", "200", 200}, {"R", "220", 220},
}

// InsulationClassLimit returns the temperature limit (K) of an insulation
// thermal class of IEC 60085: A 105 °C, E 120 °C, B 130 °C, F 155 °C,
// H 180 °C, N 200 °C, R 220 °C. The class is named by its letter or its
// number (case and surrounding space ignored: "F", "f", "155"). The limit
// applies to the hottest spot of the insulation (from memory), so the mean
// winding temperature from the resistance method must stay some kelvin
// below it; how many is the product standard's business, not this model's.
func InsulationClassLimit(class string) (float64, error) {
	c := strings.ToUpper(strings.TrimSpace(class))
	for _, ic := range insulationClasses {
		if c == ic.letter || c == ic.number {
			return ic.limit + zeroCelsius, nil
		}
	}
	return 0, fmt.Errorf("magnet: unknown insulation class %q (IEC 60085: A, E, B, F, H, N, R or 105, 120, 130, 155, 180, 200, 220)", class)
}

// ResistanceMethodTemperature returns the winding temperature t2 (K) from
// its resistance r2 (ohm), given a resistance r1 (ohm) measured at a known
// temperature t1 (K), by the resistance method for copper (IEEE Std 112 /
// IEEE Std 119): θ2 = (R2/R1)(k + θ1) − k, θ in °C, k = 234.5 °C. It is the
// linear law R(T) = R1·(1 + α·(T − T1)) with α = 1/(k + θ1); for θ1 = 20 °C
// that is 1/254.5 = 0.0039293/K against IEC 60028's 0.00393/K
// (CopperTempCoeff, which would mean k ≈ 234.45 °C), a difference of
// 1.85e-4·(θ2 − 20 °C) K. The result is the mean winding temperature. r1
// must be positive and r2 not negative; the function does not check them.
func ResistanceMethodTemperature(r1, t1, r2 float64) float64 {
	theta1 := t1 - zeroCelsius
	theta2 := r2/r1*(copperInferredZero+theta1) - copperInferredZero
	return theta2 + zeroCelsius
}
