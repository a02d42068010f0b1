package device_test

import (
	"fmt"

	"pairsmith/sim/device"
)

func ExampleReadProcess() {
	text := `name: demo-l1
model: level1
tnom: 27C
nmos: {vto: 0.45V, kp: 280uA/V2, gamma: 0.5, phi: 0.8V, lambda: 0.05}
pmos: {vto: -0.45V, kp: 70uA/V2, gamma: 0.45, phi: 0.8V, lambda: 0.06}
`
	p, err := device.ReadProcess("process.yaml", []byte(text))
	if err != nil {
		fmt.Println(err)
		return
	}
	n := p.Card(device.NMOS).(*device.Level1)
	fmt.Println(p.Name, p.Kind, p.TnomK, n.VTO, n.KP)

	_, err = device.ReadProcess("process.yaml", []byte("model: level1\nnmos: {vto: -0.45V, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n"))
	fmt.Println(err)
	// Output:
	// demo-l1 level1 300.15 0.45 0.00028
	// process.yaml:2: nmos.vto: got "-0.45V", want a positive NMOS threshold (SPICE sign convention) from 50mV to 3V (enhancement thresholds run from about 0.2 V to 1.5 V)
}

func ExampleBuiltin() {
	fmt.Println(device.BuiltinNames())
	p, _ := device.Builtin("demo18")
	fmt.Println(p.Doc)
	fmt.Println(p.Kind, p.N.Type(), p.P.Type())
	// Output:
	// [demo18 demo18-l1 demo33 demo33-l1]
	// invented demo data, a 1.8 V class process with EKV cards; not any foundry's process
	// ekv nmos pmos
}

func ExampleResolveProcess() {
	// A design file's "process:" is a built-in name or a path relative to
	// the design file's directory.
	p, err := device.ResolveProcess("demo33-l1", "testdata")
	fmt.Println(p.Name, err)
	_, err = device.ResolveProcess("demo81", "testdata")
	fmt.Println(err)
	// Output:
	// demo33-l1 <nil>
	// process "demo81" is neither a built-in process nor a file (did you mean "demo18"? built-in: demo18, demo18-l1, demo33, demo33-l1): stat testdata/demo81: no such file or directory
}
