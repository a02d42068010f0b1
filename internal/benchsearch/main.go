// Command benchsearch compares the hybrid search with its baselines —
// random search, the genetic part alone and multi-start Nelder–Mead alone —
// on demo spec sheets: the hypervolume each reaches at equal evaluation
// budgets (the median over seeds) and the evaluations each needs to its
// first feasible design. scripts/bench-search runs it.
//
// The hypervolume is that of the feasible front on the spec's trade-off
// axes, each divided by its natural scale (the spec's budget on it), with
// the ideal point at 0 and the reference point at 1 on every axis: the
// fraction of the budget box the front dominates.
package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"sort"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"pairsmith/objectives"
	"pairsmith/optimize"
	"pairsmith/sizing"
)

func main() {
	specs := flag.String("specs", "testdata/specs/strain-gauge.yaml,testdata/specs/sensor-l1.yaml", "comma-separated spec sheets")
	budgets := flag.String("budgets", "1000,3000,10000", "comma-separated evaluation budgets")
	seeds := flag.Int("seeds", 5, "seeds per case (medians are taken over them)")
	verbose := flag.Bool("v", false, "also print every seed's hypervolume on stderr")
	flag.Parse()
	if err := run(strings.Split(*specs, ","), *budgets, *seeds, *verbose); err != nil {
		fmt.Fprintln(os.Stderr, "benchsearch:", err)
		os.Exit(1)
	}
}

type cell struct {
	hv    []float64
	first []int // 0 = no feasible design found
}

func run(specFiles []string, budgetList string, seeds int, verbose bool) error {
	var budgets []int
	for _, b := range strings.Split(budgetList, ",") {
		n, err := strconv.Atoi(strings.TrimSpace(b))
		if err != nil || n < 1 {
			return fmt.Errorf("budget %q: want a positive whole number", b)
		}
		budgets = append(budgets, n)
	}
	strategies := []optimize.Strategy{optimize.Hybrid, optimize.Genetic, optimize.NelderMead, optimize.Random}
	start := time.Now()
	for _, file := range specFiles {
		spec, err := objectives.LoadSpec(file)
		if err != nil {
			return err
		}
		prob, err := sizing.NewProblem(spec)
		if err != nil {
			return err
		}
		scales := prob.Scales()
		ideal := make([]float64, len(scales))
		cells := map[[2]int]*cell{}
		for bi, budget := range budgets {
			for si, s := range strategies {
				c := &cell{}
				for seed := 1; seed <= seeds; seed++ {
					res, err := optimize.Run(context.Background(), prob, optimize.Settings{
						Evaluations: budget, Seed: int64(seed), Strategy: s})
					if err != nil {
						return err
					}
					var pts [][]float64
					for _, f := range res.Front {
						pts = append(pts, f.Outcome.Objectives)
					}
					c.hv = append(c.hv, optimize.NormalizedHypervolume(pts, ideal, scales))
					c.first = append(c.first, res.FirstFeasible)
				}
				cells[[2]int{bi, si}] = c
				if verbose {
					fmt.Fprintf(os.Stderr, "%s %d %v: %.4f\n", file, budget, s, c.hv)
				}
			}
		}
		fmt.Printf("%s — %s (axes %s; hypervolume of the feasible front in the budget box, median of %d seeds)\n",
			file, spec.Name, strings.Join(spec.Pareto, ", "), seeds)
		w := tabwriter.NewWriter(os.Stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprint(w, "budget\t")
		for _, s := range strategies {
			fmt.Fprintf(w, "%s\t", s)
		}
		fmt.Fprintln(w, "hybrid ≥ all\t")
		for bi, budget := range budgets {
			fmt.Fprintf(w, "%d\t", budget)
			hyb := median(cells[[2]int{bi, 0}].hv)
			ok := true
			for si := range strategies {
				m := median(cells[[2]int{bi, si}].hv)
				fmt.Fprintf(w, "%.4f\t", m)
				if m > hyb {
					ok = false
				}
			}
			fmt.Fprintf(w, "%v\t\n", ok)
		}
		w.Flush()
		fmt.Println("evaluations to the first feasible design (median; — when most seeds found none):")
		w = tabwriter.NewWriter(os.Stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprint(w, "budget\t")
		for _, s := range strategies {
			fmt.Fprintf(w, "%s\t", s)
		}
		fmt.Fprintln(w)
		for bi, budget := range budgets {
			fmt.Fprintf(w, "%d\t", budget)
			for si := range strategies {
				fmt.Fprintf(w, "%s\t", firstText(cells[[2]int{bi, si}].first))
			}
			fmt.Fprintln(w)
		}
		w.Flush()
		fmt.Println()
	}
	fmt.Printf("took %.0f s\n", time.Since(start).Seconds())
	return nil
}

func median(xs []float64) float64 {
	s := append([]float64(nil), xs...)
	sort.Float64s(s)
	n := len(s)
	if n == 0 {
		return 0
	}
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// firstText is the median evaluations to the first feasible design, a
// run that found none counting as worse than any that did.
func firstText(first []int) string {
	s := make([]int, len(first))
	for i, f := range first {
		if f == 0 {
			f = int(^uint(0) >> 1)
		}
		s[i] = f
	}
	sort.Ints(s)
	m := s[len(s)/2]
	if m == int(^uint(0)>>1) {
		return "—"
	}
	return strconv.Itoa(m)
}
