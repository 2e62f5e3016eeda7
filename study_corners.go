package coilkick

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"

	"coilkick/mech"
)

// Tolerances are the spreads of a design's parameters (fractions, K).
type Tolerances struct {
	Supply         float64 // ± fraction of the supply voltage
	CoilResistance float64 // ± fraction of the coil resistance
	Spring         float64 // ± fraction of spring preload and rate
	Load           float64 // ± fraction of the load (pressure, constant force)
	Ambient        float64 // ± K on the winding temperature
	// HotWinding (K) is the winding temperature of the hot corner, as it
	// stands: it already includes the worst ambient (no tolerance is added
	// to it), and `solve` uses the same temperature. 0: the hot corner is
	// the run's temperature + Ambient.
	HotWinding float64
}

// ColdWinding returns the winding temperature of the cold corner (K): the
// run's temperature less the ambient tolerance.
func (tol Tolerances) ColdWinding(md *Model) float64 { return md.Temperature - tol.Ambient }

// HotCorner returns the winding temperature of the hot corner (K):
// HotWinding when given, else the run's temperature plus the ambient
// tolerance.
func (tol Tolerances) HotCorner(md *Model) float64 {
	if tol.HotWinding > 0 {
		return tol.HotWinding
	}
	return md.Temperature + tol.Ambient
}

// Corner is one combination of parameter extremes.
type Corner struct {
	Supply, Resistance, Spring, Load float64 // signed fractions applied
	Temperature                      float64 // K, winding
	Label                            string
}

// CornerCheck is the worst case of one check over the corners.
type CornerCheck struct {
	Name     string
	Unit     string
	Limit    float64
	Min      bool    // the limit is a minimum
	Worst    float64 // the worst value (meaningless when !Happened)
	Happened bool    // false: at the worst corner the figure did not exist (did not pull in, say)
	Corner   string  // label of the corner that produced the worst value
	// Tied: how many other corners share the worst value (within
	// LimitRelTol, or the figure not happening there either); Corner is the
	// first of them in corner order.
	Tied    int
	Pass    bool     // every corner where the check applies passes
	Failing []string // labels of the failing corners
	// NotApplicable: corners where the check does not apply (release after
	// a drop-out, say).
	NotApplicable int
}

// CornerResult is a worst-case study.
type CornerResult struct {
	Corners []Corner
	Checks  []CornerCheck
	// Monte Carlo yield (fraction of samples passing every check); Samples 0 when not run.
	Samples int
	Seed    uint64
	Yield   float64
	// YieldLow, YieldHigh: the 95 % Wilson score interval of the yield
	// (Wilson, J. Amer. Statist. Assoc. 22, 209–212, 1927).
	YieldLow, YieldHigh float64
}

// FailingCorners returns the number of corners that fail some check.
func (r *CornerResult) FailingCorners() int {
	failing := map[string]bool{}
	for _, ch := range r.Checks {
		for _, c := range ch.Failing {
			failing[c] = true
		}
	}
	return len(failing)
}

// WilsonInterval returns the Wilson score interval of a binomial
// proportion, k successes in n trials, at the normal quantile z (1.96 for
// 95 %): (p + z²/2n ± z·√(p(1−p)/n + z²/4n²)) / (1 + z²/n) (Wilson 1927;
// Newcombe, Statistics in Medicine 17, 857–872, 1998, method 3).
func WilsonInterval(k, n int, z float64) (lo, hi float64) {
	if n <= 0 {
		return 0, 1
	}
	nf := float64(n)
	p := float64(k) / nf
	den := 1 + z*z/nf
	mid := (p + z*z/(2*nf)) / den
	half := z * math.Sqrt(p*(1-p)/nf+z*z/(4*nf*nf)) / den
	return math.Max(0, mid-half), math.Min(1, mid+half)
}

// worse reports whether check value b is worse than the present worst a:
// a figure that did not happen is worse than any that did; otherwise the
// larger value of a maximum (the smaller of a minimum) is worse, values
// within LimitRelTol of each other counting as equal (a tie, kept by the
// earlier corner).
func worse(aHappened bool, a float64, bHappened bool, b float64, min bool) (worse, tie bool) {
	switch {
	case !aHappened && !bHappened:
		return false, true
	case !bHappened:
		return true, false
	case !aHappened:
		return false, false
	}
	tol := LimitRelTol * math.Max(math.Abs(a), math.Abs(b))
	if math.Abs(a-b) <= tol {
		return false, true
	}
	if min {
		return b < a, false
	}
	return b > a, false
}

// scaledLoad multiplies a load by a factor.
type scaledLoad struct {
	mech.Load
	k float64
}

func (s scaledLoad) Force(x float64) float64 { return s.k * s.Load.Force(x) }

// Breaks returns the scaled load's break gaps (mech.PiecewiseLoad).
func (s scaledLoad) Breaks() []float64 { return mech.LoadBreaks(s.Load) }

// ForceOn returns the scaled load's force on a piece (mech.PiecewiseLoad).
func (s scaledLoad) ForceOn(x, ref float64) float64 { return s.k * mech.LoadForceOn(s.Load, x, ref) }

// apply returns the model and options of a corner.
func applyCorner(md *Model, c Corner) (*Model, *Options) {
	v := *md
	v.Coil.Resistance *= 1 + c.Resistance
	v.Plunger.Spring.Preload *= 1 + c.Spring
	v.Plunger.Spring.Rate *= 1 + c.Spring
	if v.Plunger.Load != nil {
		v.Plunger.Load = scaledLoad{v.Plunger.Load, 1 + c.Load}
	}
	return &v, &Options{NoTrace: true, SupplyVoltage: md.Drive.Supply.Voltage * (1 + c.Supply), FixedTemperature: c.Temperature}
}

func cornerLabel(c Corner, tol Tolerances) string {
	var parts []string
	pct := func(name string, f, t float64) {
		if t > 0 {
			parts = append(parts, fmt.Sprintf("%s %+.0f %%", name, 100*f))
		}
	}
	pct("supply", c.Supply, tol.Supply)
	pct("R", c.Resistance, tol.CoilResistance)
	pct("spring", c.Spring, tol.Spring)
	pct("load", c.Load, tol.Load)
	parts = append(parts, fmt.Sprintf("winding %.0f degC", c.Temperature-273.15))
	return strings.Join(parts, ", ")
}

// corners lists the full factorial of the toleranced parameters' extremes
// and the cold and hot winding.
func corners(md *Model, tol Tolerances) []Corner {
	ext := func(t float64) []float64 {
		if t > 0 {
			return []float64{-t, t}
		}
		return []float64{0}
	}
	temps := []float64{tol.ColdWinding(md)}
	if hot := tol.HotCorner(md); hot != temps[0] {
		temps = append(temps, hot)
	}
	var out []Corner
	for _, s := range ext(tol.Supply) {
		for _, r := range ext(tol.CoilResistance) {
			for _, k := range ext(tol.Spring) {
				for _, l := range ext(tol.Load) {
					for _, t := range temps {
						c := Corner{Supply: s, Resistance: r, Spring: k, Load: l, Temperature: t}
						c.Label = cornerLabel(c, tol)
						out = append(out, c)
					}
				}
			}
		}
	}
	return out
}

// Corners evaluates every corner of the tolerances and reports, for each
// rating and requirement of the scenario, the worst value and the corner
// that produced it. samples > 0 adds a Monte Carlo yield estimate with
// parameters drawn uniformly within their tolerances (seeded, repeatable).
func Corners(md *Model, tol Tolerances, samples int, seed uint64) (*CornerResult, error) {
	if tol.Supply < 0 || tol.CoilResistance < 0 || tol.Spring < 0 || tol.Load < 0 || tol.Ambient < 0 {
		return nil, errors.New("coilkick: tolerances must not be negative")
	}
	res := &CornerResult{Corners: corners(md, tol), Samples: samples, Seed: seed}
	index := map[string]int{}
	for _, c := range res.Corners {
		v, opt := applyCorner(md, c)
		r, err := Simulate(v, opt)
		if err != nil {
			return nil, fmt.Errorf("corner %s: %w", c.Label, err)
		}
		as := v.Assess(r)
		for _, ch := range as.Checks {
			k, ok := index[ch.Name]
			if !ok {
				k = len(res.Checks)
				index[ch.Name] = k
				res.Checks = append(res.Checks, CornerCheck{Name: ch.Name, Unit: ch.Unit, Limit: ch.Limit, Min: ch.Min, Pass: true})
			}
			res.Checks[k].add(ch, c.Label)
		}
	}
	if samples > 0 {
		rng := rand.New(rand.NewPCG(seed, 0x636f696c6b69636b))
		pass := 0
		u := func(t float64) float64 { return t * (2*rng.Float64() - 1) }
		// The winding temperature is uniform between the cold and hot corners.
		lo, hi := tol.ColdWinding(md), tol.HotCorner(md)
		for n := 0; n < samples; n++ {
			c := Corner{Supply: u(tol.Supply), Resistance: u(tol.CoilResistance), Spring: u(tol.Spring), Load: u(tol.Load),
				Temperature: lo + (hi-lo)*rng.Float64()}
			v, opt := applyCorner(md, c)
			r, err := Simulate(v, opt)
			if err != nil {
				return nil, err
			}
			if as := v.Assess(r); !as.Failed() {
				pass++
			}
		}
		res.Yield = float64(pass) / float64(samples)
		res.YieldLow, res.YieldHigh = WilsonInterval(pass, samples, 1.959963984540054)
	}
	return res, nil
}

// add folds the check of one corner into the worst case.
func (cc *CornerCheck) add(ch Check, label string) {
	if ch.NotApplicable != "" {
		cc.NotApplicable++
		return
	}
	if !ch.Pass {
		cc.Pass = false
		cc.Failing = append(cc.Failing, label)
	}
	if cc.Corner == "" {
		cc.Worst, cc.Happened, cc.Corner = ch.Value, ch.Happened, label
		return
	}
	w, tie := worse(cc.Happened, cc.Worst, ch.Happened, ch.Value, ch.Min)
	switch {
	case w:
		cc.Worst, cc.Happened, cc.Corner, cc.Tied = ch.Value, ch.Happened, label, 0
	case tie:
		cc.Tied++
	}
}
