package report_test

import (
	"fmt"
	"math"
	"strings"

	"pairsmith/objectives"
	"pairsmith/report"
)

// ExampleTargetTexts writes a spec sheet's targets for reading.
func ExampleTargetTexts() {
	spec, err := objectives.ReadSpec("spec.yaml", []byte(`process: demo18
supply: 1.8V
targets:
  gm_min: 150uS
  gm_ripple_max: 20%
  power_max: 200uW
  area_max: 3000um2
  switchover: {at: 0.9V, tolerance: 0.1V}
`), ".")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(strings.Join(report.TargetTexts(spec.Targets), "\n"))
	// Output:
	// gm_min ≥ 150 µS
	// gm_ripple ≤ 20.0 %
	// power ≤ 200 µW
	// area ≤ 3000 µm²
	// switchover 900 mV ± 100 mV
}

// ExampleMissTexts says what a candidate misses of a spec: here a single
// pair (invented numbers), whose gm falls to zero near one rail and which
// has no handover.
func ExampleMissTexts() {
	spec, err := objectives.ReadSpec("spec.yaml", []byte(`process: demo18
supply: 1.8V
targets: {gm_min: 150uS, gm_ripple_max: 20%, power_max: 200uW, switchover: {at: 0.9V, tolerance: 0.1V}}
`), ".")
	if err != nil {
		fmt.Println(err)
		return
	}
	m := objectives.Metrics{GMMin: 0, GMMax: 2.1e-4, GMRipple: math.Inf(1), Power: 5.2e-5, Area: 2e-10,
		Switchover: math.NaN(), TransitionWidth: math.NaN()}
	for _, s := range report.MissTexts(spec, spec.Targets.Check(m)) {
		fmt.Println(s)
	}
	// Output:
	// gm_min 0 S < 150 µS
	// gm_ripple ∞ (gm falls to zero) > 20.0 %
	// switchover none (no handover), wanted 900 mV ± 100 mV
}
