package magnet

import (
	"fmt"
	"math"
)

// CopperTempCoeff is the resistance temperature coefficient of annealed
// copper at 20 °C, 1/K (IEC 60028, International standard of resistance for
// copper: α20 = 0.00393/K).
const CopperTempCoeff = 0.00393

// minResistanceFactor is the floor of R(T)/R_ref. The linear law
// R_ref·(1 + α·(T − T_ref)) reaches zero far below any winding temperature
// (about 39 K for copper referred to 20 °C); the floor only keeps the
// resistance positive there, it is not physics.
const minResistanceFactor = 0.01

// Coil is the winding's electrical data.
type Coil struct {
	Resistance     float64 // ohm at RefTemperature
	RefTemperature float64 // K
	TempCoeff      float64 // 1/K at RefTemperature
	Turns          float64 // 0 when unknown
}

// ResistanceAt returns the winding resistance (ohm) at temperature T (K):
// R_ref·(1 + α·(T − T_ref)), the linear temperature law of IEC 60028. The
// factor 1 + α·(T − T_ref) is floored at 0.01 so the result stays positive
// far outside the law's range.
func (c Coil) ResistanceAt(T float64) float64 {
	f := 1 + c.TempCoeff*(T-c.RefTemperature)
	if f < minResistanceFactor {
		f = minResistanceFactor
	}
	return c.Resistance * f
}

// Validate reports the first field out of range: the resistance (ohm) and
// the reference temperature (K, absolute) must be positive and finite, the
// temperature coefficient (1/K) finite and not negative, the turn count
// finite and not negative (0 means unknown).
func (c Coil) Validate() error {
	switch {
	case !(c.Resistance > 0) || math.IsInf(c.Resistance, 0):
		return fmt.Errorf("magnet: coil resistance must be positive and finite, got %g ohm", c.Resistance)
	case !(c.RefTemperature > 0) || math.IsInf(c.RefTemperature, 0):
		return fmt.Errorf("magnet: coil reference temperature must be a positive absolute temperature in K, got %g K", c.RefTemperature)
	case !(c.TempCoeff >= 0) || math.IsInf(c.TempCoeff, 0):
		return fmt.Errorf("magnet: coil temperature coefficient must be finite and not negative, got %g 1/K", c.TempCoeff)
	case !(c.Turns >= 0) || math.IsInf(c.Turns, 0):
		return fmt.Errorf("magnet: coil turns must be finite and not negative (0 when unknown), got %g", c.Turns)
	}
	return nil
}
