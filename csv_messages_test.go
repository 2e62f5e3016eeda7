package coilkick

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestTableMessagesInFileUnits: a flux-linkage table refused through the
// scenario quotes its values in the units the scenario gives the table
// (testdata/good/table.yaml: mA, mm, mWb), not in SI, and its column
// counts characters (the label cell holds a "µ", two bytes).
func TestTableMessagesInFileUnits(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	yaml, err := os.ReadFile(filepath.Join("testdata", "good", "table.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	csv, err := os.ReadFile(filepath.Join("testdata", "good", "table_flux.csv"))
	if err != nil {
		t.Fatal(err)
	}
	const header = "i_mA\\gap_mm,0.1,0.15,0.2,"
	if !strings.Contains(string(csv), header) {
		t.Fatal("testdata/good/table_flux.csv's header changed; update the test")
	}
	bad := strings.Replace(string(csv), header, "i (µA → mA)\\gap_mm,0.1,0.15,0.15,", 1)
	if err := os.WriteFile(filepath.Join(dir, "table_flux.csv"), []byte(bad), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := Parse(yaml, filepath.Join(dir, "table.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	_, err = Build(s)
	// "i (µA → mA)\gap_mm,0.1,0.15," is 28 characters (32 bytes): the
	// third gap starts at character 29.
	want := "table_flux.csv:5:29: gaps must be strictly ascending: gap 3, 0.15 mm, is not above gap 2, 0.15 mm"
	if err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("error = %v, want it to hold %q", err, want)
	}
}

// TestForceCurveMessagesInFileUnits: a force-curve file in mA, mN and mm
// of stroke (or µm of gap, or volts) is refused with its values as the
// file gives them and the column named by its header.
func TestForceCurveMessagesInFileUnits(t *testing.T) {
	t.Parallel()
	const head = "stroke (mm), current (mA), force (mN)\n"
	for _, tc := range []struct{ name, csv, want string }{
		{"current falls", head + "0, 300, 8000\n1.15, 300, 1000\n0, 200, 6000\n1.15, 200, 500\n",
			`curves.csv:4: column 2 "current (mA)": 200 mA falls below the previous curve's 300 mA`},
		{"negative force", head + "0, 200, 8000\n0.5, 200, -3000\n1.15, 200, 1000\n",
			`curves.csv:3: column 3 "force (mN)": force -3000 mN is negative`},
		{"stroke goes back", head + "0, 200, 8000\n0.5, 200, 3000\n0.3, 200, 1000\n",
			`curves.csv:4: column 1 "stroke (mm)": stroke 0.3 mm does not follow 0.5 mm of the previous row (line 3)`},
		{"pull falls", head + "0, 200, 8000\n0.5, 200, 3000\n1.15, 200, 1000\n0, 300, 18000\n0.5, 300, 2000\n1.15, 300, 2500\n",
			"curves.csv:6: at stroke 0.5 mm (gap 0.55 mm) the force 2000 mN at 300 mA is below the 3000 mN at the lower current 200 mA"},
		{"outside the stroke", "gap (µm), current (mA), force (N)\n2000, 200, 8\n3000, 200, 3\n",
			"curves.csv:2-3 (the curve at 200 mA): the curve at 200 mA covers gaps 2000–3000 µm, outside the stroke's gaps 50–1200 µm"},
		{"voltages", "gap (µm), voltage (V), force (N)\n50, 12, 8\n500, 12, 3\n1200, 12, 1\n50, 24, 18\n500, 24, 2\n1200, 24, 2.5\n",
			"curves.csv:6: at gap 500 µm the force 2 N at 24 V (0.3333 A) is below the 3 N at the lower current 12 V (0.1667 A)"},
		{"zero current", "gap (µm), current (mA), force (N)\n50, 0, 8\n500, 0, 3\n",
			`curves.csv:2: column 2 "current (mA)": current must be positive, got 0 mA`},
		{"negative gap", "gap (µm), current (mA), force (N)\n-50, 10, 8\n500, 10, 3\n",
			`curves.csv:2: column 1 "gap (µm)": gap -50 µm is negative`},
	} {
		_, err := LoadModel(irrigationWithCurves(t, tc.csv, "    coil temperature: 20 degC\n"))
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v; want %q", tc.name, err, tc.want)
		}
	}
}
