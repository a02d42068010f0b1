package optimize

import (
	"context"
	"path/filepath"
	"sync"
	"testing"

	"pairsmith/objectives"
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
	res, err := Search(ctx, spec, SearchOptions{Strategy: Hybrid, Progress: func(p Progress) {
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
