package plot

import (
	"testing"

	"gonum.org/v1/plot/vg"
)

// TestPlaceLabelsNearTheirPoints: on a crowded curve of dots (the clamp
// comparison's shape) every label sits within three gaps of its point,
// inside the bounds, and no two labels overlap.
func TestPlaceLabelsNearTheirPoints(t *testing.T) {
	t.Parallel()
	const n = 30
	radius := vg.Points(3.5)
	bounds := vg.Rectangle{Min: vg.Point{X: 0, Y: 0}, Max: vg.Point{X: 500, Y: 300}}
	var at, sizes []vg.Point
	for k := 0; k < n; k++ {
		// a falling curve of dots 10 pt apart, all labelled
		x := vg.Length(60 + 12*k)
		y := vg.Length(260 - 200*float64(k)/(float64(k)+6))
		at = append(at, vg.Point{X: x, Y: y})
		sizes = append(sizes, vg.Point{X: 60, Y: 9})
	}
	boxes := placeLabels(at, sizes, bounds, radius)
	limit := 3 * labelGap(radius) * 1.12 // the diagonal positions sit at (d, d/2): √1.25 ≈ 1.12 d
	for k, b := range boxes {
		if d := rectDistance(b, at[k]); d > limit+1e-9 {
			t.Errorf("label %d is %.1f pt from its point (limit %.1f pt)", k, d, limit)
		}
		if b.Min.X < bounds.Min.X || b.Max.X > bounds.Max.X || b.Min.Y < bounds.Min.Y || b.Max.Y > bounds.Max.Y {
			t.Errorf("label %d outside the bounds: %+v", k, b)
		}
	}
	// With room to spare (every third point labelled) none overlap a label
	// or a dot.
	for k := range sizes {
		if k%3 != 0 {
			sizes[k] = vg.Point{}
		}
	}
	boxes = placeLabels(at, sizes, bounds, radius)
	for k, b := range boxes {
		if sizes[k].X == 0 {
			continue
		}
		for j, o := range boxes {
			if j != k && sizes[j].X != 0 && overlapArea(b, o) > 0 {
				t.Errorf("labels %d and %d overlap", k, j)
			}
		}
		for j, p := range at {
			dot := vg.Rectangle{Min: vg.Point{X: p.X - radius, Y: p.Y - radius}, Max: vg.Point{X: p.X + radius, Y: p.Y + radius}}
			if overlapArea(b, dot) > 0 {
				t.Errorf("label %d covers dot %d", k, j)
			}
		}
	}
}
