package sizing_test

import (
	"bytes"
	"context"
	"path/filepath"
	"testing"

	"pairsmith/objectives"
	"pairsmith/report"
	"pairsmith/sizing"
)

// TestSameSummaryForTheSameSeed: the demo spec searched twice with the
// same seed on two workers, and once on one, gives the same summary.json,
// byte for byte once the time taken is left out. The budget leaves the
// final refinement one run, whose two lanes are evaluated side by side,
// so the check covers the refinement on several cores too.
func TestSameSummaryForTheSameSeed(t *testing.T) {
	summary := func(workers int) []byte {
		t.Helper()
		spec, err := objectives.LoadSpec(filepath.Join("..", "testdata", "specs", "strain-gauge.yaml"))
		if err != nil {
			t.Fatal(err)
		}
		spec.Search.Evaluations, spec.Search.Workers = 2000, workers
		res, err := sizing.Search(context.Background(), spec, sizing.Options{})
		if err != nil {
			t.Fatal(err)
		}
		if len(res.Candidates) == 0 {
			t.Fatal("the search reports no candidate")
		}
		res.Elapsed = 0 // the only machine-dependent figure
		b, err := report.Summary(res, report.RunOptions{})
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	a, b, one := summary(2), summary(2), summary(1)
	if !bytes.Equal(a, b) {
		t.Errorf("two searches with the same seed on two workers differ:\n%s\n---\n%s", a, b)
	}
	if !bytes.Equal(a, one) {
		t.Errorf("the search on one worker differs from the search on two:\n%s\n---\n%s", one, a)
	}
}
