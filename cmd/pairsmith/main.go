// Command pairsmith designs rail-to-rail op-amp input stages: it evaluates
// sized NMOS + PMOS input pairs with a DC circuit solver, reports their gm
// flatness, power and area, searches topology and sizing for the stages
// that meet a spec sheet, and writes SPICE netlists for verification.
//
// Usage:
//
//	pairsmith run SPEC.yaml -o DIR [--evaluations N] [--time 10m] [--seed S] [--workers W]
//	pairsmith topologies [--json]
//	pairsmith eval DESIGN.yaml [--json] [--plot FILE.svg|.png] [--devices]
//	pairsmith netlist DESIGN.yaml [--testbench [--dc]] [-o FILE]
//
// Exit codes: 0 done, 2 bad input (a spec, design or process file, a flag
// or argument), 3 `run` found no candidate that meets the spec (its
// results are still written), 1 anything else, such as a point where the
// solver found no DC solution.
package main

import "os"

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}
