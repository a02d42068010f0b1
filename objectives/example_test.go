package objectives_test

import (
	"fmt"
	"log"

	"pairsmith/objectives"
)

// ExampleEvaluate reads a demo design file, evaluates it and looks at the
// result: its family, how many common-mode points were swept and whether
// it has a handover.
func ExampleEvaluate() {
	d, err := objectives.LoadDesign("../testdata/designs/current-switch.yaml")
	if err != nil {
		log.Fatal(err)
	}
	ev, err := objectives.Evaluate(d)
	if err != nil {
		log.Fatal(err)
	}
	doc := ev.Doc()
	fmt.Println(doc.Topology, "on", doc.Process)
	fmt.Println(len(ev.Curve()), "points from", d.Sweep.Low, "V to", d.Sweep.High, "V")
	fmt.Println("devices reported:", len(ev.Devices))
	m := ev.Metrics
	fmt.Println("handover inside the range:", m.Switchover > d.Sweep.Low && m.Switchover < d.Sweep.High)
	// Output:
	// current-switch on demo18
	// 181 points from 0 V to 1.8 V
	// devices reported: 9
	// handover inside the range: true
}

// ExampleHandover measures a handover in which the NMOS share of the tail
// current rises linearly from 0 at 0.6 V to 1 at 1.0 V: the switchover is
// the middle of the ramp and the width its 10 %–90 % part.
func ExampleHandover() {
	var vcm, in, ip []float64
	for i := range 181 {
		v := float64(i) * 0.01
		share := min(1, max(0, (v-0.6)/0.4))
		vcm = append(vcm, v)
		in = append(in, share*20e-6)
		ip = append(ip, (1-share)*20e-6)
	}
	sw, width := objectives.Handover(vcm, in, ip)
	fmt.Printf("switchover %.3f V, transition width %.3f V\n", sw, width)
	// Output:
	// switchover 0.800 V, transition width 0.320 V
}

// ExampleRipple shows the ripple of a gm that doubles, and of one that
// falls to nothing, as a single pair's does at its dead rail.
func ExampleRipple() {
	fmt.Println(objectives.Ripple(2e-4, 4e-4))
	fmt.Println(objectives.Ripple(0, 4e-4))
	// Output:
	// 1
	// +Inf
}
