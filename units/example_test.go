package units_test

import (
	"fmt"

	"pairsmith/units"
)

func ExampleParse() {
	for _, in := range []string{"1.8V", "200µA", "1500um2", "15%", "-40C", "2V/us", "280uA/V2"} {
		d := map[string]units.Dim{
			"1.8V": units.Volt, "200µA": units.Ampere, "1500um2": units.SquareMetre,
			"15%": units.Percent, "-40C": units.Temperature, "2V/us": units.VoltPerSecond,
			"280uA/V2": units.AmperePerVoltSq,
		}[in]
		v, err := units.Parse(in, d)
		fmt.Printf("%-9s %g %s %v\n", in, v, d.Unit(), err)
	}
	_, err := units.Parse("2m", units.Volt)
	fmt.Println(err)
	// Output:
	// 1.8V      1.8 V <nil>
	// 200µA     0.0002 A <nil>
	// 1500um2   1.5e-09 m² <nil>
	// 15%       0.15 1 <nil>
	// -40C      233.15 K <nil>
	// 2V/us     2e+06 V/s <nil>
	// 280uA/V2  0.00028 A/V² <nil>
	// got "2m", want a voltage in V, for example 1.8V ("m" is an SI prefix without its unit, as in 2mV)
}

func ExampleFormat() {
	fmt.Println(units.Format(2e-5, units.Metre))
	fmt.Println(units.Format(1.6e-10, units.SquareMetre))
	fmt.Println(units.Format(300.15, units.Temperature))
	fmt.Println(units.Format(0.42, units.Percent))
	// Output:
	// 20um
	// 160um2
	// 27C
	// 42%
}

func ExampleMap() {
	text := `topology: current-switch
supply: 1.8V
params:
  wn: 20uV
`
	m, err := units.ReadBytes("design.yaml", []byte(text))
	if err != nil {
		fmt.Println(err)
		return
	}
	if err := m.Check("topology", "process", "supply", "params"); err != nil {
		fmt.Println(err)
		return
	}
	supply, _, _ := m.Quantity("supply", units.Volt)
	fmt.Println("supply", supply)
	p, _, _ := m.Map("params")
	if _, _, err := p.Quantity("wn", units.Metre); err != nil {
		fmt.Println(err)
	}
	// Output:
	// supply 1.8
	// design.yaml:4: params.wn: got "20uV", want a length in m, for example 20um
}

func ExampleMap_Check() {
	m, _ := units.ReadBytes("sweep.yaml", []byte("low: 0V\nhigh: 1.8V\nstpe: 10mV\n"))
	fmt.Println(m.Check("low", "high", "step"))
	// Output:
	// sweep.yaml:3: stpe: unknown field; did you mean "step"?
}

func ExampleNearest() {
	fmt.Println(units.Nearest("curent-switch", []string{"n-pair", "current-switch", "zener"}))
	// Output:
	// current-switch true
}
