package optimize

import "math"

// rhoTchebycheff is the augmentation of the Tchebycheff scalarisation.
const rhoTchebycheff = 0.01

// Score scalarises objectives by the augmented weighted Tchebycheff
// function with the ideal point at zero (R. E. Steuer, E.-U. Choo, "An
// interactive weighted Tchebycheff procedure for multiple objective
// programming", Mathematical Programming 26, 1983):
// max_i w_i·f_i/s_i + ρ·Σ_i w_i·f_i/s_i, with ρ = 0.01. With the weights
// all 1 and the scales the budgets, a score below 1 means every objective
// is within its budget, and the score is the largest fraction used.
func Score(obj, scales, weights []float64) float64 {
	mx, sum := math.Inf(-1), 0.0
	for i, f := range obj {
		s, w := 1.0, 1.0
		if i < len(scales) && scales[i] > 0 {
			s = scales[i]
		}
		if i < len(weights) {
			w = weights[i]
		}
		v := w * f / s
		mx = math.Max(mx, v)
		sum += v
	}
	return mx + rhoTchebycheff*sum
}

// better reports whether a is preferable to b under Deb's feasibility
// rules, feasible ones compared by Score, infeasible ones without a hard
// violation (Outcome.Hard) before those with one, then by violation.
func better(a, b Outcome, scales []float64) bool {
	af, bf := a.Feasible(), b.Feasible()
	switch {
	case af && !bf:
		return true
	case !af && bf:
		return false
	case !af:
		return nearer(a, b)
	}
	return Score(a.Objectives, scales, nil) < Score(b.Objectives, scales, nil)
}

// Prefer reports whether candidate a goes before b in the order that
// chooses a family's best (Result.BestOf): a failed evaluation last, then
// Deb's rules as the archive applies them (feasible by Score, infeasible
// ones without a hard violation first, then by violation), ties to the
// smaller key.
func Prefer(a, b Candidate, scales []float64) bool {
	switch {
	case a.Outcome.Failed != b.Outcome.Failed:
		return !a.Outcome.Failed
	case better(a.Outcome, b.Outcome, scales):
		return true
	case better(b.Outcome, a.Outcome, scales):
		return false
	}
	return a.Key.less(b.Key)
}

// nearer reports whether infeasible a is a nearer miss than b: without a
// hard violation where b has one, or else of smaller total violation.
func nearer(a, b Outcome) bool {
	if ah, bh := a.Hard > 0, b.Hard > 0; ah != bh {
		return !ah
	}
	return a.Violation() < b.Violation()
}
