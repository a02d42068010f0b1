package optimize

import (
	"context"
	"fmt"
	"time"
)

// Strategy chooses how the budget is spent.
type Strategy int

// The strategies: the hybrid is the product's; the others are the
// baselines scripts/bench-search compares it with.
const (
	Hybrid     Strategy = iota // genetic islands, then Nelder–Mead on promising candidates
	Genetic                    // the genetic part alone
	NelderMead                 // multi-start Nelder–Mead alone, from the defaults and random points
	Random                     // uniform random points
)

// String names the strategy.
func (s Strategy) String() string {
	switch s {
	case Hybrid:
		return "hybrid"
	case Genetic:
		return "genetic"
	case NelderMead:
		return "nelder-mead"
	case Random:
		return "random"
	}
	return fmt.Sprintf("Strategy(%d)", int(s))
}

// Settings bound a search.
type Settings struct {
	// Evaluations is the budget of point evaluations (at least 1).
	Evaluations int
	// Deadline, when not zero, stops the search early (the result then
	// depends on the machine's speed).
	Deadline time.Time
	Seed     int64
	// Workers is the number of evaluations run at once; 0 means one per
	// core. It does not change the result.
	Workers  int
	Strategy Strategy
	// Progress, when set, is called after every evaluation with the state
	// of the search, from the evaluating goroutine.
	Progress func(Progress)
}

// Progress is the state of a running search.
type Progress struct {
	Evaluations int
	Budget      int
	Feasible    int     // feasible candidates so far
	Best        float64 // best score so far (see Score); +Inf before a feasible one
	Nearest     float64 // smallest total violation so far
	Elapsed     time.Duration
	Phase       string // "refine (defaults)", "genetic", "refine", "random", PhaseReport
	// Reported and Reporting count, in the "report" phase after the
	// search, the reported candidates re-evaluated so far and in all.
	Reported, Reporting int
}

// PhaseReport is the phase after the search, in which the reported
// candidates are evaluated again (see Search).
const PhaseReport = "report"

// Key orders evaluations independently of the order they finish in. The
// runs of a refinement, which proceed side by side, interleave: step k of
// every run comes before step k+1 of any.
type Key struct {
	Phase  int // the strategy's phase (the hybrid: 0, 1, 2)
	Gen    int // generation, or step within a refinement run
	Island int // family island, refinement run, or -1
	Slot   int // index within the generation
}

func (k Key) less(o Key) bool {
	if k.Phase != o.Phase {
		return k.Phase < o.Phase
	}
	if k.Gen != o.Gen {
		return k.Gen < o.Gen
	}
	if k.Island != o.Island {
		return k.Island < o.Island
	}
	return k.Slot < o.Slot
}

// Candidate is one evaluated point.
type Candidate struct {
	Key     Key
	Point   Point
	Outcome Outcome
}

// Result is what a search found.
type Result struct {
	// All holds every evaluation, in Key order, without its Payload
	// (Front, Nearest and BestOf keep theirs).
	All []Candidate
	// Front is the non-dominated set of the feasible candidates, sorted
	// by Score.
	Front []Candidate
	// Nearest are the nearest infeasible candidates (at most
	// NearestKept), nearest first: those without a hard violation
	// (Outcome.Hard) before the others, each by least violation.
	Nearest []Candidate
	// BestOf holds, for every family, its best feasible candidate by
	// Score or, if none is feasible, its least-violating one; a family
	// whose every point failed has none (ok false).
	BestOf []FamilyBest
	// FirstFeasible is the number of evaluations, in Key order, up to and
	// including the first feasible one; 0 if none.
	FirstFeasible int
	Evaluations   int
	Elapsed       time.Duration
	Stopped       bool // the deadline ended the search early
}

// FamilyBest is the best candidate of one family.
type FamilyBest struct {
	Family    int
	Candidate Candidate
	OK        bool
}

// NearestKept is how many infeasible candidates a result keeps.
const NearestKept = 10

// Scaler is implemented by problems whose objectives have natural scales
// (a target limit, say); Score and the refinement divide by them. Without
// it every scale is 1.
type Scaler interface {
	Scales() []float64
}

// Starter is implemented by problems that know a good point of a family
// (its defaults), which the search puts in the first generation and among
// the refinement starts.
type Starter interface {
	Start(family int) ([]float64, bool)
}

// Namer is implemented by problems whose families name their parameters,
// so that migrants between islands keep the values of the parameters two
// families share.
type Namer interface {
	ParamNames(family int) []string
}

// How the hybrid shares its budget: each refinement takes at most a
// quarter, the first at most hybridFirstPerFamily evaluations a family and
// the last at most hybridFinalMax; the islands take the rest. (Measured
// with scripts/bench-search; see DEVELOPERS.md.)
const (
	hybridFirstPerFamily = 120
	hybridFinalMax       = 500
)

// Run searches the problem within the settings.
func Run(ctx context.Context, prob Problem, set Settings) (*Result, error) {
	r, err := newRunner(ctx, prob, set)
	if err != nil {
		return nil, err
	}
	fams := r.fams
	switch set.Strategy {
	case Hybrid:
		// Exploit, explore, exploit: Nelder–Mead from every family's
		// defaults; the islands, half of each first population taken
		// from what it found, already evaluated; Nelder–Mead
		// again from the members the front's hypervolume owes most to.
		first := min(set.Evaluations/4, hybridFirstPerFamily*len(fams))
		ga := set.Evaluations - first - min(set.Evaluations/4, hybridFinalMax)
		if _, ok := prob.(Starter); !ok {
			// Without defaults to start from, the islands take the
			// first share too.
			first, ga = 0, first+ga
		}
		if ga < 2*len(fams)*minPop {
			first, ga = 0, set.Evaluations // too small a budget to share
		}
		r.phase = 0
		if err = r.refine(first, true); err == nil {
			r.phase = 1
			if err = r.genetic(ga); err == nil {
				r.phase = 2
				err = r.refine(set.Evaluations-r.count(), false)
			}
		}
	case Genetic:
		err = r.genetic(set.Evaluations)
	case NelderMead:
		err = r.refine(set.Evaluations, false)
	case Random:
		err = r.random(set.Evaluations)
	default:
		err = fmt.Errorf("optimize: unknown strategy %v", set.Strategy)
	}
	if err != nil {
		return nil, err
	}
	return r.result(), nil
}
