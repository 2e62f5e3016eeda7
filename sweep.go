package coilkick

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"runtime"
	"strconv"
	"strings"
	"sync"

	"gopkg.in/yaml.v3"
)

// Vary is one swept scenario key: a dotted path such as "supply.voltage"
// or "plunger.spring preload" and the values it takes, written as they
// would be in the scenario file ("20 V").
type Vary struct {
	Key    string
	Values []string
}

// ParseVary reads "KEY=FROM:TO:STEPS" (STEPS values from FROM to TO, both
// ends included; TO may leave out FROM's unit) or "KEY=V1,V2,V3".
func ParseVary(spec string) (Vary, error) {
	key, rng, ok := strings.Cut(spec, "=")
	key = strings.TrimSpace(key)
	if !ok || key == "" || strings.TrimSpace(rng) == "" {
		return Vary{}, fmt.Errorf("coilkick: --vary %q: expected KEY=FROM:TO:STEPS or KEY=V1,V2,...", spec)
	}
	v := Vary{Key: key}
	if parts := strings.Split(rng, ":"); len(parts) == 3 {
		n, err := strconv.Atoi(strings.TrimSpace(parts[2]))
		if err != nil || n < 1 || n > 1000000 {
			return Vary{}, fmt.Errorf("coilkick: --vary %q: STEPS must be a whole number from 1 to 1e6", spec)
		}
		a, ua, err := splitValue(parts[0])
		if err != nil {
			return Vary{}, fmt.Errorf("coilkick: --vary %q: %v", spec, err)
		}
		b, ub, err := splitValue(parts[1])
		if err != nil {
			return Vary{}, fmt.Errorf("coilkick: --vary %q: %v", spec, err)
		}
		if ub == "" {
			ub = ua
		}
		if ua != ub {
			return Vary{}, fmt.Errorf("coilkick: --vary %q: FROM and TO must use the same unit (%q, %q)", spec, ua, ub)
		}
		for k := 0; k < n; k++ {
			x := a
			if n > 1 {
				x = a + (b-a)*float64(k)/float64(n-1)
			}
			v.Values = append(v.Values, strings.TrimSpace(strconv.FormatFloat(x, 'g', 10, 64)+" "+ua))
		}
		return v, nil
	}
	for _, p := range strings.Split(rng, ",") {
		if p = strings.TrimSpace(p); p != "" {
			v.Values = append(v.Values, p)
		}
	}
	if len(v.Values) == 0 {
		return Vary{}, fmt.Errorf("coilkick: --vary %q: no values", spec)
	}
	return v, nil
}

// splitValue splits "20 V" into 20 and "V".
func splitValue(s string) (float64, string, error) {
	s = strings.TrimSpace(s)
	i := 0
	for i < len(s) && strings.ContainsRune("+-.0123456789eE", rune(s[i])) {
		// stop at an 'e' that starts a unit rather than an exponent
		if (s[i] == 'e' || s[i] == 'E') && (i+1 >= len(s) || !strings.ContainsRune("+-0123456789", rune(s[i+1]))) {
			break
		}
		i++
	}
	x, err := strconv.ParseFloat(s[:i], 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, "", fmt.Errorf("%q is not a number with a unit", s)
	}
	return x, strings.TrimSpace(s[i:]), nil
}

// SweepFigures are the key figures of one run (NaN-free: a time that did
// not happen is an Interval without Happened).
type SweepFigures struct {
	PullIn, Release, Drop        Interval
	PeakCurrent, HoldCurrent     float64 // A
	PeakSwitchVoltage            float64 // V
	ClampEnergy, AvalancheEnergy float64 // J
	Failed                       bool    // a rating or requirement fails
}

// SweepPoint is one point of a sweep.
type SweepPoint struct {
	Values  []string // one per Vary, as written
	Figures SweepFigures
	Err     string // the point could not be built or simulated
}

// Sweeper runs a scenario over a grid of key values.
type Sweeper struct {
	path string
	data []byte
	root yaml.Node
}

// NewSweeper reads the scenario file at path.
func NewSweeper(path string) (*Sweeper, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", path, err)
	}
	if _, err := Parse(data, path); err != nil {
		return nil, err
	}
	sw := &Sweeper{path: path, data: data}
	if err := yaml.Unmarshal(data, &sw.root); err != nil {
		return nil, err
	}
	return sw, nil
}

// Points returns the grid of a set of varied keys (the last key varies
// fastest).
func Points(vs []Vary) [][]string {
	grid := [][]string{{}}
	for _, v := range vs {
		var next [][]string
		for _, g := range grid {
			for _, x := range v.Values {
				p := append(append([]string{}, g...), x)
				next = append(next, p)
			}
		}
		grid = next
	}
	return grid
}

// Model builds the model with the keys set to values.
func (sw *Sweeper) Model(vs []Vary, values []string) (*Model, error) {
	var doc yaml.Node
	copyNode(&doc, &sw.root)
	root := &doc
	if root.Kind == yaml.DocumentNode {
		root = root.Content[0]
	}
	for i, v := range vs {
		if err := setPath(root, strings.Split(v.Key, "."), values[i]); err != nil {
			return nil, fmt.Errorf("coilkick: --vary %s: %v", v.Key, err)
		}
	}
	var buf bytes.Buffer
	enc := yaml.NewEncoder(&buf)
	if err := enc.Encode(&doc); err != nil {
		return nil, err
	}
	s, err := Parse(buf.Bytes(), sw.path)
	if err != nil {
		return nil, err
	}
	return Build(s)
}

func copyNode(dst, src *yaml.Node) {
	*dst = *src
	dst.Content = make([]*yaml.Node, len(src.Content))
	for i, c := range src.Content {
		dst.Content[i] = new(yaml.Node)
		copyNode(dst.Content[i], c)
	}
}

// setPath sets the scalar at a key path, creating missing keys.
func setPath(n *yaml.Node, path []string, value string) error {
	if n.Kind != yaml.MappingNode {
		return errors.New("not a section")
	}
	for i := 0; i+1 < len(n.Content); i += 2 {
		if n.Content[i].Value == path[0] {
			if len(path) == 1 {
				v := n.Content[i+1]
				if v.Kind != yaml.ScalarNode {
					return fmt.Errorf("%q is a section, not a value", path[0])
				}
				v.Value, v.Tag, v.Style = value, "!!str", 0
				return nil
			}
			return setPath(n.Content[i+1], path[1:], value)
		}
	}
	// Missing: add it (the loader rejects keys that do not exist).
	k := &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: path[0]}
	if len(path) == 1 {
		n.Content = append(n.Content, k, &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: value})
		return nil
	}
	m := &yaml.Node{Kind: yaml.MappingNode, Tag: "!!map"}
	n.Content = append(n.Content, k, m)
	return setPath(m, path[1:], value)
}

// Figures simulates a model and returns its key figures.
func Figures(md *Model) (SweepFigures, error) {
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		return SweepFigures{}, err
	}
	m := &res.Metrics
	as := md.Assess(res)
	return SweepFigures{PullIn: m.PullIn, Release: m.Release, Drop: m.Drop, PeakCurrent: m.PeakCurrent,
		HoldCurrent: m.Hold.MeanCurrent, PeakSwitchVoltage: m.PeakSwitchVoltage, ClampEnergy: m.ClampEnergy,
		AvalancheEnergy: m.AvalancheEnergy, Failed: as.Failed()}, nil
}

// Sweep runs every point of the grid on workers goroutines (0: all cores)
// and returns the points in grid order; the result does not depend on the
// number of workers. progress, when not nil, is called after each point
// with the number done.
func (sw *Sweeper) Sweep(vs []Vary, workers int, progress func(done, total int)) []SweepPoint {
	grid := Points(vs)
	out := make([]SweepPoint, len(grid))
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	jobs := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	done := 0
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := range jobs {
				p := SweepPoint{Values: grid[k]}
				md, err := sw.Model(vs, grid[k])
				if err == nil {
					p.Figures, err = Figures(md)
				}
				if err != nil {
					p.Err = err.Error()
				}
				out[k] = p
				if progress != nil {
					mu.Lock()
					done++
					progress(done, len(grid))
					mu.Unlock()
				}
			}
		}()
	}
	for k := range grid {
		jobs <- k
	}
	close(jobs)
	wg.Wait()
	return out
}
