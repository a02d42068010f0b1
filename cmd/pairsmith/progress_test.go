package main

import (
	"bytes"
	"strings"
	"testing"
	"time"

	"pairsmith/optimize"
)

// TestProgressTerminal: on a terminal every redraw returns to the line's
// start and erases what a longer bar or the terminal's echo of ^C left
// (ECMA-48 EL); the last one ends the line, so that what follows starts
// on a line of its own. After the search the report phase counts the
// re-evaluated candidates without losing the search's figures.
func TestProgressTerminal(t *testing.T) {
	var b bytes.Buffer
	t0 := time.Unix(1000, 0)
	p := &progress{w: &b, terminal: true, now: func() time.Time { return t0 }, stop: make(chan struct{})}
	p.update(optimize.Progress{Evaluations: 500, Budget: 1000, Feasible: 7, Best: 0.5, Elapsed: time.Second, Phase: "genetic"})
	p.draw(false)
	p.update(optimize.Progress{Evaluations: 1000, Budget: 1000, Feasible: 9, Best: 0.4, Elapsed: 2 * time.Second, Phase: "refine"})
	p.update(optimize.Progress{Evaluations: 1000, Budget: 1000, Phase: optimize.PhaseReport, Reported: 3, Reporting: 10})
	p.draw(true)
	out := b.String()
	draws := strings.Split(out, "\r")[1:]
	if len(draws) != 2 {
		t.Fatalf("%d redraws in %q, want 2", len(draws), out)
	}
	for i, d := range draws {
		end := eraseLine
		if i == len(draws)-1 {
			end += "\n"
		}
		if !strings.HasSuffix(d, end) {
			t.Errorf("redraw %d %q does not end with %q", i, d, end)
		}
	}
	if last := draws[1]; !strings.Contains(last, "feasible 9 best 0.400") || !strings.Contains(last, "report 3/10") {
		t.Errorf("final bar %q: want the search's figures and the report phase's count", last)
	}
}
