package main

import "coilkick"

// signatureDoc is the signature --json document.
type signatureDoc struct {
	jsonHeader
	Sense       jsonSense `json:"sense"`
	NoiseRMS    *float64  `json:"noise_rms_A"`
	NoiseFrom   *string   `json:"noise_from"`
	Window      float64   `json:"window_s"`
	NominalOnly bool      `json:"nominal_only"`
	Points      []record  `json:"points"`
	Detection   record    `json:"detection"`
	Chopping    *jsonChop `json:"chopping"`
	Failures    []string  `json:"requirement_failures"`
	Failed      bool      `json:"failed"`
}

// jsonSense is the sense chain (null: not given or 0, none).
type jsonSense struct {
	Bandwidth      *float64 `json:"bandwidth_Hz"`
	SampleRate     float64  `json:"sample_rate_Hz"`
	Resolution     *float64 `json:"resolution_A"`
	Noise          *float64 `json:"noise_A"`
	Seed           uint64   `json:"seed"`
	RequiredMargin *float64 `json:"required_margin"`
}

// jsonChop is a chopped drive's signature at the nominal point.
type jsonChop struct {
	Regulated bool     `json:"regulated_before_seat"`
	Masked    bool     `json:"masked"`
	FirstOff  *float64 `json:"first_switch_off_s"`
	Before    record   `json:"before_seat"`
	After     record   `json:"after_seat"`
}

func signatureJSON(h jsonHeader, sig *coilkick.Signature) signatureDoc {
	sc := sig.Sense
	doc := signatureDoc{jsonHeader: h, Window: sig.Window, NominalOnly: sig.NominalOnly, Failed: sig.Failed(),
		Sense: jsonSense{Bandwidth: optional(sc.Bandwidth, sc.Bandwidth > 0), SampleRate: sc.SampleRate,
			Resolution: optional(sc.Resolution, sc.Resolution > 0), Noise: optional(sc.Noise, sc.Noise > 0), Seed: sc.Seed,
			RequiredMargin: optional(sc.MinMargin, sc.MinMargin > 0)},
		NoiseRMS: optional(sig.NoiseRMS, sig.NoiseRMS > 0), Points: signatureRecords(sig), Detection: detectionRecord(sig.Detection),
		Failures: append([]string{}, sig.Failures...)}
	switch {
	case sig.NoiseRMS > 0 && sig.FromLSB:
		doc.NoiseFrom = text("quantisation")
	case sig.NoiseRMS > 0:
		doc.NoiseFrom = text("noise")
	}
	if cs := sig.Chop; cs != nil {
		doc.Chopping = &jsonChop{Regulated: cs.Regulated, Masked: cs.Masked, FirstOff: optional(cs.FirstOff, cs.FirstOff > 0),
			Before: chopRecord(cs.Before), After: chopRecord(cs.After)}
	}
	return doc
}

// detectionRecord is the recommended setting (nulls when none).
func detectionRecord(d coilkick.Detection) record {
	return record{{"found", d.Found}, {"threshold_A", optional(d.Threshold, d.Found)},
		{"window_start_s", optional(d.From, d.Found)}, {"window_end_s", optional(d.To, d.Found)},
		{"smallest_dip_A", optional(d.SmallestDip, d.SmallestAt != "")}, {"smallest_dip_at", text(d.SmallestAt)},
		{"largest_blocked_fall_A", optional(d.LargestFalse, d.LargestFalseAt != "")}, {"largest_blocked_fall_at", text(d.LargestFalseAt)},
		{"noise_allowance_A", d.NoiseAllowance}, {"why_none", text(d.Why)}}
}

// chopRecord is the chopping figures of a stretch (nulls without pulses).
func chopRecord(f coilkick.ChopFigures) record {
	ok := f.Cycles > 0
	return record{{"pulses", f.Cycles}, {"pulse_rate_Hz", optional(f.Frequency, f.Cycles >= 2)},
		{"mean_on_time_s", optional(f.OnTime, ok)}, {"mean_rise_slope_A_per_s", optional(f.RiseSlope, ok)}}
}

// signatureRecords are the points, one record each.
func signatureRecords(sig *coilkick.Signature) []record {
	out := make([]record, len(sig.Points))
	for k := range sig.Points {
		out[k] = signatureRecord(sig, &sig.Points[k])
	}
	return out
}

// signatureRecord is one point: its corner, the seat, the dip, the
// margin, the blocked plunger's fall and what the recommended settings
// detect (null where it did not happen or does not apply).
func signatureRecord(sig *coilkick.Signature, p *coilkick.SignaturePoint) record {
	m := p.Moving
	dip := m.Dip.Depth > 0
	found := sig.Detection.Found
	var offset *float64
	if dip && m.PulledIn {
		offset = optional(m.Dip.MinTime-m.PullIn, true)
	}
	r := cornerRecord("", &p.Corner)
	return append(r, record{
		{"seat_time_s", optional(m.PullIn, m.PulledIn)},
		{"dip_max_time_s", optional(m.Dip.MaxTime, dip)}, {"dip_max_current_A", optional(m.Dip.MaxCurrent, dip)},
		{"dip_min_time_s", optional(m.Dip.MinTime, dip)}, {"dip_min_current_A", optional(m.Dip.MinCurrent, dip)},
		{"dip_depth_A", m.Dip.Depth}, {"dip_min_minus_seat_s", offset},
		{"margin", optional(m.Margin, sig.NoiseRMS > 0)},
		{"blocked_fall_A", p.Blocked.Dip.Depth},
		{"detected", optionalBool(m.Detected, found)}, {"detect_time_s", optional(m.DetectTime, found && m.Detected)},
		{"blocked_detected", optionalBool(p.Blocked.Detected, found)},
	}...)
}

// optionalBool returns &v, or nil when ok is false.
func optionalBool(v, ok bool) *bool {
	if !ok {
		return nil
	}
	return &v
}
