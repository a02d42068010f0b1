package optimize

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/floats"
)

// lanesPass is one pass of Nelder–Mead that moves the lanes worst
// vertices of the simplex at once, after D. Lee and M. Wiswall, "A
// parallel implementation of the simplex function minimization routine",
// Computational Economics 30(2), 2007: each of them is reflected through
// the centroid of the other vertices, and the points of one step —
// first the reflections, then the expansions and contractions they call
// for — are evaluated side by side. Each lane then follows the rules of
// J. A. Nelder and R. Mead (The Computer Journal 7(4), 1965) with the
// kept vertices' worst in the place of the second worst; the simplex
// shrinks towards its best vertex only when no lane improved its vertex.
// At most half the vertices move at once (fewer lanes in fewer than four
// dimensions).
// The coefficients depend on the dimension as in gonum's NelderMead (F.
// Gao, L. Han, "Implementing the Nelder-Mead simplex algorithm with
// adaptive parameters", Comput. Optim. Appl. 51, 2012), and the pass
// starts from the same simplex as gonum's, x0 and x0 + size·e_i: with
// one lane it takes gonum's steps (TestLanesOneIsGonum). It ends when the
// objective is spent or after convergeSteps(d) lane steps without
// progress of the best vertex.
func (o *runObjective) lanesPass(x0 []float64, size float64, lanes int) {
	d := len(x0)
	if d == 0 {
		return
	}
	refl, expa, contr, shrink := 1.0, 1+2/float64(d), 0.75-1/(2*float64(d)), 1-1/float64(d)
	if d == 1 {
		expa, contr, shrink = 2, 0.5, 0.5
	}
	// At most half the vertices move at once, so that the centroid
	// stays that of most of the simplex (with one vertex left, two
	// reflections through it just flip the simplex over).
	p := max(1, min(lanes, d/2))
	kept := d + 1 - p

	// The simplex in gonum's order: x0 last, then sorted by value.
	verts := make([][]float64, d+1)
	vals := make([]float64, d+1)
	f0 := o.value(x0)
	verts[d], vals[d] = append([]float64(nil), x0...), f0
	for i := 0; i < d; i++ {
		verts[i] = append([]float64(nil), x0...)
		verts[i][i] += size
	}
	copy(vals, o.values(verts[:d]))
	sorter := nmSorter{verts, vals}
	sort.Sort(sorter)
	conv := converger{best: f0, limit: convergeSteps(d)}
	if conv.step(vals[0], 1) {
		return
	}

	centroid := make([]float64, d)
	// at returns c + scale·(c − x), computed as gonum computes it.
	at := func(x []float64, scale float64) []float64 {
		y := make([]float64, d)
		floats.SubTo(y, centroid, x)
		floats.Scale(scale, y)
		floats.Add(y, centroid)
		return y
	}
	const (
		accept = iota
		expand
		outside
		inside
	)
	for !o.spent() {
		for i := range centroid {
			centroid[i] = 0
		}
		for _, v := range verts[:kept] {
			floats.Add(centroid, v)
		}
		floats.Scale(1/float64(kept), centroid)

		// Reflections of the p worst vertices, side by side.
		rs := make([][]float64, p)
		for j := range rs {
			rs[j] = at(verts[kept+j], refl)
		}
		fr := o.values(rs)
		// What each reflection calls for, and those points side by side.
		move := make([]int, p)
		var next [][]float64
		var nextOf []int
		for j := range rs {
			w := kept + j
			switch {
			case fr[j] < vals[0]:
				move[j] = expand
				next = append(next, at(verts[w], refl*expa))
			case fr[j] < vals[kept-1]:
				move[j] = accept
				continue
			case fr[j] < vals[w]:
				move[j] = outside
				next = append(next, at(verts[w], refl*contr))
			default:
				move[j] = inside
				next = append(next, at(verts[w], -contr))
			}
			nextOf = append(nextOf, j)
		}
		fn := make([]float64, p)
		pts := make([][]float64, p)
		for k, v := range o.values(next) {
			fn[nextOf[k]], pts[nextOf[k]] = v, next[k]
		}
		improved := false
		for j := range rs {
			w := kept + j
			x, fx, ok := rs[j], fr[j], true
			switch move[j] {
			case expand:
				if fn[j] < fr[j] {
					x, fx = pts[j], fn[j]
				}
			case outside:
				ok = fn[j] <= fr[j]
				x, fx = pts[j], fn[j]
			case inside:
				ok = fn[j] < vals[w]
				x, fx = pts[j], fn[j]
			}
			if ok {
				verts[w], vals[w], improved = x, fx, true
			}
		}
		if !improved {
			// Shrink towards the best vertex, side by side.
			for i := 1; i <= d; i++ {
				y := make([]float64, d)
				floats.SubTo(y, verts[i], verts[0])
				floats.Scale(shrink, y)
				floats.Add(y, verts[0])
				verts[i] = y
			}
			copy(vals[1:], o.values(verts[1:]))
		}
		sort.Sort(sorter)
		if conv.step(vals[0], p) {
			return
		}
	}
}

// nmSorter sorts a simplex's vertices by value.
type nmSorter struct {
	verts [][]float64
	vals  []float64
}

func (s nmSorter) Len() int           { return len(s.vals) }
func (s nmSorter) Less(i, j int) bool { return s.vals[i] < s.vals[j] }
func (s nmSorter) Swap(i, j int) {
	s.vals[i], s.vals[j] = s.vals[j], s.vals[i]
	s.verts[i], s.verts[j] = s.verts[j], s.verts[i]
}

// converger ends a pass after limit steps in which the best value did
// not improve by more than convergeTol, relative and absolute (the rule
// of gonum's FunctionConverge).
type converger struct {
	best  float64
	steps int
	limit int
}

// step takes the best value after n more steps and reports whether the
// pass has converged.
func (c *converger) step(f float64, n int) bool {
	maxAbs := math.Max(math.Abs(f), math.Abs(c.best))
	if f < c.best && c.best-f > convergeTol*maxAbs+convergeTol {
		c.best, c.steps = f, 0
		return false
	}
	c.steps += n
	return c.steps >= c.limit
}
