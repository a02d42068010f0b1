package optimize

import (
	"fmt"
	"math"
	"math/rand"

	"github.com/MaxHalford/eaopt"
)

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
