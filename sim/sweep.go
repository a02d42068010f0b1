package sim

import (
	"fmt"
	"math"

	"pairsmith/sim/device"
)

// SweepSpec is a common-mode sweep from Low to High in steps of Step at a
// fixed differential input VID.
type SweepSpec struct {
	Low, High, Step float64
	VID             float64
}

// Points returns the number of sweep points: Low, Low+Step, … and High
// itself even when the range is not a whole number of steps.
func (sp SweepSpec) Points() (int, error) {
	if !(sp.Step > 0) || math.IsInf(sp.Step, 0) {
		return 0, fmt.Errorf("sweep step %g V, want > 0", sp.Step)
	}
	if !(sp.High >= sp.Low) {
		return 0, fmt.Errorf("sweep from %g V to %g V: want low ≤ high", sp.Low, sp.High)
	}
	span := (sp.High - sp.Low) / sp.Step
	if span > 1e7 {
		return 0, fmt.Errorf("sweep from %g V to %g V in %g V steps has too many points", sp.Low, sp.High, sp.Step)
	}
	k := int(math.Floor(span + 1e-9))
	if sp.Low+float64(k)*sp.Step < sp.High-1e-12*math.Max(1, math.Abs(sp.High)) {
		k++
	}
	return k + 1, nil
}

// At returns the common-mode voltage of point i.
func (sp SweepSpec) At(i, points int) float64 {
	if i == points-1 {
		return sp.High
	}
	return sp.Low + float64(i)*sp.Step
}

// Result is a solved sweep. Its slices are reused by the next sweep into
// the same Result.
type Result struct {
	VCM []float64
	// GM is d I_out / d V_id at every point (S), where I_out is the
	// circuit's output probe; nil when the circuit names no output.
	GM []float64
	// Probe[k][i] is probe k at point i.
	Probe [][]float64
	// V holds every solver variable at every point, Vars per point.
	V    []float64
	Vars int
}

// Len returns the number of points.
func (r *Result) Len() int { return len(r.VCM) }

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

// Sweep solves the circuit at every point of sp into res. The first point
// is found from scratch; each later one starts from the quadratic
// extrapolation of the last three, falls back to sub-steps from the last solution and, only
// then, to a fresh solve. A point without a solution ends the sweep with
// a *ConvergenceError.
func (s *Solver) Sweep(sp SweepSpec, res *Result) error {
	npts, err := sp.Points()
	if err != nil {
		return err
	}
	sys := s.sys
	n, N := sys.n, sys.N
	res.VCM = grow(res.VCM, npts)
	wantGM := sys.output >= 0
	if wantGM {
		res.GM = grow(res.GM, npts)
	} else {
		res.GM = res.GM[:0]
	}
	if len(res.Probe) != len(sys.probeTerms) {
		res.Probe = make([][]float64, len(sys.probeTerms))
	}
	for k := range res.Probe {
		res.Probe[k] = grow(res.Probe[k], npts)
	}
	res.Vars = N
	res.V = grow(res.V, npts*N)

	for i := 0; i < npts; i++ {
		vcm := sp.At(i, npts)
		switch {
		case i == 0:
			if err := s.solveFresh(vcm, sp.VID); err != nil {
				return err
			}
		default:
			prev := res.V[(i-1)*N : i*N]
			copy(s.v[:n], prev[:n])
			if i >= 2 {
				// Predict by the polynomial through the last two or three
				// solutions (Lagrange form, uneven steps allowed).
				x0, x1 := res.VCM[i-1], res.VCM[i-2]
				p1 := res.V[(i-2)*N : (i-1)*N]
				if i >= 3 {
					x2 := res.VCM[i-3]
					p2 := res.V[(i-3)*N : (i-2)*N]
					l0 := (vcm - x1) * (vcm - x2) / ((x0 - x1) * (x0 - x2))
					l1 := (vcm - x0) * (vcm - x2) / ((x1 - x0) * (x1 - x2))
					l2 := (vcm - x0) * (vcm - x1) / ((x2 - x0) * (x2 - x1))
					for j := 0; j < n; j++ {
						s.v[j] = l0*prev[j] + l1*p1[j] + l2*p2[j]
					}
				} else if x0 != x1 {
					f := (vcm - x0) / (x0 - x1)
					for j := 0; j < n; j++ {
						s.v[j] += f * (prev[j] - p1[j])
					}
				}
			}
			if !s.newton(vcm, sp.VID, 1, 0, s.opt.MaxIter) {
				if err := s.recover(res.VCM[i-1], prev, vcm, sp.VID); err != nil {
					return err
				}
			}
		}
		s.post(wantGM)
		res.VCM[i] = vcm
		if wantGM {
			_, res.GM[i] = s.probe(sys.output)
		}
		for k := range res.Probe {
			res.Probe[k][i], _ = s.probe(k)
		}
		copy(res.V[i*N:(i+1)*N], s.v)
	}
	return nil
}

// recover reaches vcm from the solution prev at vfrom in ever smaller
// steps, then tries a fresh solve.
func (s *Solver) recover(vfrom float64, prev []float64, vcm, vid float64) error {
	n := s.sys.n
	for parts := 2; parts <= 256; parts *= 4 {
		copy(s.v[:n], prev[:n])
		ok := true
		for k := 1; k <= parts; k++ {
			x := vfrom + (vcm-vfrom)*float64(k)/float64(parts)
			if !s.newton(x, vid, 1, 0, s.opt.MaxIter) {
				ok = false
				break
			}
		}
		if ok {
			return nil
		}
	}
	return s.solveFresh(vcm, vid)
}

// Point is the solution at one operating point.
type Point struct {
	VCM, VID float64
	GM       float64   // d I_out / d V_id, S (0 without an output probe)
	Probe    []float64 // the circuit's probes, in order
	V        []float64 // solver variables; use Voltage
	sys      *system
}

// Voltage returns the voltage of node n.
func (p *Point) Voltage(n Node) float64 { return p.V[p.sys.idx[n]] }

// Solve finds the operating point at (vcm, vid) from scratch.
func (s *Solver) Solve(vcm, vid float64) (*Point, error) {
	if err := s.solveFresh(vcm, vid); err != nil {
		return nil, err
	}
	wantGM := s.sys.output >= 0
	s.post(wantGM)
	p := &Point{VCM: vcm, VID: vid, V: append([]float64(nil), s.v...), sys: s.sys}
	if wantGM {
		_, p.GM = s.probe(s.sys.output)
	}
	for k := range s.sys.probeTerms {
		v, _ := s.probe(k)
		p.Probe = append(p.Probe, v)
	}
	return p, nil
}

// PointAt returns point i of a sweep result as a Point.
func (s *Solver) PointAt(res *Result, i int) *Point {
	N := res.Vars
	p := &Point{VCM: res.VCM[i], V: append([]float64(nil), res.V[i*N:(i+1)*N]...), sys: s.sys}
	if len(res.GM) > i {
		p.GM = res.GM[i]
	}
	for k := range res.Probe {
		p.Probe = append(p.Probe, res.Probe[k][i])
	}
	return p
}

// DeviceOp is a transistor's operating point in a solution.
type DeviceOp struct {
	Name string
	Type device.Type
	Geom device.Geometry
	device.OpPoint
}

// Devices returns the operating point of every transistor at p, in the
// order they were added.
func (s *Solver) Devices(p *Point) []DeviceOp {
	out := make([]DeviceOp, len(s.sys.mos))
	for i, m := range s.sys.mos {
		el := s.sys.c.Mosfets[i]
		out[i] = DeviceOp{
			Name:    el.Name,
			Type:    el.Model.Type(),
			Geom:    el.Geom,
			OpPoint: m.inst.Op(p.V[m.d], p.V[m.g], p.V[m.s], p.V[m.b]),
		}
	}
	return out
}
