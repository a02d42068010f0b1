package sizing

import (
	"context"
	"errors"
	"path/filepath"
	"sync"
	"testing"

	"pairsmith/objectives"
	"pairsmith/optimize"
)

// TestSearchInterrupted: a search stopped by its context part-way still
// reports what it found — every evaluated family's best, re-evaluated
// through the path `eval` takes — and stops evaluating at once: no
// evaluation is recorded after the interrupt beyond those already under
// way on the workers (issue 7: an interrupted run writes a complete
// result).
func TestSearchInterrupted(t *testing.T) {
	spec, err := objectives.LoadSpec(filepath.Join("..", "testdata", "specs", "strain-gauge.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	spec.Search.Evaluations, spec.Search.Workers = 20000, 2
	const stopAt = 700
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var once sync.Once
	res, err := Search(ctx, spec, Options{Strategy: optimize.Hybrid, Progress: func(p optimize.Progress) {
		if p.Evaluations >= stopAt {
			once.Do(cancel)
		}
	}})
	if err != nil {
		t.Fatal(err)
	}
	// Those under way when it stopped finish: at most one per worker.
	if res.Evaluations < stopAt || res.Evaluations > stopAt+spec.Search.Workers {
		t.Errorf("%d evaluations recorded; stopped at %d on %d workers", res.Evaluations, stopAt, spec.Search.Workers)
	}
	if len(res.Candidates) == 0 {
		t.Fatal("an interrupted search reports no candidate")
	}
	for _, f := range res.Families {
		if f.Evaluations > 0 && f.Best == nil {
			t.Errorf("family %s was evaluated %d times but reports no best", f.Topology, f.Evaluations)
		}
	}
	for _, c := range res.Candidates {
		if c.Eval == nil || c.ID == "" {
			t.Errorf("candidate %+v was not re-evaluated", c)
		}
	}
}

// TestGatherLeavesOutFailedCandidates: a candidate worth reporting whose
// re-evaluation fails — here a current switch whose PMOS pair runs
// backwards (an objectives.UnphysicalError, the tail of 2 µA at 86 °C of
// objectives' own unphysical case) — is left out with its reason, and the
// rest of the result stands, instead of failing the whole run.
func TestGatherLeavesOutFailedCandidates(t *testing.T) {
	spec, err := objectives.ReadSpec("hot.yaml", []byte("process: demo18\nsupply: 1.8V\ntemperature: 86C\ntopologies: [current-switch]\n"), t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	prob, err := NewProblem(spec)
	if err != nil {
		t.Fatal(err)
	}
	good, _ := prob.Start(0)
	v := prob.Values(0, good)
	v["vref"], v["vhead"], v["itail"] = 0, 0.6, 2e-6
	bad := prob.Normalize(0, v)
	if _, err := objectives.Evaluate(prob.Design(optimize.Point{X: bad})); !errors.As(err, new(*objectives.UnphysicalError)) {
		t.Fatalf("the bad point evaluates with %v, want an UnphysicalError", err)
	}
	res := &optimize.Result{
		Front:   []optimize.Candidate{{Key: optimize.Key{Slot: 0}, Point: optimize.Point{X: good}}},
		Nearest: []optimize.Candidate{{Key: optimize.Key{Slot: 1}, Point: optimize.Point{X: bad}}},
		BestOf:  []optimize.FamilyBest{{Candidate: optimize.Candidate{Key: optimize.Key{Slot: 0}, Point: optimize.Point{X: good}}, OK: true}},
	}
	out, err := gather(context.Background(), prob, res, optimize.Settings{})
	if err != nil {
		t.Fatalf("gather: %v, want the bad candidate left out", err)
	}
	if len(out.Candidates) != 1 || out.Candidates[0].Key != (optimize.Key{Slot: 0}) {
		t.Errorf("reported %d candidates, want the good one alone", len(out.Candidates))
	}
	if len(out.Unreported) != 1 || !errors.As(out.Unreported[0], new(*objectives.UnphysicalError)) {
		t.Errorf("unreported %v, want the bad candidate's UnphysicalError", out.Unreported)
	}
}
