package coilkick_test

import (
	"fmt"
	"log"

	"coilkick"
)

// Load a scenario, simulate one actuation and read the figures.
func Example() {
	md, err := coilkick.LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		log.Fatal(err)
	}
	res, err := coilkick.Simulate(md, nil)
	if err != nil {
		log.Fatal(err)
	}
	m := res.Metrics
	fmt.Printf("pulled in: %v after %.1f ms\n", m.PullIn.Happened, m.PullIn.Seconds*1e3)
	fmt.Printf("released after %.1f ms, back at rest after %.1f ms\n", m.Release.Seconds*1e3, m.Drop.Seconds*1e3)
	fmt.Printf("peak switch voltage %.1f V\n", m.PeakSwitchVoltage)
	as := md.Assess(res)
	fmt.Printf("requirements failed: %v\n", as.Failed())
	// Output:
	// pulled in: true after 7.6 ms
	// released after 4.2 ms, back at rest after 8.3 ms
	// peak switch voltage 24.8 V
	// requirements failed: false
}
