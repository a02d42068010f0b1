package objectives

import (
	"fmt"
	"math"
	"runtime"
	"strconv"
	"strings"
	"sync"

	"pairsmith/sim"
	"pairsmith/topologies"
	"pairsmith/units"
)

// DeviceReport is one transistor at the middle of the sweep, with SPICE
// signs (a conducting PMOS has negative id, vgs, vds and vth).
type DeviceReport struct {
	Name   string  `json:"name"`
	Type   string  `json:"type"`
	Role   string  `json:"role"`
	W      float64 `json:"w"`
	L      float64 `json:"l"`
	M      float64 `json:"m"`
	ID     float64 `json:"id"`
	VGS    float64 `json:"vgs"`
	VDS    float64 `json:"vds"`
	VBS    float64 `json:"vbs"`
	VTH    float64 `json:"vth"`
	VDSAT  float64 `json:"vdsat"`
	GM     float64 `json:"gm"`
	GDS    float64 `json:"gds"`
	GMB    float64 `json:"gmb"`
	IC     float64 `json:"ic"`
	Region string  `json:"region"` // the model's own region word
	// Inversion is weak, moderate or strong (off for a level-1 device
	// below threshold); Saturation is saturated, triode or off; VDSMargin
	// is |V_DS| − |V_DSAT|, V (see Inversion, Saturation, SatHeadroom).
	Inversion  string  `json:"inversion"`
	Saturation string  `json:"saturation"`
	VDSMargin  float64 `json:"vds_margin"`
	// Duty is what the device's function needs: saturated, diode or
	// exempt (topologies.Duty).
	Duty string `json:"duty"`
}

// Evaluation is one design evaluated at its own conditions: the curve,
// the devices and Metrics at the nominal one, the worst case over all.
type Evaluation struct {
	Design  *Design
	Stage   *topologies.Stage
	Result  *sim.Result
	Metrics Metrics
	// Devices are at the middle point of the sweep.
	Devices []DeviceReport
	// MidVCM is the common mode at which Devices were taken.
	MidVCM float64
	// Findings are the always-on checks the stage fails (Assess) at any
	// of its conditions, the worst of each (WorstCase.Findings): empty
	// for a buildable candidate.
	Findings []Finding
	// Conditions are the design measured under each of its conditions
	// (Design.AllConditions), the nominal one first: Metrics are its.
	Conditions []ConditionEval
	// Worst is the worst case of every figure over Conditions, WorstAt
	// the index into Conditions of each figure's worst by its key.
	Worst   Metrics
	WorstAt map[string]int
	// SummingCurrent is the summing stage's supply current counted in
	// power (topologies.SummingCurrent), A.
	SummingCurrent float64
}

// Binding returns the condition at which the figure of a target or axis
// key is worst over the evaluation's conditions (WorstCase.Binding).
func (ev *Evaluation) Binding(key string) (Condition, bool) {
	return WorstCase{At: ev.WorstAt}.Binding(ev.Conditions, key)
}

// SetMinSupply puts a design's lowest working supply into the metrics of
// every condition (it is one value for the whole design) and the
// nominal ones; the worst case is the caller's to form again.
func (ev *Evaluation) SetMinSupply(v float64) {
	ev.Metrics.MinSupply = v
	for i := range ev.Conditions {
		ev.Conditions[i].Metrics.MinSupply = v
	}
}

// Curve returns the gm and pair-current curves of the sweep.
func (ev *Evaluation) Curve() []CurvePoint { return Curve(ev.Stage, ev.Result) }

// Build makes the stage of a design. It first puts the design's drawn
// sizes on the process grid (topologies.Snap), in d.Params itself, so
// that the design written afterwards builds the devices evaluated.
func Build(d *Design) (*topologies.Stage, error) {
	fam, err := d.Family()
	if err != nil {
		return nil, err
	}
	d.Params = topologies.Snap(fam, d.Params, d.Process.Rules)
	st, err := fam.Build(d.Params, d.Conditions)
	if err != nil {
		return nil, fmt.Errorf("build %s: %w", d.Topology, err)
	}
	return st, nil
}

// swept is a design built, swept, measured and checked.
type swept struct {
	st       *topologies.Stage
	s        *sim.Solver
	res      *sim.Result
	metrics  Metrics
	findings []Finding
	mismatch *MismatchResult // nil on a process without mismatch coefficients
	noise    *NoiseResult
}

// sweep builds, sweeps and checks a design: the one code path behind
// Evaluate and MeasureCached. With a cache the solver goes back to it
// when sweep returns, so the caller must not use swept.s then (Evaluate
// passes none). Both give the same metrics and findings and refuse the
// same unphysical sweeps (CheckPhysical).
//
// The first point starts from start when it has the circuit's number of
// unknowns (a solution of the same stage under another condition), and
// from scratch otherwise; publish, when not nil, receives the first
// point's solution as soon as it is solved (nil when it is not), before
// the rest of the sweep, and must not keep the slice past its call.
func sweep(d *Design, cache *SolverCache, start []float64, publish func([]float64)) (*swept, error) {
	published := false
	tell := func(x []float64) {
		if publish != nil && !published {
			published = true
			publish(x)
		}
	}
	defer tell(nil)
	st, err := Build(d)
	if err != nil {
		return nil, err
	}
	b, err := cache.get(d.Topology, st.Circuit)
	if err != nil {
		return nil, err
	}
	defer cache.put(d.Topology, b)
	s := b.s
	res := &sim.Result{}
	npts, err := d.Sweep.Points()
	if err != nil {
		return nil, err
	}
	if n := s.Unknowns(); len(start) == n || publish != nil {
		// The first point on its own, so that the conditions waiting for
		// it start while this one sweeps on.
		first := make([]float64, n)
		if len(start) != n {
			start = nil
		}
		if err := s.SolveNear(start, d.Sweep.At(0, npts), d.Sweep.VID, first); err != nil {
			return nil, err
		}
		tell(first)
		start = first
	}
	if start != nil && npts < sim.SplitPoints {
		err = s.SweepStart(d.Sweep, res, start)
	} else {
		err = s.SweepParallel(d.Sweep, res, runtime.GOMAXPROCS(0))
	}
	if err != nil {
		return nil, err
	}
	if err := CheckPhysical(st, res); err != nil {
		return nil, err
	}
	// A long sweep is measured while its devices are checked: Measure
	// reads the result only, and takes a core the checks leave idle at
	// their end.
	sw := &swept{st: st, s: s, res: res}
	measure := func() { sw.metrics = Measure(st, res) }
	var wg sync.WaitGroup
	if res.Len() >= parallelPoints {
		wg.Go(measure)
	} else {
		measure()
	}
	sw.findings = Assess(st, res, s, d.Process.Kind, d.Margin(), d.TempK)
	wg.Wait()
	if sw.mismatch, sw.noise, err = addExtras(&sw.metrics, st, s, res, d, d.Sweep.Step, AllExtras()); err != nil {
		return nil, err
	}
	return sw, nil
}

// Extras are the figures beyond the sweep's own that a look estimates
// from the solved circuit: each costs solves at every point, so a search
// asks only for those its spec bounds or trades on.
type Extras struct {
	Mismatch bool // offset and offset_drift (docs/mismatch.md)
	Slew     bool // slew_current and slew (docs/metrics.md#slew)
	Noise    bool // noise (docs/noise.md)
	// Coarse estimates them on a look's coarse sweep only and keeps
	// those for its fine one (a search's choice: they vary slowly along
	// the range, and cost a solve a point); otherwise each look makes
	// its own.
	Coarse bool
}

// extras lists m's extra figures: those Extras estimates.
func (m *Metrics) extras() [5]*float64 {
	return [...]*float64{&m.Offset, &m.OffsetDrift, &m.SlewCurrent, &m.Slew, &m.Noise}
}

// keepExtras copies o's extra figures into m.
func (m *Metrics) keepExtras(o Metrics) {
	to, from := m.extras(), o.extras()
	for i := range to {
		*to[i] = *from[i]
	}
}

// isExtra reports whether e's figure is one of the extras.
func (e Entry) isExtra() bool {
	if e.Field == nil {
		return false
	}
	var m Metrics
	p := e.Field(&m)
	for _, q := range m.extras() {
		if p == q {
			return true
		}
	}
	return false
}

// AllExtras asks for every extra figure, as `eval` does.
func AllExtras() Extras { return Extras{Mismatch: true, Slew: true, Noise: true} }

// addExtras estimates the figures ex asks for into m — mismatch on a
// process that gives coefficients, noise, the slew — and returns the
// mismatch and noise estimates they come from (nil where not made).
func addExtras(m *Metrics, st *topologies.Stage, s *sim.Solver, res *sim.Result, d *Design, step float64, ex Extras) (*MismatchResult, *NoiseResult, error) {
	mm, nm, err := analyse(st, s, res, d, ex.Mismatch, ex.Noise)
	if err != nil {
		return nil, nil, err
	}
	var mr *MismatchResult
	var nr *NoiseResult
	if mm != nil {
		mr = mm.result(d.sigma())
		mr.fill(m)
	}
	if nm != nil {
		nr = nm.result(d.noiseFrequency())
		m.Noise = nr.Density
	}
	if ex.Slew {
		if err := addSlew(m, st, s, res, d, step); err != nil {
			return nil, nil, err
		}
	}
	return mr, nr, nil
}

// SolverCache keeps compiled solvers by family, each with the buffers
// its sweeps and checks fill, for reuse across evaluations by any number
// of goroutines. The zero value is ready; a nil cache compiles afresh
// every time.
type SolverCache struct {
	pools sync.Map // family name → *sync.Pool of *bench
}

// bench is a compiled solver with the result and check buffers of the
// evaluation that holds it.
type bench struct {
	s            *sim.Solver
	coarse, fine sim.Result
	scr          assessScratch
}

// get returns a bench for c: a cached one of the family, its solver
// rebound to c, or a new one.
func (sc *SolverCache) get(family string, c *sim.Circuit) (*bench, error) {
	if sc != nil {
		if p, ok := sc.pools.Load(family); ok {
			if b, ok := p.(*sync.Pool).Get().(*bench); ok && b.s.Rebind(c) == nil {
				return b, nil
			}
		}
	}
	s, err := sim.NewSolver(c, sim.Options{})
	if err != nil {
		return nil, err
	}
	return &bench{s: s}, nil
}

// put returns a bench to the cache once its results have been read.
func (sc *SolverCache) put(family string, b *bench) {
	if sc == nil || b == nil {
		return
	}
	p, _ := sc.pools.LoadOrStore(family, &sync.Pool{})
	p.(*sync.Pool).Put(b)
}

// MeasureStaged is MeasureCached in two looks, as a search judges a
// candidate: a sweep at the coarse step first (d's own step when that is
// finer), whose metrics and findings reject(m, fs) may turn the
// candidate down; then, for a candidate kept, the sweep at d's step on
// the same built stage and solver, guided by the coarse sweep's
// solutions (sim.Solver.SweepFrom), checked again (fine reports which look the results
// are from). The fine look's metrics agree with MeasureCached's within
// the solver's tolerance, not bitwise: `eval` and a search's reported
// candidates use Evaluate.
//
// start, when it holds as many values as the circuit has unknowns, is
// where the first point's Newton iterations begin (sim.Solver.SweepStart):
// a reference solution of the same family (FirstSolution), which a
// search's candidates reach in fewer iterations than from the circuit's
// guess; nil starts from the guess.
func MeasureStaged(d *Design, cache *SolverCache, coarse float64, start []float64, reject func(Metrics, []Finding) bool) (m Metrics, fs []Finding, fine bool, err error) {
	return measureStaged(d, cache, coarse, start, reject, nil, AllExtras())
}

// measureStaged is MeasureStaged that also copies the first point's
// unknowns into *first when first is not nil, and estimates mismatch on
// each look the figures ex asks for.
func measureStaged(d *Design, cache *SolverCache, coarse float64, start []float64, reject func(Metrics, []Finding) bool, first *[]float64, ex Extras) (m Metrics, fs []Finding, fine bool, err error) {
	st, err := Build(d)
	if err != nil {
		return Metrics{}, nil, false, err
	}
	b, err := cache.get(d.Topology, st.Circuit)
	if err != nil {
		return Metrics{}, nil, false, err
	}
	defer cache.put(d.Topology, b)
	s, res := b.s, &b.coarse
	look := d.Sweep
	look.Step = math.Max(coarse, d.Sweep.Step)
	if len(start) == s.Unknowns() {
		err = s.SweepStart(look, res, start)
	} else {
		err = s.Sweep(look, res)
	}
	if err != nil {
		return Metrics{}, nil, false, err
	}
	if err := CheckPhysical(st, res); err != nil {
		return Metrics{}, nil, false, err
	}
	if first != nil {
		*first = append((*first)[:0], res.X[:s.Unknowns()]...)
	}
	m, fs = Measure(st, res), assess(st, res, s, d.Process.Kind, d.Margin(), d.TempK, &b.scr)
	if _, _, err := addExtras(&m, st, s, res, d, look.Step, ex); err != nil {
		return Metrics{}, nil, false, err
	}
	if look.Step == d.Sweep.Step || reject(m, fs) {
		return m, fs, false, nil
	}
	coarseRes, coarseM := res, m
	res = &b.fine
	if n, _ := d.Sweep.Points(); n >= sim.SplitPoints { // SweepParallel splits it
		err = s.SweepParallel(d.Sweep, res, runtime.GOMAXPROCS(0))
	} else {
		err = s.SweepFrom(d.Sweep, res, coarseRes)
	}
	if err != nil {
		return Metrics{}, nil, true, err
	}
	if err := CheckPhysical(st, res); err != nil {
		return Metrics{}, nil, true, err
	}
	m, fs = Measure(st, res), assess(st, res, s, d.Process.Kind, d.Margin(), d.TempK, &b.scr)
	if ex.Coarse {
		m.keepExtras(coarseM)
		return m, fs, true, nil
	}
	_, _, err = addExtras(&m, st, s, res, d, d.Sweep.Step, ex)
	return m, fs, true, err
}

// FirstSolution returns the solver's unknowns at the first point of d's
// sweep, solved from scratch: the start MeasureStaged takes for the
// other candidates of d's family.
func FirstSolution(d *Design) ([]float64, error) {
	st, err := Build(d)
	if err != nil {
		return nil, err
	}
	s, err := sim.NewSolver(st.Circuit, sim.Options{})
	if err != nil {
		return nil, err
	}
	n, err := d.Sweep.Points()
	if err != nil {
		return nil, err
	}
	p, err := s.Solve(d.Sweep.At(0, n), d.Sweep.VID)
	if err != nil {
		return nil, err
	}
	return p.V[:s.Unknowns()], nil
}

// MeasureDesign builds, sweeps and measures a design without the rest of
// an Evaluation. Its metrics are those Evaluate reports, bit for bit.
func MeasureDesign(d *Design) (Metrics, error) {
	m, _, err := MeasureChecked(d)
	return m, err
}

// MeasureChecked is MeasureDesign with the always-on checks' findings:
// what a search needs of each candidate.
func MeasureChecked(d *Design) (Metrics, []Finding, error) {
	return MeasureCached(d, nil)
}

// MeasureCached is MeasureChecked with compiled solvers reused from cache
// (nil for none): a search's candidates of one family share a circuit
// shape, so a solver compiled for one is rebound to the next
// (sim.Solver.Rebind) with the same results, bit for bit.
func MeasureCached(d *Design, cache *SolverCache) (Metrics, []Finding, error) {
	sw, err := sweep(d, cache, nil, nil)
	if err != nil {
		return Metrics{}, nil, err
	}
	return sw.metrics, sw.findings, nil
}

// Evaluate builds, sweeps, measures and checks a design at each of its
// conditions.
func Evaluate(d *Design) (*Evaluation, error) { return EvaluateWith(d, EvalOptions{}) }

// EvalOptions change how Evaluate estimates mismatch.
type EvalOptions struct {
	// MonteCarlo, when positive, draws that many Monte Carlo samples at
	// every condition instead of the sensitivity estimate, from Seed
	// (MismatchShifts), on Workers goroutines (0: one per core); the
	// result does not depend on Workers.
	MonteCarlo int
	Seed       int64
	Workers    int
	// Works, when not nil, holds the targets whose gm_min and
	// gm_ripple_max the lowest working supply must meet (MinSupplyOf);
	// nil asks only for gm alive rail to rail.
	Works *Targets
}

// EvaluateWith is Evaluate with options.
func EvaluateWith(d *Design, opt EvalOptions) (*Evaluation, error) {
	if opt.MonteCarlo > 0 && !mismatchOK(d.Process) {
		return nil, errNoMismatch(d.Process)
	}
	if opt.MonteCarlo == 1 || opt.MonteCarlo > MaxSamples {
		return nil, fmt.Errorf("monte carlo: %d samples, want 2 to %d", opt.MonteCarlo, MaxSamples)
	}
	sw, err := sweep(d, nil, nil, nil)
	if err != nil {
		return nil, err
	}
	st, s, res := sw.st, sw.s, sw.res
	ev := &Evaluation{Design: d, Stage: st, Result: res, Metrics: sw.metrics, Findings: sw.findings}
	conds := d.AllConditions()
	ev.Conditions = make([]ConditionEval, len(conds))
	ev.Conditions[0] = ConditionEval{Condition: conds[0], Metrics: sw.metrics, Findings: sw.findings, Fine: true, Mismatch: sw.mismatch,
		Noise: sw.noise, Curve: Curve(st, res)}
	cache := &SolverCache{}
	if len(conds) > 1 {
		if err := measureConditions(d, res.X[:s.Unknowns()], conds[1:], ev.Conditions[1:], cache, conditionWorkers()); err != nil {
			return nil, err
		}
	}
	if opt.MonteCarlo > 0 {
		workers := opt.Workers
		if workers <= 0 {
			workers = conditionWorkers()
		}
		for i := range ev.Conditions {
			c := &ev.Conditions[i]
			dc := d.Under(c.Condition)
			stc := st
			if i > 0 {
				if stc, err = Build(dc); err != nil {
					return nil, err
				}
			}
			mc, err := monteCarlo(dc, stc, opt.MonteCarlo, opt.Seed, workers)
			if err != nil {
				if len(ev.Conditions) > 1 {
					err = fmt.Errorf("at %s: %w", c.Condition, err)
				}
				return nil, err
			}
			c.Mismatch = mc
			mc.fill(&c.Metrics)
		}
		ev.Metrics = ev.Conditions[0].Metrics
	}
	works := NoTargets()
	if opt.Works != nil {
		works = *opt.Works
	}
	ev.SetMinSupply(MinSupplyOf(d, works, cache))
	w := WorstOver(ev.Conditions, NoTargets())
	ev.Worst, ev.WorstAt, ev.Findings = w.Metrics, w.At, w.Findings
	ev.SummingCurrent = summingCurrent(st, res)
	mid := res.Len() / 2
	ev.MidVCM = res.VCM[mid]
	for k, op := range s.Devices(s.PointAt(res, mid)) {
		ev.Devices = append(ev.Devices, report(op, st.Devices[k], d.TempK))
	}
	return ev, nil
}

func report(op sim.DeviceOp, dev topologies.Device, tempK float64) DeviceReport {
	return DeviceReport{
		Name: op.Name, Type: op.Type.String(), Role: dev.Role,
		W: op.Geom.W, L: op.Geom.L, M: op.Geom.Mult(),
		ID: op.ID, VGS: op.VGS, VDS: op.VDS, VBS: op.VBS, VTH: op.VTH, VDSAT: op.VDSAT,
		GM: op.GM, GDS: op.GDS, GMB: op.GMB, IC: op.IC, Region: op.Region.String(),
		Inversion: Inversion(op.OpPoint, tempK), Saturation: Saturation(op.OpPoint),
		VDSMargin: SatHeadroom(op.OpPoint), Duty: dev.Duty.String(),
	}
}

// JSON is the document `eval --json` writes (docs/files.md#eval-json).
type JSON struct {
	Topology    string         `json:"topology"`
	Process     string         `json:"process"`
	Supply      float64        `json:"supply"`
	Temperature float64        `json:"temperature"`
	Curve       []CurvePoint   `json:"curve"`
	Metrics     Metrics        `json:"metrics"`
	MidVCM      float64        `json:"devices_vcm"`
	Devices     []DeviceReport `json:"devices"`
	// Checks are the always-on checks the stage fails at any condition
	// (empty when it is buildable as evaluated; docs/buildable.md).
	Checks []Finding `json:"checks"`
	// Conditions are the metrics under every condition of the design,
	// the nominal one first; Worst each figure's worst case and where.
	Conditions []ConditionJSON      `json:"conditions"`
	Worst      map[string]WorstJSON `json:"worst"`
	// Mismatch is null on a process without mismatch coefficients.
	Mismatch *MismatchJSON `json:"mismatch"`
	Noise    *NoiseJSON    `json:"noise"`
	Caution  string        `json:"caution"`
}

// Doc returns the evaluation as its JSON document.
func (ev *Evaluation) Doc() JSON {
	return JSON{
		Topology: ev.Design.Topology, Process: ev.Design.Process.Name,
		Supply: ev.Design.Supply, Temperature: ev.Design.TempK,
		Curve: ev.Curve(), Metrics: ev.Metrics, MidVCM: ev.MidVCM, Devices: ev.Devices,
		Checks:     append([]Finding{}, ev.Findings...),
		Conditions: ConditionsJSON(ev.Conditions), Worst: ev.WorstFor(NoTargets()).JSON(ev.Conditions),
		Mismatch: mismatchJSON(ev.Conditions),
		Noise:    noiseJSON(ev.Conditions),
		Caution:  Caution,
	}
}

// Tolerances below which a negative pair current or gm counts as zero:
// the solver's default relative tolerance (sim.Options.RelTol, 1e-6) of
// the sweep's largest value, plus its absolute current tolerance
// (sim.Options.AbsTol, 1e-12 A; per volt for gm).
const (
	physRelTol = 1e-6
	physAbsTol = 1e-12
)

// Unphysical is one way in which a sweep's solution is not a working
// stage, and where.
type Unphysical struct {
	Quantity string  // the probe: "i_n", "i_p" or "gm"
	Points   int     // how many sweep points show it
	From, To float64 // the first and last common mode that shows it, V
	Worst    float64 // the most negative value (A or S)
	WorstVCM float64 // where it is, V
}

// UnphysicalError is a sweep whose solution is not a physical operating
// point of the stage: an input pair whose total current is reversed (below
// zero by more than the solver's tolerance: its drains, held on summing
// nodes, act as sources, so the pair is out of headroom), or a negative
// gm (the output moving against the input). Such a sweep yields no
// metrics: Evaluate and MeasureDesign return this error instead, `eval`
// exits 1 with it, and the search counts the candidate as a failed
// evaluation.
type UnphysicalError struct {
	Circuit  string       // the circuit's title: what and under which conditions
	Total    int          // points in the sweep
	Findings []Unphysical // in the order i_n, i_p, gm; at least one
}

// VCM returns the first common mode at which the sweep is unphysical.
func (e *UnphysicalError) VCM() float64 {
	v := math.Inf(1)
	for _, f := range e.Findings {
		v = math.Min(v, f.From)
	}
	return v
}

func (e *UnphysicalError) Error() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s: unphysical result at vcm = %s, not a metric: ", e.Circuit, short(e.VCM(), units.Volt))
	for i, f := range e.Findings {
		if i > 0 {
			b.WriteString("; ")
		}
		unit, what := units.Ampere, ""
		switch f.Quantity {
		case topologies.ProbeIN:
			what = "the NMOS pair's current is reversed (i_n < 0: out of headroom, its drains' summing node is below its common source)"
		case topologies.ProbeIP:
			what = "the PMOS pair's current is reversed (i_p < 0: out of headroom, its drains' summing node is above its common source)"
		default:
			unit, what = units.Siemens, "gm is negative (the output moves against the input)"
		}
		fmt.Fprintf(&b, "%s at %d of %d points, vcm %s to %s, down to %s at %s", what, f.Points, e.Total,
			short(f.From, units.Volt), short(f.To, units.Volt), short(f.Worst, unit), short(f.WorstVCM, units.Volt))
	}
	return b.String()
}

// CheckPhysical returns an *UnphysicalError when some point of the sweep
// has an input pair's current reversed or a negative gm, beyond the
// solver's tolerance (physRelTol of the sweep's largest value plus
// physAbsTol); nil when every point is physical.
func CheckPhysical(st *topologies.Stage, res *sim.Result) error {
	c := st.Circuit
	in, ip := res.Probe[c.ProbeIndex(topologies.ProbeIN)], res.Probe[c.ProbeIndex(topologies.ProbeIP)]
	var iMax, gMax float64
	for i := range res.VCM {
		iMax = max(iMax, math.Abs(in[i])+math.Abs(ip[i]))
		if res.GM != nil {
			gMax = max(gMax, math.Abs(res.GM[i]))
		}
	}
	series := []struct {
		name string
		v    []float64
		tol  float64
	}{
		{topologies.ProbeIN, in, physRelTol*iMax + physAbsTol},
		{topologies.ProbeIP, ip, physRelTol*iMax + physAbsTol},
		{"gm", res.GM, physRelTol*gMax + physAbsTol},
	}
	e := &UnphysicalError{Circuit: c.Title, Total: res.Len()}
	for _, s := range series {
		f := Unphysical{Quantity: s.name}
		for i, x := range s.v {
			if !(x < -s.tol) {
				continue
			}
			if f.Points == 0 {
				f.From, f.Worst, f.WorstVCM = res.VCM[i], x, res.VCM[i]
			}
			f.Points++
			f.To = res.VCM[i]
			if x < f.Worst {
				f.Worst, f.WorstVCM = x, res.VCM[i]
			}
		}
		if f.Points > 0 {
			e.Findings = append(e.Findings, f)
		}
	}
	if len(e.Findings) == 0 {
		return nil
	}
	return e
}

// short writes x with at most four significant digits and an SI prefix.
func short(x float64, d units.Dim) string {
	r, err := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 4, 64), 64)
	if err != nil {
		r = x
	}
	return units.Format(r, d)
}
