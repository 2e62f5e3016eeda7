package coilkick

// noteBrake records the soft-landing brake's commands at time t, after the
// controller applied its time events: the switch turned off at the brake's
// start ("brake: switch off") or on again at its end ("brake ends"), with
// the figures of Metrics.Brake.
func (r *run) noteBrake(t float64, y []float64) {
	b := &r.res.Metrics.Brake
	switch t {
	case r.ctl.BrakeStart():
		i := r.current(y)
		*b = BrakeMetrics{Happened: true, Start: t - r.tOn, CurrentAtStart: i, GapAtStart: y[sGap], SpeedAtStart: 0 - y[sVel]} // 0 − v: no −0
		r.note(t, "brake: switch off at %.4g A, gap %.4g mm", i, 1e3*y[sGap])
	case r.ctl.BrakeEnd():
		i := r.current(y)
		b.End, b.Ended, b.CurrentAtEnd = t-r.tOn, true, i
		r.note(t, "brake ends: switch on at %.4g A", i)
	}
}
