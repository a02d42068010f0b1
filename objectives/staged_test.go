package objectives_test

import (
	"fmt"
	"math"
	"reflect"
	"testing"

	"pairsmith/objectives"
	"pairsmith/topologies"
)

// TestMeasureStaged: the two looks of a search give what one
// measurement at each step gives — the coarse look bit for bit (the same
// sweep from scratch), the fine one, which starts from the coarse sweep's
// first solution, within the solver's tolerance (1e-5 relative on every
// metric, 1e-6 V on every finding's value: our own bounds, no source,
// well inside the search's 0.5 % guard band) with the same findings —
// for every family at its defaults on the level-1 demo process; and a
// coarse look from a reference solution (FirstSolution) within the same
// bounds.
func TestMeasureStaged(t *testing.T) {
	const coarse = 0.05
	near := func(a, b, tol float64) bool {
		return a == b || (math.IsNaN(a) && math.IsNaN(b)) || math.Abs(a-b) <= tol*math.Max(math.Abs(a), math.Abs(b))
	}
	for _, f := range topologies.All() {
		t.Run(f.Name(), func(t *testing.T) {
			d := design(t, f.Name(), nil)
			c := *d
			c.Sweep.Step = coarse
			wantC, wantCF, err := objectives.MeasureCached(&c, nil)
			if err != nil {
				t.Fatal(err)
			}
			wantF, wantFF, err := objectives.MeasureCached(d, nil)
			if err != nil {
				t.Fatal(err)
			}
			var cache objectives.SolverCache
			var seen objectives.Metrics
			var seenF []objectives.Finding
			m, fs, fine, err := objectives.MeasureStaged(d, &cache, coarse, nil, func(m objectives.Metrics, fs []objectives.Finding) bool { seen, seenF = m, fs; return true })
			if err != nil || fine {
				t.Fatalf("rejected: fine %v, err %v", fine, err)
			}
			if !same(m, wantC) || !same(seen, wantC) || !same(fs, wantCF) || !same(seenF, wantCF) {
				t.Errorf("rejected on the coarse look: %+v %v, want MeasureCached's at %g V: %+v %v", m, fs, coarse, wantC, wantCF)
			}
			m, fs, fine, err = objectives.MeasureStaged(d, &cache, coarse, nil, func(objectives.Metrics, []objectives.Finding) bool { return false })
			if err != nil || !fine {
				t.Fatalf("kept: fine %v, err %v", fine, err)
			}
			got, want := reflect.ValueOf(m), reflect.ValueOf(wantF)
			for i := range got.NumField() {
				if a, b := got.Field(i).Float(), want.Field(i).Float(); !near(a, b, 1e-5) {
					t.Errorf("kept: %s %g, want MeasureCached's %g", got.Type().Field(i).Name, a, b)
				}
			}
			if len(fs) != len(wantFF) {
				t.Fatalf("kept: %d findings, want MeasureCached's %d: %v, %v", len(fs), len(wantFF), fs, wantFF)
			}
			for i := range fs {
				a, b := fs[i], wantFF[i]
				if a.Check != b.Check || a.Device != b.Device || math.Abs(a.Value-b.Value) > 1e-6 {
					t.Errorf("kept: finding %v, want %v", a, b)
				}
			}
			// From a reference solution (here the design's own first
			// point, solved from scratch): the coarse look within the
			// same bounds of the one from the guess.
			ref, err := objectives.FirstSolution(d)
			if err != nil {
				t.Fatal(err)
			}
			m, _, fine, err = objectives.MeasureStaged(d, &cache, coarse, ref, func(objectives.Metrics, []objectives.Finding) bool { return true })
			if err != nil || fine {
				t.Fatalf("from the reference: fine %v, err %v", fine, err)
			}
			got, want = reflect.ValueOf(m), reflect.ValueOf(wantC)
			for i := range got.NumField() {
				if a, b := got.Field(i).Float(), want.Field(i).Float(); !near(a, b, 1e-5) {
					t.Errorf("from the reference: %s %g, want MeasureCached's %g", got.Type().Field(i).Name, a, b)
				}
			}
			// A design swept no finer than the coarse step has one look.
			d.Sweep.Step = 0.1
			wantOne, _, err := objectives.MeasureCached(d, nil)
			if err != nil {
				t.Fatal(err)
			}
			if m, _, fine, err := objectives.MeasureStaged(d, &cache, coarse, nil, func(objectives.Metrics, []objectives.Finding) bool { return false }); err != nil || fine || !same(m, wantOne) {
				t.Errorf("step 0.1 V: fine %v, err %v, %+v; want one look, %+v", fine, err, m, wantOne)
			}
		})
	}
}

// same reports whether a and b print alike with %v: bit for bit for
// their floats (Go prints the shortest decimal that reads back to the
// same float), NaN equal to NaN.
func same(a, b any) bool { return fmt.Sprint(a) == fmt.Sprint(b) }
