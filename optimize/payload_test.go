package optimize

import (
	"context"
	"testing"
)

// payloadProblem is tiersProblem with every outcome carrying, as its
// payload, a copy of the point it belongs to.
type payloadProblem struct{ tiersProblem }

func (p *payloadProblem) Evaluate(pt Point) Outcome {
	o := p.tiersProblem.Evaluate(pt)
	o.Payload = pt.Clone()
	return o
}

// TestPayloadsKeptByTheArchive: the record of every evaluation drops its
// payload (most of its memory), while the front, the nearest misses and
// the family bests keep theirs — each its own.
func TestPayloadsKeptByTheArchive(t *testing.T) {
	res, err := Run(context.Background(), &payloadProblem{}, Settings{Evaluations: 600, Seed: 2, Strategy: Hybrid})
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
		pt, ok := c.Outcome.Payload.(Point)
		if !ok {
			t.Errorf("archived candidate %+v lost its payload", c.Key)
			continue
		}
		if pt.Family != c.Point.Family || pointKey(pt.X) != pointKey(c.Point.X) {
			t.Errorf("archived candidate %+v carries the payload of %+v", c.Key, pt)
		}
	}
}
