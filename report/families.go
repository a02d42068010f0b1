package report

import (
	"io"

	"pairsmith/topologies"
	"pairsmith/units"
)

// UnitSymbol returns the SI unit symbol of a parameter's values, "" for a
// plain number or a fraction.
func UnitSymbol(d units.Dim) string {
	if u := d.Unit(); u != "1" {
		return u
	}
	return ""
}

// FamiliesTable lists topology families for a terminal: each family's
// name and one-line description, then its parameters with default,
// bounds and search scale (values as a design file writes them) and what
// each one sets.
func FamiliesTable(w io.Writer, fams []topologies.Family) error {
	e := &errWriter{w: w}
	for i, f := range fams {
		if i > 0 {
			e.printf("\n")
		}
		e.printf("%s — %s\n", f.Name(), f.Summary())
		t := &textTable{right: []bool{false, true, true, true, false, false}}
		t.add("param", "default", "min", "max", "scale", "")
		for _, p := range f.Params() {
			t.add(p.Name, p.Text(p.Default), p.Text(p.Min), p.Text(p.Max), p.Scale.String(), p.Doc)
		}
		t.write(e, "  ")
	}
	return e.err
}
