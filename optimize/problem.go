// Package optimize searches a mixed space — a choice among families, each
// with a box of continuous parameters — for the trade-offs between several
// objectives under constraints. A genetic algorithm (github.com/MaxHalford/
// eaopt) with a Pareto-ranking population update explores, one island per
// family; Nelder–Mead (gonum.org/v1/gonum/optimize) then refines promising
// candidates on a scalarised objective; an archive keeps every
// non-dominated feasible candidate and the nearest infeasible ones.
//
// The package knows nothing of circuits: a Problem says how many
// parameters each family has and evaluates a point. Everything is
// deterministic for a given problem, seed and budget, whatever the number
// of workers evaluating in parallel.
package optimize

// Family is one branch of the search space: Dim parameters, each searched
// on [0, 1] (the problem maps them to physical values, log or linear).
type Family struct {
	Name string
	Dim  int
}

// Point is one candidate: a family and its normalised coordinates.
type Point struct {
	Family int       // index into Problem.Families()
	X      []float64 // in [0, 1]^Dim
}

// Clone returns a deep copy.
func (p Point) Clone() Point { return Point{Family: p.Family, X: append([]float64(nil), p.X...)} }

// Outcome is the evaluation of a point.
type Outcome struct {
	// Objectives are minimised; every outcome of a problem has as many.
	// They are meaningful only when Failed is false.
	Objectives []float64
	// Violations are the constraints' normalised violations, each ≥ 0,
	// zero when met; their sum is the total violation that Deb's rules
	// compare (K. Deb, "An efficient constraint handling method for
	// genetic algorithms", Comput. Methods Appl. Mech. Engrg. 186, 2000).
	Violations []float64
	// Hard is the part of the total violation owed to hard constraints:
	// those a reported candidate must meet even while it misses the rest
	// (a circuit that cannot be built). Among infeasible outcomes, one
	// without a hard violation is preferred to one with, whatever their
	// totals, by each family's best and the nearest misses (better);
	// Deb's rules in the search's selection use the total alone.
	Hard float64
	// Failed marks a point the problem could not evaluate (a circuit with
	// no DC solution); it ranks below every evaluated point.
	Failed bool
	// Payload is whatever the problem wants back with the candidate.
	Payload any
}

// Violation returns the total constraint violation.
func (o Outcome) Violation() float64 {
	v := 0.0
	for _, x := range o.Violations {
		v += x
	}
	return v
}

// Feasible reports whether the point was evaluated and meets every
// constraint.
func (o Outcome) Feasible() bool { return !o.Failed && o.Violation() == 0 }

// Problem is what the search optimises. Evaluate must be safe for
// concurrent use and deterministic: the same point gives the same outcome.
type Problem interface {
	Families() []Family
	// Objectives returns the number of objectives.
	Objectives() int
	Evaluate(p Point) Outcome
}
