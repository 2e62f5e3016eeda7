package magnet

import (
	"math"
	"sort"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// Reference thermal networks used below (chosen, not measured): a small
// solenoid of about 60 J/K winding capacity (some 150 g of copper), and a
// two-node version with a steel housing.
const (
	refAmbient = 293.15 // K, 20 °C
	refPower   = 12.0   // W
)

func refOneNode(t testing.TB) Thermal {
	t.Helper()
	th, err := FromRating(60, refPower, 300) // 60 K at 12 W, τ = 300 s
	if err != nil {
		t.Fatalf("FromRating: %v", err)
	}
	return th
}

// refTwoNodes: a typical coil in a housing, and two networks with nearly
// equal time constants (weak coupling, physically absurd but the hard cases
// for the closed form): eigenvalues 6e-5 apart relative, and so close that
// their difference rounds to 0.
var refTwoNodes = []struct {
	name string
	th   Thermal
}{
	{"coil and housing", Thermal{WindingCapacity: 60, WindingToHousing: 0.8, HousingCapacity: 450, HousingToAmbient: 4}},
	{"nearly equal time constants", Thermal{WindingCapacity: 1, WindingToHousing: 1e9, HousingCapacity: 1e9, HousingToAmbient: 1}},
	{"time constants equal after rounding", Thermal{WindingCapacity: 1, WindingToHousing: 1e34, HousingCapacity: 1e34, HousingToAmbient: 1}},
}

// rk4Thermal integrates Deriv over t in n classical Runge–Kutta steps (RK4,
// e.g. Press et al., Numerical Recipes, 3rd ed., 17.1).
func rk4Thermal(th Thermal, tw, thh, p, ta, t float64, n int) (float64, float64) {
	h := t / float64(n)
	for range n {
		k1w, k1h := th.Deriv(tw, thh, p, ta)
		k2w, k2h := th.Deriv(tw+0.5*h*k1w, thh+0.5*h*k1h, p, ta)
		k3w, k3h := th.Deriv(tw+0.5*h*k2w, thh+0.5*h*k2h, p, ta)
		k4w, k4h := th.Deriv(tw+h*k3w, thh+h*k3h, p, ta)
		tw += h / 6 * (k1w + 2*k2w + 2*k3w + k4w)
		thh += h / 6 * (k1h + 2*k2h + 2*k3h + k4h)
	}
	return tw, thh
}

func TestThermalFirstOrderStep(t *testing.T) {
	t.Parallel()
	th := refOneNode(t)
	R, C := 60/refPower, 300/(60/refPower)
	if relErr(th.WindingToAmbient, R) > 1e-15 || relErr(th.WindingCapacity, C) > 1e-15 {
		t.Fatalf("FromRating(60, 12, 300) = %+v, want R = %g K/W, C = %g J/K", th, R, C)
	}
	tau, fast := th.TimeConstants()
	if relErr(tau, 300) > 1e-15 || fast != 0 {
		t.Errorf("%+v.TimeConstants() = %g, %g, want 300, 0", th, tau, fast)
	}
	if got := th.SteadyRise(refPower); relErr(got, 60) > 1e-15 {
		t.Errorf("SteadyRise(%g) = %g, want 60 K", refPower, got)
	}
	// From 3 s = τ/100 up: below that the rise is smaller than 1e12 ulps
	// of the absolute temperature, so 1e-12 relative is beyond rounding.
	for _, dt := range []float64{3, 30, 150, 300, 900, 3000, 6000} {
		// source: first-order RC thermal network, lumped-capacitance model
		// (Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
		// ch. 5): T(t) = Ta + P·R·(1 − e^(−t/τ)) from Ta.
		want := refPower * R * (1 - math.Exp(-dt/tau))
		tw, thh := th.Advance(refAmbient, 123, refPower, refAmbient, dt)
		if e := relErr(tw-refAmbient, want); e > 1e-12 {
			t.Errorf("Advance(Ta, dt = %g s) rise = %.15g K, want %.15g K (rel err %.2g)", dt, tw-refAmbient, want, e)
		}
		if thh != 123 {
			t.Errorf("one-node Advance changed the housing temperature: %g", thh)
		}
	}
}

func TestThermalDerivMatchesAdvance(t *testing.T) {
	t.Parallel()
	// source: definition of the derivative; the central difference of the
	// exact solution, (T(t+h) − T(t−h))/(2h), has error h²·T'''/6.
	nets := []struct {
		name string
		th   Thermal
	}{{"one node", refOneNode(t)}}
	nets = append(nets, refTwoNodes[0])
	for _, n := range nets {
		slow, fast := n.th.TimeConstants()
		if fast == 0 {
			fast = slow
		}
		h := 1e-3 * fast
		for _, t0 := range []float64{0.5 * fast, 2 * fast, 0.3 * slow, slow} {
			tw, thh := n.th.Advance(refAmbient+5, refAmbient, refPower, refAmbient, t0)
			pw, ph := n.th.Advance(refAmbient+5, refAmbient, refPower, refAmbient, t0+h)
			mw, mh := n.th.Advance(refAmbient+5, refAmbient, refPower, refAmbient, t0-h)
			dw, dh := n.th.Deriv(tw, thh, refPower, refAmbient)
			scale := n.th.SteadyRise(refPower) / fast // K/s
			if e := math.Abs((pw-mw)/(2*h) - dw); e > 1e-6*scale {
				t.Errorf("%s t = %g s: dTw/dt = %g K/s, finite difference %g K/s", n.name, t0, dw, (pw-mw)/(2*h))
			}
			if e := math.Abs((ph-mh)/(2*h) - dh); e > 1e-6*scale {
				t.Errorf("%s t = %g s: dTh/dt = %g K/s, finite difference %g K/s", n.name, t0, dh, (ph-mh)/(2*h))
			}
		}
	}
}

func TestThermalPeriodicSquareWave(t *testing.T) {
	t.Parallel()
	th := refOneNode(t)
	tau, _ := th.TimeConstants()
	R := th.WindingToAmbient
	const tOn, tOff = 120.0, 360.0
	period := tOn + tOff
	// source: periodic steady state of the first-order lumped-capacitance
	// model (Incropera & DeWitt, ch. 5) under a square wave, summing the
	// geometric series of the on/off responses:
	// Tmax − Ta = P·R·(1 − e^(−ton/τ))/(1 − e^(−T/τ)),
	// Tmin − Ta = (Tmax − Ta)·e^(−toff/τ).
	wantMax := refPower * R * (1 - math.Exp(-tOn/tau)) / (1 - math.Exp(-period/tau))
	wantMin := wantMax * math.Exp(-tOff/tau)
	tw := refAmbient
	var hi, lo float64
	for range 200 { // 200 periods = 320 τ: the start has decayed by e^(−320)
		tw, _ = th.Advance(tw, 0, refPower, refAmbient, tOn)
		hi = tw
		tw, _ = th.Advance(tw, 0, 0, refAmbient, tOff)
		lo = tw
	}
	if e := relErr(hi-refAmbient, wantMax); e > 1e-9 {
		t.Errorf("periodic Tmax − Ta = %.12g K, want %.12g K (rel err %.2g)", hi-refAmbient, wantMax, e)
	}
	if e := relErr(lo-refAmbient, wantMin); e > 1e-9 {
		t.Errorf("periodic Tmin − Ta = %.12g K, want %.12g K (rel err %.2g)", lo-refAmbient, wantMin, e)
	}
}

func TestThermalTwoNodeMatchesRK4(t *testing.T) {
	t.Parallel()
	for _, n := range refTwoNodes {
		if err := n.th.Validate(); err != nil {
			t.Fatalf("%s: %v", n.name, err)
		}
		slow, fast := n.th.TimeConstants()
		rise := n.th.SteadyRise(refPower)
		starts := [][2]float64{{refAmbient, refAmbient}, {refAmbient + 1.5*rise, refAmbient + 0.2*rise}}
		for _, s := range starts {
			for _, dt := range []float64{0.1 * fast, fast, 0.5 * slow, 2 * slow} {
				// source: classical RK4 integration of the network
				// equations (Deriv) with step ≤ τfast/2000, global error
				// O(h⁴), far below the tolerance.
				steps := int(math.Ceil(dt / (fast / 2000)))
				ww, wh := rk4Thermal(n.th, s[0], s[1], refPower, refAmbient, dt, steps)
				gw, gh := n.th.Advance(s[0], s[1], refPower, refAmbient, dt)
				if e := math.Abs(gw-ww) / rise; e > 1e-9 {
					t.Errorf("%s from %v, dt = %g s: Tw = %.12g K, RK4 %.12g K (err %.2g of the rise)", n.name, s, dt, gw, ww, e)
				}
				if e := math.Abs(gh-wh) / rise; e > 1e-9 {
					t.Errorf("%s from %v, dt = %g s: Th = %.12g K, RK4 %.12g K (err %.2g of the rise)", n.name, s, dt, gh, wh, e)
				}
			}
		}
	}
}

func TestThermalTwoNodeSteadyState(t *testing.T) {
	t.Parallel()
	for _, n := range refTwoNodes {
		slow, _ := n.th.TimeConstants()
		// source: steady state of the RC ladder: the series resistances
		// carry all of P, Tw − Ta = P·(Rwh + Rha), Th − Ta = P·Rha.
		wantW := refPower * (n.th.WindingToHousing + n.th.HousingToAmbient)
		wantH := refPower * n.th.HousingToAmbient
		if got := n.th.SteadyRise(refPower); relErr(got, wantW) > 1e-15 {
			t.Errorf("%s: SteadyRise = %g K, want %g K", n.name, got, wantW)
		}
		for _, dt := range []float64{60 * slow, 1e6 * slow, math.Inf(1)} {
			tw, thh := n.th.Advance(refAmbient, refAmbient, refPower, refAmbient, dt)
			if relErr(tw-refAmbient, wantW) > 1e-12 || relErr(thh-refAmbient, wantH) > 1e-9 {
				t.Errorf("%s: Advance(dt = %g s) rises = %.15g, %.15g K, want %.15g, %.15g K", n.name, dt, tw-refAmbient, thh-refAmbient, wantW, wantH)
			}
			dw, dh := n.th.Deriv(refAmbient+wantW, refAmbient+wantH, refPower, refAmbient)
			if math.Abs(dw) > 1e-12*wantW/slow || math.Abs(dh) > 1e-12*wantW/slow {
				t.Errorf("%s: Deriv at the steady state = %g, %g K/s, want 0", n.name, dw, dh)
			}
		}
	}
}

func TestThermalTimeConstantsMatchGonumEigen(t *testing.T) {
	t.Parallel()
	for _, n := range refTwoNodes {
		th := n.th
		// source: general-purpose eigenvalue solver (gonum/mat Eigen,
		// LAPACK dgeev) on the network's system matrix; τ = −1/λ.
		a := mat.NewDense(2, 2, []float64{
			-1 / (th.WindingCapacity * th.WindingToHousing), 1 / (th.WindingCapacity * th.WindingToHousing),
			1 / (th.HousingCapacity * th.WindingToHousing), -(1/th.WindingToHousing + 1/th.HousingToAmbient) / th.HousingCapacity,
		})
		var eig mat.Eigen
		if !eig.Factorize(a, mat.EigenNone) {
			t.Fatalf("%s: gonum Eigen failed", n.name)
		}
		var taus []float64
		for _, v := range eig.Values(nil) {
			if imag(v) != 0 || real(v) >= 0 {
				t.Fatalf("%s: eigenvalue %v, want real and negative", n.name, v)
			}
			taus = append(taus, -1/real(v))
		}
		sort.Sort(sort.Reverse(sort.Float64Slice(taus)))
		slow, fast := th.TimeConstants()
		if relErr(slow, taus[0]) > 1e-9 || relErr(fast, taus[1]) > 1e-9 {
			t.Errorf("%s: TimeConstants = %.15g, %.15g s, gonum eigenvalues give %.15g, %.15g s", n.name, slow, fast, taus[0], taus[1])
		}
	}
	// source: the housing is 0 for the one-node model, whose only τ is R·C.
	th := Thermal{WindingCapacity: 40, WindingToAmbient: 2.5}
	if slow, fast := th.TimeConstants(); slow != 100 || fast != 0 {
		t.Errorf("%+v.TimeConstants() = %g, %g, want 100, 0", th, slow, fast)
	}
}

func TestThermalAdvanceComposes(t *testing.T) {
	t.Parallel()
	// source: the exact solution of a time-invariant linear ODE is a
	// semigroup: advancing by a then b equals advancing by a + b.
	nets := []Thermal{refOneNode(t)}
	for _, n := range refTwoNodes {
		nets = append(nets, n.th)
	}
	for _, th := range nets {
		slow, _ := th.TimeConstants()
		a, b := 0.37*slow, 0.81*slow
		w1, h1 := th.Advance(refAmbient+3, refAmbient+1, refPower, refAmbient, a)
		w1, h1 = th.Advance(w1, h1, refPower, refAmbient, b)
		w2, h2 := th.Advance(refAmbient+3, refAmbient+1, refPower, refAmbient, a+b)
		rise := th.SteadyRise(refPower)
		if math.Abs(w1-w2) > 1e-12*rise || math.Abs(h1-h2) > 1e-12*rise {
			t.Errorf("%+v: Advance(a)∘Advance(b) = %.15g, %.15g K, Advance(a+b) = %.15g, %.15g K", th, w1, h1, w2, h2)
		}
	}
}

func TestThermalAdvanceExtremeSteps(t *testing.T) {
	t.Parallel()
	nets := []Thermal{refOneNode(t)}
	for _, n := range refTwoNodes {
		nets = append(nets, n.th)
	}
	for _, th := range nets {
		for _, dt := range []float64{0, -5, math.NaN(), 1e-300, 5e-324, 1e-9, 1e9, 1e300, math.Inf(1)} {
			tw, thh := th.Advance(refAmbient+40, refAmbient+10, refPower, refAmbient, dt)
			if math.IsNaN(tw) || math.IsNaN(thh) || math.IsInf(tw, 0) || math.IsInf(thh, 0) {
				t.Errorf("%+v.Advance(dt = %g) = %g, %g, want finite", th, dt, tw, thh)
			}
			// Not a step (dt ≤ 0 or NaN) or a vanishing one: the start.
			if !(dt > 1e-200) && (tw != refAmbient+40 || thh != refAmbient+10) {
				t.Errorf("%+v.Advance(dt = %g) = %g, %g, want the start %g, %g", th, dt, tw, thh, refAmbient+40, refAmbient+10)
			}
		}
		// A huge step lands on the steady state.
		tw, _ := th.Advance(refAmbient+40, refAmbient+10, refPower, refAmbient, 1e300)
		if relErr(tw-refAmbient, th.SteadyRise(refPower)) > 1e-12 {
			t.Errorf("%+v.Advance(dt = 1e300) rise = %g K, want %g K", th, tw-refAmbient, th.SteadyRise(refPower))
		}
	}
}

func TestThermalHotPathAllocatesNothing(t *testing.T) {
	th1, th2 := refOneNode(t), refTwoNodes[0].th
	var sink float64
	allocs := testing.AllocsPerRun(100, func() {
		for _, th := range [...]Thermal{th1, th2} {
			a, b := th.Advance(320, 300, refPower, refAmbient, 7)
			c, d := th.Deriv(a, b, refPower, refAmbient)
			e, f := th.TimeConstants()
			sink += a + b + c + d + e + f + th.SteadyRise(refPower)
		}
	})
	if allocs != 0 {
		t.Errorf("Advance, Deriv, TimeConstants, SteadyRise allocate %g times per run, want 0 (sink %g)", allocs, sink)
	}
}

func TestResistanceMethodTemperatureMatchesCoil(t *testing.T) {
	t.Parallel()
	const theta1 = 20.0 // °C
	t1 := theta1 + celsius0
	// source: IEEE Std 112 / IEEE Std 119 resistance method with k = 234.5
	// °C is the linear law of IEC 60028 with α = 1/(k + θ1) (algebra of the
	// two forms): the two must agree to rounding.
	exact := Coil{Resistance: 7.5, RefTemperature: t1, TempCoeff: 1 / (234.5 + theta1)}
	// source: IEC 60028, α20 = 0.00393/K means k = 1/α20 − 20 ≈ 234.45 °C;
	// the forms differ by (254.5·α20 − 1)(θ − 20) ≤ 0.03 K over 20–180 °C,
	// checked within 0.05 K.
	iec := Coil{Resistance: 7.5, RefTemperature: t1, TempCoeff: CopperTempCoeff}
	for theta := 20.0; theta <= 180; theta += 5 {
		T := theta + celsius0
		if got := ResistanceMethodTemperature(exact.Resistance, t1, exact.ResistanceAt(T)); math.Abs(got-T) > 1e-9 {
			t.Errorf("resistance method with α = 1/254.5 at %g °C: %.12g K, want %.12g K", theta, got, T)
		}
		if got := ResistanceMethodTemperature(iec.Resistance, t1, iec.ResistanceAt(T)); math.Abs(got-T) > 0.05 {
			t.Errorf("resistance method with α20 = 0.00393 at %g °C: %.6g K, want %.6g K within 0.05 K", theta, got, T)
		}
	}
	// source: IEEE Std 112 worked by hand: R2/R1 = (234.5 + 100)/(234.5 + 25)
	// from 25 °C gives 100 °C.
	if got := ResistanceMethodTemperature(259.5, 25+celsius0, 334.5); math.Abs(got-(100+celsius0)) > 1e-9 {
		t.Errorf("ResistanceMethodTemperature(259.5, 25 °C, 334.5) = %g K, want %g K", got, 100+celsius0)
	}
}

func TestInsulationClassLimit(t *testing.T) {
	t.Parallel()
	// source: IEC 60085 thermal classes (A 105, E 120, B 130, F 155, H 180,
	// N 200, R 220 °C).
	want := map[string]float64{"A": 105, "E": 120, "B": 130, "F": 155, "H": 180, "N": 200, "R": 220, "f": 155, " h ": 180, "155": 155}
	for class, c := range want {
		got, err := InsulationClassLimit(class)
		if err != nil || got != c+celsius0 {
			t.Errorf("InsulationClassLimit(%q) = %g, %v, want %g K", class, got, err, c+celsius0)
		}
	}
	for _, class := range []string{"", "Z", "C", "FF", "150", "class F"} {
		if got, err := InsulationClassLimit(class); err == nil || !strings.HasPrefix(err.Error(), "magnet: ") || got != 0 {
			t.Errorf("InsulationClassLimit(%q) = %g, %v, want 0 and a \"magnet: \" error", class, got, err)
		}
	}
}

func TestFromSurface(t *testing.T) {
	t.Parallel()
	// source: Newton's law of cooling, R = 1/(h·A) (Incropera & DeWitt,
	// ch. 1): 12 W/(m²·K) on 0.02 m² is 1/0.24 K/W.
	th, err := FromSurface(0.02, 12, 80)
	if err != nil {
		t.Fatal(err)
	}
	if relErr(th.WindingToAmbient, 1/0.24) > 1e-15 || th.WindingCapacity != 80 || th.TwoNode() {
		t.Errorf("FromSurface(0.02, 12, 80) = %+v, want R = %g K/W, C = 80 J/K, one node", th, 1/0.24)
	}
}

func TestThermalConstructorErrors(t *testing.T) {
	t.Parallel()
	inf, nan := math.Inf(1), math.NaN()
	ratings := []struct {
		rise, power, tau float64
		want             string
	}{
		{0, 1, 1, "rise"}, {-1, 1, 1, "rise"}, {nan, 1, 1, "rise"}, {inf, 1, 1, "rise"},
		{1, 0, 1, "power"}, {1, nan, 1, "power"},
		{1, 1, 0, "time constant"}, {1, 1, inf, "time constant"},
		{1e300, 1e-300, 1, "unusable"}, // R overflows
		{1e-300, 1e300, 1e300, "unusable"},
	}
	for _, r := range ratings {
		if _, err := FromRating(r.rise, r.power, r.tau); err == nil || !strings.HasPrefix(err.Error(), "magnet: ") || !strings.Contains(err.Error(), r.want) {
			t.Errorf("FromRating(%g, %g, %g) = %v, want a \"magnet: \" error about %s", r.rise, r.power, r.tau, err, r.want)
		}
	}
	surfaces := []struct {
		area, h, c float64
		want       string
	}{
		{0, 10, 1, "area"}, {nan, 10, 1, "area"}, {1, -10, 1, "heat-transfer"}, {1, inf, 1, "heat-transfer"},
		{1, 10, 0, "capacity"}, {1e-200, 1e-200, 1, "unusable"},
	}
	for _, s := range surfaces {
		if _, err := FromSurface(s.area, s.h, s.c); err == nil || !strings.HasPrefix(err.Error(), "magnet: ") || !strings.Contains(err.Error(), s.want) {
			t.Errorf("FromSurface(%g, %g, %g) = %v, want a \"magnet: \" error about %s", s.area, s.h, s.c, err, s.want)
		}
	}
}

func TestThermalValidate(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		th   Thermal
		want string // "" for no error
	}{
		{"one node", Thermal{WindingCapacity: 50, WindingToAmbient: 3}, ""},
		{"two nodes", refTwoNodes[0].th, ""},
		{"zero", Thermal{}, "winding capacity"},
		{"NaN capacity", Thermal{WindingCapacity: math.NaN(), WindingToAmbient: 3}, "winding capacity"},
		{"negative housing capacity", Thermal{WindingCapacity: 50, WindingToAmbient: 3, HousingCapacity: -1}, "housing capacity"},
		{"infinite housing capacity", Thermal{WindingCapacity: 50, WindingToHousing: 1, HousingCapacity: math.Inf(1), HousingToAmbient: 1}, "housing capacity"},
		{"one node no resistance", Thermal{WindingCapacity: 50}, "winding-to-ambient"},
		{"one node with ladder resistances", Thermal{WindingCapacity: 50, WindingToAmbient: 3, WindingToHousing: 1}, "one-node"},
		{"two nodes no Rwh", Thermal{WindingCapacity: 50, HousingCapacity: 300, HousingToAmbient: 2}, "winding-to-housing"},
		{"two nodes NaN Rha", Thermal{WindingCapacity: 50, WindingToHousing: 1, HousingCapacity: 300, HousingToAmbient: math.NaN()}, "housing-to-ambient"},
		{"two nodes with Rwa", Thermal{WindingCapacity: 50, WindingToAmbient: 3, WindingToHousing: 1, HousingCapacity: 300, HousingToAmbient: 2}, "two-node"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			err := tt.th.Validate()
			if tt.want == "" {
				if err != nil {
					t.Errorf("%+v.Validate() = %v, want nil", tt.th, err)
				}
				return
			}
			if err == nil || !strings.HasPrefix(err.Error(), "magnet: ") || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("%+v.Validate() = %v, want a \"magnet: \" error about %s", tt.th, err, tt.want)
			}
		})
	}
}

func BenchmarkThermalAdvanceTwoNode(b *testing.B) {
	th := refTwoNodes[0].th
	tw, thh := refAmbient, refAmbient
	for b.Loop() {
		tw, thh = th.Advance(tw, thh, refPower, refAmbient, 0.5)
	}
	_ = tw + thh
}
