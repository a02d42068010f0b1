package device_test

import (
	"fmt"
	"log"

	"pairsmith/sim/device"
)

// A level-1 card (invented demo values) sized, evaluated and exported for
// ngspice.
func ExampleLevel1() {
	card := &device.Level1{Polarity: device.NMOS, VTO: 0.45, KP: 280e-6, Gamma: 0.5,
		Phi: 0.8, Lambda: 0.05, LD: 0.05e-6, TnomK: device.ZeroC + 27}
	inst, err := card.Instance(device.Geometry{W: 10e-6, L: 1.05e-6, M: 2}, device.ZeroC+27)
	if err != nil {
		log.Fatal(err)
	}
	e := inst.Eval(1.0, 1.0, 0, 0) // vd, vg, vs, vb
	op := inst.Op(1.0, 1.0, 0, 0)
	fmt.Printf("ID = %.4g A, gm = %.4g S, gds = %.4g S, %s\n", e.ID, e.GG, e.GD, op.Region)
	fmt.Println(card.SpiceCard("nch", device.ZeroC+27))
	// Output:
	// ID = 0.0009362 A, gm = 0.003404 S, gds = 4.458e-05 S, saturation
	// .model nch nmos (level=1 vto=0.45 kp=0.00028 gamma=0.5 phi=0.8 lambda=0.05 ld=5e-08 tnom=27)
}

// An EKV card (invented demo values) in moderate inversion.
func ExampleEKV() {
	card := &device.EKV{Polarity: device.PMOS, VTO: -0.45, KP: 70e-6, Gamma: 0.45, Phi: 0.75,
		Lambda: 0.05, TCV: 1e-3, BEX: -1.5, TnomK: device.ZeroC + 27}
	inst, err := card.Instance(device.Geometry{W: 40e-6, L: 1e-6}, device.ZeroC+27)
	if err != nil {
		log.Fatal(err)
	}
	// Source and bulk at 1.8 V, gate at 1.2 V, drain at 0.9 V.
	op := inst.Op(0.9, 1.2, 1.8, 1.8)
	fmt.Printf("ID = %.3g A, IC = %.2f (%s), gm = %.3g S, VTH = %.3f V\n", op.ID, op.IC, op.Region, op.GM, op.VTH)
	// Output:
	// ID = -2.8e-05 A, IC = 5.82 (moderate), gm = 0.000327 S, VTH = -0.450 V
}
