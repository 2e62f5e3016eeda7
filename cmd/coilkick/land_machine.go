package main

import (
	"coilkick"
)

// landDoc is the land --json document.
type landDoc struct {
	jsonHeader
	PullInCap          float64          `json:"pull_in_cap_s"`
	CapFromRequirement bool             `json:"cap_from_requirement"`
	TimingMargin       float64          `json:"timing_margin_s"`
	NominalOnly        bool             `json:"nominal_only"`
	UnbrakedPullIn     float64          `json:"unbraked_pull_in_time_s"`
	Bounds             jsonLandBounds   `json:"bounds"`
	Before             jsonLandProfile  `json:"before"`
	After              *jsonLandProfile `json:"after"`
	Feasible           bool             `json:"feasible"`
	YAML               *string          `json:"yaml"`
	Margins            *jsonLandMargins `json:"margins"`
	Runs               []record         `json:"runs"`
	Method             string           `json:"method"`
	Evaluations        int              `json:"evaluations"`
	Simulations        int              `json:"simulations"`
}

// jsonLandMargins are the brake's margins (null: no run failed as far as
// the time could move).
type jsonLandMargins struct {
	AtEarlier  coilkick.Interval `json:"brake_at_earlier_s"`
	AtLater    coilkick.Interval `json:"brake_at_later_s"`
	ForShorter coilkick.Interval `json:"brake_for_shorter_s"`
	ForLonger  coilkick.Interval `json:"brake_for_longer_s"`
}

// jsonLandBounds are the parameters' bounds.
type jsonLandBounds struct {
	AtMin  float64 `json:"brake_at_min_s"`
	AtMax  float64 `json:"brake_at_max_s"`
	ForMin float64 `json:"brake_for_min_s"`
	ForMax float64 `json:"brake_for_max_s"`
}

// jsonLandProfile is a brake (null times: none) and whether every run
// met the constraints with it.
type jsonLandProfile struct {
	BrakeAt  *float64 `json:"brake_at_s"`
	BrakeFor *float64 `json:"brake_for_s"`
	Feasible bool     `json:"every_run_seated_within_cap"`
}

func newJSONLandProfile(p coilkick.LandProfile, feasible bool) jsonLandProfile {
	return jsonLandProfile{BrakeAt: optional(p.BrakeAt, p.BrakeFor > 0), BrakeFor: optional(p.BrakeFor, p.BrakeFor > 0), Feasible: feasible}
}

// landJSON builds the document.
func landJSON(h jsonHeader, res *coilkick.LandResult) landDoc {
	doc := landDoc{jsonHeader: h, PullInCap: res.Cap, CapFromRequirement: res.CapFromRequirement, TimingMargin: res.TimingMargin, NominalOnly: res.NominalOnly,
		UnbrakedPullIn: res.UnbrakedPullIn, Bounds: jsonLandBounds{res.AtMin, res.AtMax, res.ForMin, res.ForMax},
		Before: newJSONLandProfile(res.Before, res.BeforeFeasible), Feasible: res.Feasible, Runs: landRecords(res),
		Method: res.Method, Evaluations: res.Evaluations, Simulations: res.Simulations}
	if res.CornersAfter != nil {
		after := newJSONLandProfile(res.After, res.Feasible)
		doc.After = &after
	}
	if m := res.Margins; m != nil {
		doc.Margins = &jsonLandMargins{m.AtEarlier, m.AtLater, m.ForShorter, m.ForLonger}
	}
	if res.Feasible && res.After.BrakeFor > 0 {
		doc.YAML = text(res.After.YAML(res.Mode))
	}
	return doc
}

// landRecords are the runs: the nominal point, then each corner, before
// and after (after: null when no profile was found).
func landRecords(res *coilkick.LandResult) []record {
	rows := []record{landRecord(nil, res.NominalBefore, landAfter(res, -1), res.Cap)}
	for k := range res.Corners {
		rows = append(rows, landRecord(&res.Corners[k], res.CornersBefore[k], landAfter(res, k), res.Cap))
	}
	return rows
}

// landAfter is the run after at corner k (−1: nominal), nil when none.
func landAfter(res *coilkick.LandResult, k int) *coilkick.LandRun {
	switch {
	case res.CornersAfter == nil:
		return nil
	case k < 0:
		return &res.NominalAfter
	}
	return &res.CornersAfter[k]
}

// landRecord is one run's record: the corner (nil: the nominal point,
// its deviations null), then each figure before and after.
func landRecord(c *coilkick.Corner, before coilkick.LandRun, after *coilkick.LandRun, limit float64) record {
	r := cornerRecord("", c)
	if c == nil {
		r[0].value = "nominal"
	}
	type figure struct {
		key string
		of  func(coilkick.LandRun) any
	}
	for _, f := range []figure{
		{"pull_in_time", func(l coilkick.LandRun) any { return seconds(l.PullIn) }},
		{"impact_speed", func(l coilkick.LandRun) any { return optional(l.ImpactSpeed, l.PullIn.Happened) }},
		{"impact_energy", func(l coilkick.LandRun) any { return optional(l.ImpactEnergy, l.PullIn.Happened) }},
		{"bounces", func(l coilkick.LandRun) any { return l.Bounces }},
		{"dropped_out", func(l coilkick.LandRun) any { return l.DroppedOut }},
		{"meets_cap", func(l coilkick.LandRun) any { return l.Meets(limit) }},
	} {
		unit := map[string]string{"pull_in_time": "_s", "impact_speed": "_m_per_s", "impact_energy": "_J"}[f.key]
		r = append(r, field{f.key + "_before" + unit, f.of(before)})
		var a any
		if after != nil {
			a = f.of(*after)
		}
		r = append(r, field{f.key + "_after" + unit, a})
	}
	return r
}
