package optimize

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand"
	"runtime"
	"slices"
	"sort"
	"sync"
	"time"

	"github.com/MaxHalford/eaopt"
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
	// Nearest are the least-violating infeasible candidates (at most
	// NearestKept), least violation first.
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

// runner carries one search.
type runner struct {
	ctx      context.Context
	prob     Problem
	fams     []Family
	scales   []float64
	set      Settings
	start    time.Time
	sem      chan struct{}
	mu       sync.Mutex
	all      []Candidate
	arch     *archive
	feasible int
	best     float64
	nearest  float64
	stopped  bool
	// retired marks islands the genetic search no longer spends on, and
	// resting those that sit out the next generation.
	retired, resting []bool
	// phase numbers the keys of the current phase of the strategy.
	phase int
}

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

// newRunner checks the problem and the settings and prepares a search.
func newRunner(ctx context.Context, prob Problem, set Settings) (*runner, error) {
	fams := prob.Families()
	if len(fams) == 0 {
		return nil, errors.New("optimize: the problem has no families")
	}
	for _, f := range fams {
		if f.Dim < 1 {
			return nil, fmt.Errorf("optimize: family %s has no parameters", f.Name)
		}
	}
	if set.Evaluations < 1 {
		return nil, fmt.Errorf("optimize: budget of %d evaluations, want at least 1", set.Evaluations)
	}
	workers := set.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	if ctx == nil {
		ctx = context.Background()
	}
	r := &runner{
		ctx:  ctx,
		prob: prob, fams: fams, set: set, start: time.Now(),
		sem: make(chan struct{}, workers), best: math.Inf(1), nearest: math.Inf(1),
	}
	r.scales = make([]float64, prob.Objectives())
	for i := range r.scales {
		r.scales[i] = 1
	}
	if sc, ok := prob.(Scaler); ok {
		for i, v := range sc.Scales() {
			if i < len(r.scales) && v > 0 {
				r.scales[i] = v
			}
		}
	}
	r.arch = newArchive(len(fams), r.scales)
	return r, nil
}

// snapshot returns a copy of the evaluations so far, in Key order.
func (r *runner) snapshot() []Candidate {
	r.mu.Lock()
	all := append([]Candidate(nil), r.all...)
	r.mu.Unlock()
	sort.Slice(all, func(i, j int) bool { return all[i].Key.less(all[j].Key) })
	return all
}

// count returns the number of evaluations so far.
func (r *runner) count() int {
	r.mu.Lock()
	defer r.mu.Unlock()
	return len(r.all)
}

// expired reports whether the context or the deadline ends the search.
func (r *runner) expired() bool {
	if r.ctx.Err() != nil {
		return true
	}
	if !r.set.Deadline.IsZero() && time.Now().After(r.set.Deadline) {
		r.mu.Lock()
		r.stopped = true
		r.mu.Unlock()
		return true
	}
	return false
}

// evaluate evaluates one point on a worker slot and records it. Once the
// search has expired it evaluates and records nothing, and returns a
// failed outcome, so that whatever phase is under way winds down at once.
func (r *runner) evaluate(key Key, p Point) Outcome {
	r.sem <- struct{}{}
	if r.expired() {
		<-r.sem
		return Outcome{Failed: true}
	}
	o := r.prob.Evaluate(p)
	<-r.sem
	r.mu.Lock()
	c := Candidate{Key: key, Point: p.Clone(), Outcome: o}
	r.arch.add(c)
	// The record of every evaluation keeps no payload: only the
	// archive's members need theirs, and a payload (a stage's metrics
	// and violations) is most of an evaluation's memory.
	c.Outcome.Payload = nil
	r.all = append(r.all, c)
	if o.Feasible() {
		r.feasible++
		r.best = math.Min(r.best, Score(o.Objectives, r.scales, nil))
	} else if !o.Failed {
		r.nearest = math.Min(r.nearest, o.Violation())
	}
	pr := Progress{Evaluations: len(r.all), Budget: r.set.Evaluations, Feasible: r.feasible,
		Best: r.best, Nearest: r.nearest, Elapsed: time.Since(r.start), Phase: phaseName(key.Phase, r.set.Strategy)}
	r.mu.Unlock()
	if r.set.Progress != nil {
		r.set.Progress(pr)
	}
	return o
}

func phaseName(phase int, s Strategy) string {
	switch s {
	case Random:
		return "random"
	case Genetic:
		return "genetic"
	case NelderMead:
		return "refine"
	}
	return [...]string{"refine (defaults)", "genetic", "refine"}[min(phase, 2)]
}

// evaluateAll evaluates genomes concurrently (up to the worker limit).
func (r *runner) evaluateAll(gs []*genome) {
	var wg sync.WaitGroup
	for _, g := range gs {
		if g.out != nil {
			continue
		}
		wg.Add(1)
		go func(g *genome) {
			defer wg.Done()
			o := r.evaluate(g.key, g.pt)
			g.out = &o
		}(g)
	}
	wg.Wait()
}

// random spends the budget on uniform random points, round robin over
// the families.
func (r *runner) random(budget int) error {
	rng := rand.New(rand.NewSource(r.set.Seed))
	const batch = 64
	for done := 0; done < budget && !r.expired(); done += batch {
		var gs []*genome
		for k := done; k < min(done+batch, budget); k++ {
			f := k % len(r.fams)
			x := make([]float64, r.fams[f].Dim)
			for i := range x {
				x[i] = rng.Float64()
			}
			gs = append(gs, &genome{run: r, key: Key{Phase: r.phase, Gen: k / batch, Island: -1, Slot: k % batch}, pt: Point{Family: f, X: x}})
		}
		r.evaluateAll(gs)
	}
	return nil
}

// result assembles the Result from the archive and every evaluation, in
// Key order.
func (r *runner) result() *Result {
	all := r.snapshot()
	r.mu.Lock()
	defer r.mu.Unlock()
	res := r.arch.result(all)
	res.Elapsed, res.Stopped = time.Since(r.start), r.stopped
	return res
}

// result returns what the archive holds as a Result over all, the
// evaluations it was given in Key order.
func (a *archive) result(all []Candidate) *Result {
	res := &Result{All: all, Evaluations: len(all), Front: a.sortedFront(),
		Nearest: slices.Clone(a.nearest), BestOf: slices.Clone(a.best)}
	if a.anyFeasible {
		// The first feasible key's place in Key order.
		res.FirstFeasible = sort.Search(len(all), func(i int) bool { return !all[i].Key.less(a.firstFeasible) }) + 1
	}
	return res
}

// better reports whether a is preferable to b under Deb's feasibility
// rules, feasible ones compared by Score.
func better(a, b Outcome, scales []float64) bool {
	af, bf := a.Feasible(), b.Feasible()
	switch {
	case af && !bf:
		return true
	case !af && bf:
		return false
	case !af:
		return a.Violation() < b.Violation()
	}
	return Score(a.Objectives, scales, nil) < Score(b.Objectives, scales, nil)
}

// seedGenomes returns, for every family, up to k of its evaluated
// candidates, chosen as NSGA-II chooses survivors (so spread along the
// family's front, not only its best), as genomes that keep their outcomes.
func (r *runner) seedGenomes(k int) [][]*genome {
	all := r.snapshot()
	out := make([][]*genome, len(r.fams))
	if k <= 0 {
		return out
	}
	for f := range r.fams {
		var mine []*genome
		for _, c := range all {
			if c.Point.Family == f && !c.Outcome.Failed {
				o := c.Outcome
				mine = append(mine, &genome{run: r, key: c.Key, pt: c.Point.Clone(), out: &o})
			}
		}
		if len(mine) > k {
			mine = environmental(mine, k)
		}
		out[f] = mine
	}
	return out
}

// retireAfter is the generation from which hopeless islands retire, and
// retireRatio the least violation above which a family is hopeless while
// another is feasible: ten times that of a target missed by its whole
// limit, a single pair asked for a rail-to-rail range, say.
const (
	retireAfter = 3
	retireRatio = 10
)

// familyVerdicts judges the families of nfam on the candidates so far,
// when some candidate is feasible (with none feasible, no family is
// judged): a family is hopeless when it was evaluated and every candidate
// failed or misses by more than retireRatio, and unmet when none of its
// candidates is feasible.
func familyVerdicts(cands []Candidate, nfam int) (hopeless, unmet []bool) {
	least := make([]float64, nfam)
	seen := make([]bool, nfam)
	met := make([]bool, nfam)
	for f := range least {
		least[f] = math.Inf(1)
	}
	anyMet := false
	for _, c := range cands {
		f := c.Point.Family
		seen[f] = true
		if c.Outcome.Failed {
			continue
		}
		least[f] = math.Min(least[f], c.Outcome.Violation())
		if c.Outcome.Feasible() {
			met[f], anyMet = true, true
		}
	}
	hopeless, unmet = make([]bool, nfam), make([]bool, nfam)
	for f := range nfam {
		hopeless[f] = anyMet && seen[f] && least[f] > retireRatio
		unmet[f] = anyMet && !met[f]
	}
	return hopeless, unmet
}

// judge prepares generation next (0 before the islands start): it retires
// the islands of the families every evaluation so far shows hopeless
// (before the start, on the earlier phases' evidence, then from generation
// retireAfter+1 on) and rests the unmet ones from generation retireAfter+1
// on, except on every restEvery-th generation. It runs when no evaluation
// is under way, so deterministically.
func (r *runner) judge(next int) {
	r.mu.Lock()
	defer r.mu.Unlock()
	hopeless, unmet := familyVerdicts(r.all, len(r.fams))
	clear(r.resting)
	if next > 0 && next <= retireAfter {
		return
	}
	for f, h := range hopeless {
		r.retired[f] = r.retired[f] || h
	}
	if next > retireAfter && next%restEvery != 0 {
		copy(r.resting, unmet)
	}
}

// restEvery is how often an island without a feasible candidate evolves
// while another island has one: it sits out all but one generation in
// restEvery, so the budget goes to the families that can meet the spec,
// yet keeps looking (and, the first time one of its candidates is
// feasible, is back at every generation). A family that cannot meet a
// target at all, a complementary pair asked for little ripple, say, would
// otherwise take as much as the best.
const restEvery = 4

// idle reports whether island f spends nothing in the coming generation.
func (r *runner) idle(f int) bool {
	return r.retired != nil && (r.retired[f] || r.resting[f])
}

// minPop is the smallest island population.
const minPop = 8

// islandPop is the population of each of nf islands sharing budget
// evaluations: about 1.2·√(budget per island), enough generations to
// converge and enough members to spread along a front; even, so that
// children come in pairs.
func islandPop(budget, nf int) int {
	pop := int(math.Round(1.2 * math.Sqrt(float64(budget)/float64(nf))))
	pop = max(minPop, min(100, pop))
	pop += pop % 2
	if pop*nf > budget {
		// Not even one generation: spend the budget on the first one.
		pop = max(2, budget/nf)
		pop -= pop % 2
	}
	return pop
}

// genetic runs the islands with eaopt within the budget. Each island's
// first population takes up to half its members from the family's earlier
// candidates (the hybrid's first refinement), outcomes and all, so they
// cost nothing; without any it holds the family's defaults; random points
// fill the rest. An island retired before the start holds only its
// earlier candidates.
func (r *runner) genetic(budget int) error {
	nf := len(r.fams)
	pop := islandPop(budget, nf)
	gens := (budget - pop*nf) / (pop * nf)
	r.retired, r.resting = make([]bool, nf), make([]bool, nf)
	limit := r.count() + budget
	seeds := r.seedGenomes(pop / 2)
	r.judge(0)
	made := 0
	newGenome := func(rng *rand.Rand) eaopt.Genome {
		island := made / pop
		slot := made % pop
		made++
		f := r.fams[island]
		x := make([]float64, f.Dim)
		switch {
		case slot < len(seeds[island]):
			return seeds[island][slot]
		case r.retired[island] && len(seeds[island]) > 0:
			// Retired before it starts: the island holds what the
			// family reached and spends nothing.
			return seeds[island][slot%len(seeds[island])].Clone()
		case slot == 0:
			if def, ok := r.defaults(island); ok {
				copy(x, def)
				break
			}
			fallthrough
		default:
			for i := range x {
				x[i] = rng.Float64()
			}
		}
		return &genome{run: r, key: Key{Phase: r.phase, Gen: 0, Island: island, Slot: slot}, pt: Point{Family: island, X: x}}
	}
	conf := eaopt.GAConfig{
		NPops:   uint(nf),
		PopSize: uint(pop),
		// As many generations as the budget allows: retiring hopeless
		// islands leaves more for the others, and EarlyStop ends the
		// search once a generation could overrun the budget.
		NGenerations: uint(max(gens, 1) * nf),
		HofSize:      1,
		Model:        &nsgaModel{run: r},
		ParallelEval: true,
		RNG:          rand.New(rand.NewSource(r.set.Seed)),
		EarlyStop: func(ga *eaopt.GA) bool {
			active := 0
			for f := range r.fams {
				if !r.idle(f) {
					active++
				}
			}
			return r.expired() || gens < 1 || r.count()+active*pop > limit
		},
		Callback: func(ga *eaopt.GA) {
			r.judge(int(ga.Generations) + 1)
		},
	}
	if n, ok := r.prob.(Namer); ok && nf > 1 {
		conf.Migrator = &translatingMigrator{run: r, names: n}
		conf.MigFrequency = 5
	}
	ga, err := conf.NewGA()
	if err != nil {
		return fmt.Errorf("optimize: genetic search: %w", err)
	}
	if err := ga.Minimize(newGenome); err != nil {
		return fmt.Errorf("optimize: genetic search: %w", err)
	}
	return nil
}
