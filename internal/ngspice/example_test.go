package ngspice_test

import (
	"fmt"
	"log"

	"pairsmith/internal/ngspice"
)

// Run a resistive divider at its operating point and read a node voltage
// and a source current. (No Output comment: ngspice may be missing where
// the examples are built.)
func ExampleRun() {
	deck := `divider
vdd a 0 3
r1 a b 1k
r2 b 0 2k
.op
.end
`
	tab, err := ngspice.Run(deck, "v(b)", "i(vdd)")
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("v(b) = %.3f V, i(vdd) = %.3g A\n", tab.Vectors["v(b)"][0], tab.Vectors["i(vdd)"][0])
}
