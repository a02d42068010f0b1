package report_test

import (
	"fmt"
	"math"
	"os"

	"pairsmith/objectives"
	"pairsmith/report"
	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
)

// ExampleMetricsTable prints the metrics of a current-switch stage. The
// evaluation is written out by hand here (invented numbers) so the
// example shows only the layout; objectives.Evaluate makes real ones.
func ExampleMetricsTable() {
	proc, _ := device.Builtin("demo18")
	ev := &objectives.Evaluation{
		Design: &objectives.Design{
			Topology: "current-switch", ProcessRef: "demo18",
			Conditions: topologies.Conditions{Process: proc, Supply: 1.8, TempK: 300.15}, Sweep: sim.SweepSpec{Low: 0, High: 1.8, Step: 0.01},
		},
		Stage: &topologies.Stage{PairN: [2]string{"M1", "M2"}, PairP: [2]string{"M3", "M4"}},
		Metrics: objectives.Metrics{
			GMMin: 1.957e-4, GMMax: 2.211e-4, GMRipple: 0.13, Power: 8.014e-5, Area: 4.2e-10,
			Switchover: 0.9833, TransitionWidth: math.NaN(), Offset: 3.37e-3, OffsetDrift: 3.85e-3, SlewCurrent: 19.6e-6, Slew: math.NaN(), MinSupply: 1.405, Noise: 17.95e-9,
		},
		Result: &sim.Result{VCM: make([]float64, 181)},
	}
	if err := report.MetricsTable(os.Stdout, ev); err != nil {
		panic(err)
	}
	// Output:
	// current-switch on demo18 (ekv), supply 1.8 V, 27 °C, vcm 0 V to 1.8 V in 10 mV steps (181 points)
	//
	//   gm_min            195.7 µS      smallest gm over the sweep
	//   gm_max            221.1 µS      largest gm over the sweep
	//   gm_ripple          13.0 %       gm_max / gm_min − 1
	//   power             80.14 µW      supply power, largest over the sweep
	//   area                420 µm²     total gate area Σ W·L·m
	//   switchover        983.3 mV      centre of the NMOS/PMOS handover
	//   transition_width      —         (no complete handover)  NMOS share from 10 % to 90 %
	//   offset            3.370 mV      k-sigma input offset from mismatch, largest over the sweep
	//   offset_drift      3.850 mV      k-sigma change of offset across the sweep
	//   slew_current      19.60 µA      smallest output current for a large input over the sweep
	//   slew                  —         (no load given)  slew_current into the load
	//   min_supply        1.405 V       lowest supply that still works rail to rail
	//   noise             17.95 nV/√Hz  input noise density at the design's frequency (10 kHz unless set), largest over the sweep
	//
	// Estimates from compact models; verify with the foundry's models and a licensed sign-off flow before use.
}

// ExampleSI formats measured values for reading.
func ExampleSI() {
	fmt.Println(report.SI(1.9566e-4, "S", 4))
	fmt.Println(report.SI(8.014e-5, "W", 4))
	fmt.Println(report.SI(0.9833, "V", 4))
	fmt.Println(report.SI(-1.966e-5, "A", 4))
	// Output:
	// 195.7 µS
	// 80.14 µW
	// 983.3 mV
	// -19.66 µA
}
