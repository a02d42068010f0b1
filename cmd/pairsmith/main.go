// Command pairsmith designs rail-to-rail op-amp input stages: it evaluates
// sized NMOS + PMOS input pairs with a DC circuit solver, reports their gm
// flatness, power and area, and writes SPICE netlists for verification.
//
// Usage:
//
//	pairsmith topologies [--json]
//	pairsmith eval DESIGN.yaml [--json] [--plot FILE.svg|.png] [--devices]
//	pairsmith netlist DESIGN.yaml [--testbench [--dc]] [-o FILE]
//
// Exit codes: 0 done, 2 bad input (a design or process file, a flag or
// argument), 1 anything else, such as a point where the solver found no
// DC solution.
package main

import "os"

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}
