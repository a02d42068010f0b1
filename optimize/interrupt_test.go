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

// TestPayloadsKeptByTheArchive: the record of every evaluation drops its
// payload (most of its memory), while the front, the nearest misses and
// the family bests keep theirs.
func TestPayloadsKeptByTheArchive(t *testing.T) {
	spec, err := objectives.LoadSpec(filepath.Join("..", "testdata", "specs", "strain-gauge.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	prob, err := NewStageProblem(spec)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Run(context.Background(), prob, Settings{Evaluations: 600, Seed: 2, Strategy: Hybrid})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range res.All {
		if c.Outcome.Payload != nil {
			t.Fatalf("evaluation %+v keeps its payload in All", c.Key)
		}
	}
	kept := append(append([]Candidate(nil), res.Front...), res.Nearest...)
	for _, fb := range res.BestOf {
		if fb.OK {
			kept = append(kept, fb.Candidate)
		}
	}
	if len(res.Front) == 0 || len(kept) == len(res.Front) {
		t.Fatalf("front %d, kept %d: the test needs both feasible and other candidates", len(res.Front), len(kept))
	}
	for _, c := range kept {
		if _, ok := c.Outcome.Payload.(*StageOutcome); !ok {
			t.Errorf("archived candidate %+v lost its payload", c.Key)
		}
	}
}
