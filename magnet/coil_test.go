package magnet

import (
	"math"
	"strings"
	"testing"
)

// celsius0 is 0 °C in K (SI Brochure, definition of the Celsius scale).
const celsius0 = 273.15

func TestCoilResistanceAtMatchesIEEEResistanceMethod(t *testing.T) {
	t.Parallel()
	// source: IEC 60028, α20 = 0.00393/K for annealed copper, against the
	// resistance method of IEEE Std 112/119, θ2 = (R2/R1)(k + θ1) − k with
	// k = 234.5 for copper. k = 234.5 is α = 1/254.5 = 0.0039293/K at 20 °C,
	// so the two differ by (254.5·0.00393 − 1)(θ − 20) = 1.85e-4·(θ − 20) K:
	// 0.024 K at 150 °C.
	const (
		kCopper    = 234.5 // °C, IEEE Std 112/119
		theta1     = 20.0  // °C
		agreeTolK  = 0.03  // K, above the 0.024 K worst case over 20–150 °C
		algebraTol = 1e-9  // K, rounding only
	)
	c := Coil{Resistance: 12.5, RefTemperature: theta1 + celsius0, TempCoeff: CopperTempCoeff}
	for theta := 20.0; theta <= 150; theta += 5 {
		r2 := c.ResistanceAt(theta + celsius0)
		theta2 := r2/c.Resistance*(kCopper+theta1) - kCopper
		if d := math.Abs(theta2 - theta); d > agreeTolK {
			t.Errorf("%v.ResistanceAt(%g K) = %g ohm: resistance method gives %g °C, want %g °C within %g K", c, theta+celsius0, r2, theta2, theta, agreeTolK)
		}
		// source: algebra of the two laws above (expected small difference).
		want := (254.5*CopperTempCoeff - 1) * (theta - theta1)
		if d := theta2 - theta; math.Abs(d-want) > algebraTol {
			t.Errorf("%v.ResistanceAt(%g K): difference to IEEE method %g K, want %g K", c, theta+celsius0, d, want)
		}
	}
}

func TestCoilResistanceAtStaysPositive(t *testing.T) {
	t.Parallel()
	c := Coil{Resistance: 3, RefTemperature: 293.15, TempCoeff: CopperTempCoeff}
	for _, T := range []float64{0, 4.2, 20, 77, 293.15, 500} {
		if r := c.ResistanceAt(T); !(r > 0) || math.IsInf(r, 0) {
			t.Errorf("%v.ResistanceAt(%g) = %g, want positive and finite", c, T, r)
		}
	}
	// At the reference temperature the law returns the reference value exactly.
	if r := c.ResistanceAt(293.15); r != 3 {
		t.Errorf("%v.ResistanceAt(293.15) = %g, want 3", c, r)
	}
}

func TestCoilValidate(t *testing.T) {
	t.Parallel()
	good := Coil{Resistance: 10, RefTemperature: 293.15, TempCoeff: CopperTempCoeff, Turns: 1200}
	tests := []struct {
		name string
		c    Coil
		want string // "" for no error
	}{
		{"good", good, ""},
		{"turns unknown", Coil{Resistance: 10, RefTemperature: 293.15, TempCoeff: CopperTempCoeff}, ""},
		{"zero resistance", Coil{RefTemperature: 293.15}, "resistance"},
		{"NaN resistance", Coil{Resistance: math.NaN(), RefTemperature: 293.15}, "resistance"},
		{"celsius reference", Coil{Resistance: 10, RefTemperature: -20}, "reference temperature"},
		{"negative coefficient", Coil{Resistance: 10, RefTemperature: 293.15, TempCoeff: -1e-3}, "temperature coefficient"},
		{"infinite coefficient", Coil{Resistance: 10, RefTemperature: 293.15, TempCoeff: math.Inf(1)}, "temperature coefficient"},
		{"negative turns", Coil{Resistance: 10, RefTemperature: 293.15, Turns: -5}, "turns"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			err := tt.c.Validate()
			if tt.want == "" {
				if err != nil {
					t.Errorf("%+v.Validate() = %v, want nil", tt.c, err)
				}
				return
			}
			if err == nil || !strings.HasPrefix(err.Error(), "magnet: ") || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("%+v.Validate() = %v, want a \"magnet: \" error about %s", tt.c, err, tt.want)
			}
		})
	}
}
