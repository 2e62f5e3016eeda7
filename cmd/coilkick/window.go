package main

import (
	"fmt"

	"coilkick"
)

// cropResult returns a copy of res whose trace and events are limited to
// the window from–to (s; plotWindow reads it from --plot-window "win").
func cropResult(res *coilkick.Result, from, to float64, win string) (*coilkick.Result, error) {
	out := *res
	tr := &res.Trace
	var ct coilkick.Trace
	for k, t := range tr.Time {
		if t < from || t > to {
			continue
		}
		ct.Time = append(ct.Time, t)
		ct.Current = append(ct.Current, tr.Current[k])
		ct.CoilVoltage = append(ct.CoilVoltage, tr.CoilVoltage[k])
		ct.SwitchVoltage = append(ct.SwitchVoltage, tr.SwitchVoltage[k])
		ct.Gap = append(ct.Gap, tr.Gap[k])
		ct.Velocity = append(ct.Velocity, tr.Velocity[k])
		ct.MagneticForce = append(ct.MagneticForce, tr.MagneticForce[k])
		ct.PassiveForce = append(ct.PassiveForce, tr.PassiveForce[k])
		ct.WindingTemperature = append(ct.WindingTemperature, tr.WindingTemperature[k])
	}
	if len(ct.Time) < 2 {
		return nil, fmt.Errorf("--plot-window %q holds fewer than 2 samples of the run", win)
	}
	out.Trace = ct
	out.Events = nil
	for _, e := range res.Events {
		if e.Time >= from && e.Time <= to {
			out.Events = append(out.Events, e)
		}
	}
	return &out, nil
}
