package coilkick

import (
	"errors"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"sync"
	"testing"
)

var updateTrace = flag.Bool("update-trace", false, "regenerate testdata/fit/irrigation-scope.csv")

// The synthetic "measured" trace: the irrigation-valve demo with these
// (invented) true parameters, sampled at 20 kHz, with Gaussian noise of
// 1 % of the peak current and a 5 mA offset. It is made by
//
//	go test -run TestSyntheticScopeTrace -update-trace .
const (
	trueR, trueLc, trueLo = 75.0, 0.28, 0.11 // ohm, H, H
	scopePath             = "testdata/fit/irrigation-scope.csv"
	scopeRate             = 20e3 // Hz
	scopeOffset           = 5e-3 // A
)

// trueModel returns the demo with the true parameters.
func trueModel(t testing.TB) *Model {
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for p, v := range map[FitParam]float64{FitResistance: trueR, FitClosedInductance: trueLc, FitOpenInductance: trueLo} {
		if err := setFit(md, p, v); err != nil {
			t.Fatal(err)
		}
	}
	return md
}

// synthTrace samples a model's current with noise (fraction of the peak)
// and an offset, deterministic for a seed.
func synthTrace(t testing.TB, md *Model, noise, offset float64, seed uint64) (*MeasuredTrace, *Result) {
	n := int(md.Timing.End*scopeRate) + 1
	times := make([]float64, n)
	for k := range times {
		times[k] = float64(k) / scopeRate
	}
	res, err := Simulate(md, &Options{NoTrace: true, SampleTimes: times})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 1))
	tr := &MeasuredTrace{Source: "synthetic", Time: times[:len(res.Samples)]}
	for _, i := range res.Samples {
		tr.Current = append(tr.Current, i+offset+noise*res.Metrics.PeakCurrent*rng.NormFloat64())
	}
	return tr, res
}

func TestSyntheticScopeTrace(t *testing.T) {
	md := trueModel(t)
	tr, res := synthTrace(t, md, 0.01, scopeOffset, 2026)
	if *updateTrace {
		var b strings.Builder
		fmt.Fprintf(&b, "# SYNTHETIC bench trace for coilkick's fit demo (invented, not measured).\n")
		fmt.Fprintf(&b, "# Made by: go test -run TestSyntheticScopeTrace -update-trace . (fit_test.go)\n")
		fmt.Fprintf(&b, "# Source: scenarios/irrigation-valve.yaml with R = %g ohm, L closed = %g mH, L open = %g mH;\n", trueR, trueLc*1e3, trueLo*1e3)
		fmt.Fprintf(&b, "# 20 kHz sampling, Gaussian noise 1 %% of peak (seed 2026), offset %g mA.\n", scopeOffset*1e3)
		fmt.Fprintf(&b, "# True pull-in %.6f ms after energize at %g ms.\n", res.Metrics.PullIn.Seconds*1e3, md.Timing.EnergizeAt*1e3)
		fmt.Fprintln(&b, "time (ms), current (mA)")
		for k := range tr.Time {
			fmt.Fprintf(&b, "%.4f, %.4f\n", tr.Time[k]*1e3, tr.Current[k]*1e3)
		}
		if err := os.WriteFile(scopePath, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	// The committed file reads back to the same samples (to its 0.1 µA print).
	f, err := os.Open(scopePath)
	if err != nil {
		t.Fatalf("%v (regenerate with -update-trace)", err)
	}
	defer f.Close()
	got, err := ReadTraceCSV(f, scopePath)
	if err != nil {
		t.Fatal(err)
	}
	if len(got.Time) != len(tr.Time) {
		t.Fatalf("committed trace has %d samples, generator %d", len(got.Time), len(tr.Time))
	}
	for k := range got.Time {
		if math.Abs(got.Current[k]-tr.Current[k]) > 1e-6 || math.Abs(got.Time[k]-tr.Time[k]) > 1e-9 {
			t.Fatalf("sample %d: committed %g A at %g s, generator %g A at %g s", k, got.Current[k], got.Time[k], tr.Current[k], tr.Time[k])
		}
	}
}

func TestFitRecoversParameters(t *testing.T) {
	t.Parallel()
	f, err := os.Open(scopePath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	tr, err := ReadTraceCSV(f, scopePath)
	if err != nil {
		t.Fatal(err)
	}
	md, err := LoadModel("scenarios/irrigation-valve.yaml") // starts from 72 ohm, 300 mH, 120 mH
	if err != nil {
		t.Fatal(err)
	}
	fr, err := Fit(md, tr, []FitParam{FitResistance, FitClosedInductance, FitOpenInductance})
	if err != nil {
		t.Fatal(err)
	}
	// The acceptance bar of the issue: within 3 % of the values that made
	// the trace, and the seat instant within 2 %.
	// And, since the stated σ is meant to be honest, the truth within 3σ
	// of each fitted value (the coverage over many seeds is tested in
	// TestFitCoverage; before the offset and alignment were fitted the
	// resistance was 75.144 ± 0.027 ohm here, 5.3σ off).
	want := map[FitParam]float64{FitResistance: trueR, FitClosedInductance: trueLc, FitOpenInductance: trueLo}
	for _, v := range fr.Values {
		if e := math.Abs(v.Value-want[v.Param]) / want[v.Param]; e > 0.03 {
			t.Errorf("%s: fitted %.5g, true %.5g (%.2g)", v.Param, v.Value, want[v.Param], e)
		}
		if z := (v.Value - want[v.Param]) / v.StdErr; !(math.Abs(z) <= 3) {
			t.Errorf("%s: fitted %.6g ± %.2g, true %.6g: %.1f σ off", v.Param, v.Value, v.StdErr, want[v.Param], z)
		}
		t.Logf("%s: start %.5g, fitted %.5g ± %.2g, true %.5g, sensitivity %.3g", v.Param, v.Start, v.Value, v.StdErr, want[v.Param], v.Sensitivity)
	}
	if z := (fr.Offset - scopeOffset) / fr.OffsetErr; !(math.Abs(z) <= 3) {
		t.Errorf("offset %.4g ± %.2g A, true %g A", fr.Offset, fr.OffsetErr, scopeOffset)
	}
	truth, err := Simulate(trueModel(t), &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	tp := truth.Metrics.PullIn.Seconds
	if e := math.Abs(fr.SeatModel.Seconds-tp) / tp; !fr.SeatModel.Happened || e > 0.02 {
		t.Errorf("fitted seat instant %.5g s, true %.5g s", fr.SeatModel.Seconds, tp)
	}
	if !(fr.RMS < fr.RMSStart) || fr.RMS > 1.5*fr.Noise {
		t.Errorf("RMS error %.3g A (start %.3g A), noise %.3g A", fr.RMS, fr.RMSStart, fr.Noise)
	}
	// The written scenario loads and carries the fitted values.
	out, err := WriteFitted("scenarios/irrigation-valve.yaml", fr)
	if err != nil {
		t.Fatal(err)
	}
	s, err := Parse(out, "scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(s.Coil.Resistance-fr.Values[0].Value)/fr.Values[0].Value > 1e-4 {
		t.Errorf("written resistance %g, fitted %g", s.Coil.Resistance, fr.Values[0].Value)
	}
}

// TestFitCoverage checks that Fit's stated 1σ is honest: over 30
// synthetic traces that differ only in their noise seed (the generator of
// the committed trace: 20 kHz, 1 % Gaussian noise, 5 mA offset; truth
// 75 ohm, 280 mH, 110 mH), the truth lies within the stated 2σ of each
// fitted value, and of the fitted offset and alignment, in at least 26 of
// the 30 fits. A correctly calibrated 2σ interval covers with p = 0.9545;
// Bin(30, 0.9545) falls below 26 with probability 1.1 % (binomial tail,
// computed with Python's math.comb; 50 fits with at least 44 inside, as
// before, gave 0.7 % at 1.7 times the cost), so the bound is loose enough
// not to trip on chance yet far above what the old error bar gave (6 of
// 30 for the resistance). And the σ cannot be inflated to pass: the
// median stated σ must lie between 0.75 and 1.5 times the RMS error over
// the seeds (the RMS of 30 errors scatters by about 1/√60 = 13 %, so
// either end of the band is 2.6 of its standard errors away; the lower
// side catches a σ some 25 % too small that the coverage count alone
// would let pass — dropping the offset and alignment columns from the
// covariance gives 0.61 for the resistance over these 30 seeds; the
// bounds are common practice, no source).
func TestFitCoverage(t *testing.T) {
	t.Parallel()
	coverage(t, coverageSeeds, 0, func(tr *MeasuredTrace, res *Result, seed uint64) {
		addNoise(tr, 0.01*res.Metrics.PeakCurrent, 0, seed)
	})
}

// The coverage tests' number of noise seeds and the fewest fits whose 2σ
// must hold the truth (see TestFitCoverage).
const (
	coverageSeeds     = 30
	coverageMinInside = 26
)

// TestFitCoverageCorrelatedNoise is the same with noise that a
// band-limited probe would give: Gaussian noise through a first-order
// low-pass of 10 samples' time constant (an AR(1) series, lag-1
// correlation e^(−1/10) per 50 µs sample, 0.67 on the fit's grid of every
// fourth sample). Plain Gauss–Newton errors are then about 2.3 times too
// small; the autocorrelation inflation must restore the coverage.
func TestFitCoverageCorrelatedNoise(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("30 fits; the white-noise coverage test runs in -short mode")
	}
	coverage(t, coverageSeeds, 100, func(tr *MeasuredTrace, res *Result, seed uint64) {
		addNoise(tr, 0.01*res.Metrics.PeakCurrent, math.Exp(-1.0/10), seed)
	})
}

// addNoise adds Gaussian noise of standard deviation sd (A), with lag-1
// correlation a between successive samples (0: white), deterministic for
// a seed.
func addNoise(tr *MeasuredTrace, sd, a float64, seed uint64) {
	rng := rand.New(rand.NewPCG(seed, 2))
	e := rng.NormFloat64()
	for k := range tr.Current {
		e = a*e + math.Sqrt(1-a*a)*rng.NormFloat64()
		tr.Current[k] += sd * e
	}
}

// coverage fits traces from seeds first+1 … first+n (noise added by
// noisy to the noiseless 5 mA-offset trace) and checks the 2σ coverage and
// the size of the stated σ for every fitted quantity.
func coverage(t *testing.T, n int, first uint64, noisy func(*MeasuredTrace, *Result, uint64)) {
	params := []FitParam{FitResistance, FitClosedInductance, FitOpenInductance}
	names := []string{"resistance", "closed inductance", "open inductance", "offset", "alignment"}
	truth := []float64{trueR, trueLc, trueLo, scopeOffset, 0}
	value := make([][]float64, len(names)) // [quantity][seed]
	sigma := make([][]float64, len(names))
	ratio := make([]float64, n) // RMS residual / noise reference, per seed
	for q := range names {
		value[q], sigma[q] = make([]float64, n), make([]float64, n)
	}
	jobs := make(chan int)
	errs := make(chan error, n)
	var wg sync.WaitGroup
	for w := 0; w < runtime.GOMAXPROCS(0); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			md := trueModel(t)
			// The fit starts 2 % off the truth: the coverage is about
			// the stated σ at the minimum, not about reaching it from
			// afar (TestFitRecoversParameters and the demo fit start
			// 4–9 % off); a near start takes fewer simulations.
			start := trueModel(t)
			for p, v := range map[FitParam]float64{FitResistance: 1.02 * trueR, FitClosedInductance: 0.98 * trueLc, FitOpenInductance: 1.02 * trueLo} {
				if err := setFit(start, p, v); err != nil {
					errs <- err
					return
				}
			}
			for s := range jobs {
				seed := first + uint64(s) + 1
				tr, res := synthTrace(t, md, 0, scopeOffset, seed)
				noisy(tr, res, seed)
				fr, err := Fit(start, tr, params)
				if err != nil {
					// a failed fit here is a false alarm of the failure
					// criterion (FitResidualLimit): the model is right
					errs <- fmt.Errorf("seed %d: %v", seed, err)
					continue
				}
				ratio[s] = fr.RMS / fr.NoiseRef
				for q, v := range fr.Values {
					value[q][s], sigma[q][s] = v.Value, v.StdErr
				}
				value[3][s], sigma[3][s] = fr.Offset, fr.OffsetErr
				// the trace's energize instant is the model's, so the
				// true alignment is 0
				value[4][s], sigma[4][s] = fr.Shift, fr.ShiftErr
			}
		}()
	}
	for s := 0; s < n; s++ {
		jobs <- s
	}
	close(jobs)
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Fatal(err)
	}
	sort.Float64s(ratio)
	t.Logf("RMS residual / noise reference over the seeds: min %.3f, median %.3f, max %.3f (a fit fails above %d)", ratio[0], ratio[n/2], ratio[n-1], FitResidualLimit)
	for q, name := range names {
		inside, sq := 0, 0.0
		for s := 0; s < n; s++ {
			d := value[q][s] - truth[q]
			if math.Abs(d) <= 2*sigma[q][s] {
				inside++
			}
			sq += d * d
		}
		rms := math.Sqrt(sq / float64(n))
		med := append([]float64(nil), sigma[q]...)
		sort.Float64s(med)
		ratio := med[n/2] / rms
		t.Logf("%-17s truth within 2σ in %d of %d; median σ %.3g, RMS error %.3g (ratio %.2f)", name, inside, n, med[n/2], rms, ratio)
		if inside < coverageMinInside {
			t.Errorf("%s: the truth lies within the stated 2σ in only %d of %d fits (want at least %d)", name, inside, n, coverageMinInside)
		}
		if !(ratio <= 1.5 && ratio >= 0.75) {
			t.Errorf("%s: median stated σ %.3g against an RMS error of %.3g over the seeds: ratio %.2f, want 0.75 to 1.5", name, med[n/2], rms, ratio)
		}
	}
}

func TestDipDetector(t *testing.T) {
	t.Parallel()
	md := trueModel(t)
	tr, res := synthTrace(t, md, 0.01, scopeOffset, 7)
	ev, err := DetectEvents(tr)
	if err != nil {
		t.Fatal(err)
	}
	seat := md.Timing.EnergizeAt + res.Metrics.PullIn.Seconds
	// The dip's minimum is the seat instant (the back-EMF of motion ends
	// there); within 2 % of the pull-in time.
	if !ev.HasDip || math.Abs(ev.Seat-seat) > 0.02*res.Metrics.PullIn.Seconds {
		t.Errorf("dip at %.5g s (found %v), seat at %.5g s", ev.Seat, ev.HasDip, seat)
	}
	if math.Abs(ev.Energize-md.Timing.EnergizeAt) > 2/scopeRate+ev.EnergizeErr {
		t.Errorf("energize found at %.6g s ± %.2g, commanded at %g s", ev.Energize, ev.EnergizeErr, md.Timing.EnergizeAt)
	}
	if math.Abs(ev.Offset-scopeOffset) > 1e-3 {
		t.Errorf("offset %g A, want %g A", ev.Offset, scopeOffset)
	}
	// Blocked plunger: no motion, no dip (and no false one from the noise).
	blocked := trueModel(t)
	blocked.Plunger.Spring.Preload = 100
	trb, _ := synthTrace(t, blocked, 0.01, scopeOffset, 8)
	evb, err := DetectEvents(trb)
	if err != nil {
		t.Fatal(err)
	}
	if evb.HasDip {
		t.Errorf("blocked plunger: false dip at %.5g s", evb.Seat)
	}
}

// TestReadRunCSV: the layout of coilkick's own run CSV (snake-case header
// with units, the other quantities ignored, a row on each side of an
// event, the integrator's variable step) reads as a trace.
func TestReadRunCSV(t *testing.T) {
	t.Parallel()
	text := "time_s,current_A,coil_voltage_V,switch_voltage_V,gap_m,velocity_m_per_s,magnetic_force_N,passive_force_N,winding_temperature_degC\n"
	times := []float64{0, 1e-6, 6e-6, 3.1e-5, 1.56e-4, 7.81e-4, 1e-3, 1e-3, 1.18e-3, 1.37e-3, 1.56e-3, 5e-3, 11e-3, 17e-3}
	for k, tm := range times {
		i, v := 0.0, 0.0
		if k >= 7 {
			i, v = 0.01*float64(k-6), 24
		}
		text += fmt.Sprintf("%g,%g,%g,24,0.0012,0,0,2.2,20\n", tm, i, v)
	}
	tr, err := ReadTraceCSV(strings.NewReader(text), "run.csv")
	if err != nil {
		t.Fatal(err)
	}
	// 14 rows, one repeated instant: the first row of it (before the
	// event, 0 V) is kept.
	if len(tr.Time) != 13 || tr.Repeated != 1 || tr.Voltage[6] != 0 || tr.Time[7] != 1.18e-3 || tr.Current[7] != 0.02 {
		t.Errorf("run CSV read as %d samples (%d repeated): t %v, i %v, v %v", len(tr.Time), tr.Repeated, tr.Time, tr.Current, tr.Voltage)
	}
	// A variable step is not a gap (the 6 ms steps are 20 times the median).
	if tr.Uniform() {
		t.Errorf("a variable-step record reported as uniformly sampled")
	}
	// An unknown snake-case quantity is still an error naming the column.
	bad := strings.Replace(text, "gap_m", "flux_Wb", 1)
	if _, err := ReadTraceCSV(strings.NewReader(bad), "run.csv"); err == nil || !strings.Contains(err.Error(), `run.csv:1: column 5 "flux_Wb": unknown quantity`) {
		t.Errorf("unknown column: error %v", err)
	}
	// A gap in a uniformly sampled record is reported at its line even
	// after a repeated row was dropped.
	scope := "time (ms), current (mA)\n0, 0\n0, 0\n"
	for k := 1; k < 20; k++ {
		tm := k
		if k == 15 {
			tm = 150
		}
		if k > 15 {
			tm = 150 + k
		}
		scope += fmt.Sprintf("%d, %d\n", tm, k)
	}
	if _, err := ReadTraceCSV(strings.NewReader(scope), "scope.csv"); err == nil || !strings.Contains(err.Error(), `scope.csv:18: column 1 "time (ms)": a gap`) {
		t.Errorf("gap after a repeated row: error %v, want one at line 18 (the row that ends the gap)", err)
	}
}

// TestFitFailsOnWrongUnits: a trace whose header has a wrong unit (time
// in µs on millisecond data, current in A on milliampere data; the files
// under testdata/fit/bad are the demo trace with the header changed) is a
// failed fit: an error wrapping ErrFitFailed that names the file, the
// header line, the column and its unit, with the result marked failed.
// Before, both "fitted" (R = 6.2 ohm and 5.4 ohm, the RMS error 46 times
// the noise) without an error.
func TestFitFailsOnWrongUnits(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	params := []FitParam{FitResistance, FitClosedInductance, FitOpenInductance}
	for _, c := range []struct {
		file string
		want []string
	}{
		{"time-us.csv", []string{"time-us.csv:4: the fit failed: the RMS residual", `column 1 "time (us)" (unit "us")`, "pull-in dip comes 8.7 µs after energizing", "check the unit of column 1"}},
		{"current-A.csv", []string{"current-A.csv:4: the fit failed: the RMS residual", `column 2 "current (A)" (unit "A")`, "peak current 330 A is 991 times", "check the unit of column 2"}},
	} {
		path := filepath.Join("testdata", "fit", "bad", c.file)
		tr, err := LoadTrace(path)
		if err != nil {
			t.Fatal(err)
		}
		fr, err := Fit(md, tr, params)
		if !errors.Is(err, ErrFitFailed) || fr == nil || !fr.Failed() {
			t.Errorf("%s: error %v, want one wrapping ErrFitFailed with a failed result", c.file, err)
			continue
		}
		for _, w := range append(c.want, path) {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: error lacks %q:\n%v", c.file, w, err)
			}
		}
		if r := fr.RMS / fr.NoiseRef; !(r > 20) {
			t.Errorf("%s: RMS %.3g A is %.3g times the noise reference %.3g A; want far above it", c.file, fr.RMS, r, fr.NoiseRef)
		}
		t.Logf("%s: %v", c.file, err)
	}
}

// TestFitFailsSingular: fitting the mass of a plunger that does not move
// (a 100 N spring preload holds it) leaves a Jacobian column of zeros: a
// singular covariance, which fails the fit and names the mass. The trace
// is otherwise good (1 % noise, fitted within its noise). Before, this
// printed a warning and exited 0. And a parameter whose 1σ exceeds its
// value fails the same way (damping fitted with everything else on the
// demo trace: 0.20 ± 0.52 N·s/m).
func TestFitFailsSingular(t *testing.T) {
	t.Parallel()
	blocked := trueModel(t)
	blocked.Plunger.Spring.Preload = 100
	tr, _ := synthTrace(t, blocked, 0.01, scopeOffset, 11)
	fr, err := Fit(blocked, tr, []FitParam{FitResistance, FitMass})
	if !errors.Is(err, ErrFitFailed) || fr == nil || !strings.Contains(err.Error(), "the trace does not determine mass (singular covariance)") {
		t.Errorf("blocked plunger, mass fitted: error %v", err)
	}
	if fr != nil && !(fr.RMS <= FitResidualLimit*fr.NoiseRef) {
		t.Errorf("blocked plunger: RMS %.3g A against noise %.3g A; the residual should pass", fr.RMS, fr.NoiseRef)
	}
	if testing.Short() {
		return
	}
	f, err := os.Open(scopePath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	scope, err := ReadTraceCSV(f, scopePath)
	if err != nil {
		t.Fatal(err)
	}
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	_, err = Fit(md, scope, FitParams())
	if !errors.Is(err, ErrFitFailed) || !strings.Contains(err.Error(), "the trace does not determine damping: its 1σ is") {
		t.Errorf("all six parameters fitted: error %v, want the damping not determined", err)
	}
}

// TestNoiseEstimates: the sample-to-sample noise of a smooth signal with
// white Gaussian noise of σ = 2 mA is σ within 5 % (10 000 samples: the
// median-based estimate scatters by about 1 %), and the resolution of a
// quantised record is its step. Over the bad-unit traces' parent, the
// 10 kHz BOM copy of the demo trace, whose 10 samples before energizing
// give a noise of only 1.9 mA, the reference is the true 1 % of the
// peak (3.2 mA) within 10 %.
func TestNoiseEstimates(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(3, 4))
	i := make([]float64, 10000)
	for k := range i {
		tk := float64(k) / 10000
		i[k] = 0.3*(1-math.Exp(-5*tk)) + 0.002*rng.NormFloat64()
	}
	if got := differenceNoise(i); math.Abs(got/0.002-1) > 0.05 {
		t.Errorf("differenceNoise = %.4g A, want 0.002 A within 5 %%", got)
	}
	q := make([]float64, len(i))
	for k := range q {
		q[k] = math.Round(i[k]/0.5e-3) * 0.5e-3
	}
	if got := currentQuantum(q); math.Abs(got-0.5e-3) > 1e-12 {
		t.Errorf("currentQuantum = %g A, want 0.5 mA", got)
	}
	tr, err := LoadTrace("testdata/fit/bom-scope.csv")
	if err != nil {
		t.Fatal(err)
	}
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	fr, err := Fit(md, tr, []FitParam{FitResistance, FitClosedInductance, FitOpenInductance})
	if err != nil {
		t.Fatal(err)
	}
	res, err := Simulate(trueModel(t), &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	truth := 0.01 * res.Metrics.PeakCurrent // the generator's noise: 1 % of the true peak
	t.Logf("noise: baseline %.3g A, sample-to-sample %.3g A, reference %.3g A, true %.3g A", fr.Noise, fr.DiffNoise, fr.NoiseRef, truth)
	if fr.Noise > 0.7*truth || math.Abs(fr.NoiseRef/truth-1) > 0.1 {
		t.Errorf("baseline noise %.3g A, noise reference %.3g A; want the baseline low (short) and the reference within 10 %% of %.3g A", fr.Noise, fr.NoiseRef, truth)
	}
}

// BenchmarkFitScopeDemo: the README's demo fit (three parameters of the
// irrigation valve to the synthetic 20 kHz scope trace, from 72 Ω, 300 mH
// and 120 mH).
func BenchmarkFitScopeDemo(b *testing.B) {
	f, err := os.Open(scopePath)
	if err != nil {
		b.Fatal(err)
	}
	tr, err := ReadTraceCSV(f, scopePath)
	f.Close()
	if err != nil {
		b.Fatal(err)
	}
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		b.Fatal(err)
	}
	params := []FitParam{FitResistance, FitClosedInductance, FitOpenInductance}
	for b.Loop() {
		if _, err := Fit(md, tr, params); err != nil {
			b.Fatal(err)
		}
	}
}
