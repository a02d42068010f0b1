package objectives

import (
	"fmt"
	"runtime"

	"pairsmith/sim"
	"pairsmith/topologies"
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
	Region string  `json:"region"`
}

// Evaluation is one design evaluated at its own conditions.
type Evaluation struct {
	Design  *Design
	Stage   *topologies.Stage
	Result  *sim.Result
	Metrics Metrics
	// Devices are at the middle point of the sweep.
	Devices []DeviceReport
	// MidVCM is the common mode at which Devices were taken.
	MidVCM float64
}

// Curve returns the gm and pair-current curves of the sweep.
func (ev *Evaluation) Curve() []CurvePoint { return Curve(ev.Stage, ev.Result) }

// Build makes the stage of a design.
func Build(d *Design) (*topologies.Stage, error) {
	fam, err := d.Family()
	if err != nil {
		return nil, err
	}
	st, err := fam.Build(d.Params, d.Conditions())
	if err != nil {
		return nil, fmt.Errorf("build %s: %w", d.Topology, err)
	}
	return st, nil
}

// sweep builds and sweeps a design: the one code path behind Evaluate
// and MeasureDesign, so that both give the same metrics.
func sweep(d *Design) (*topologies.Stage, *sim.Solver, *sim.Result, error) {
	st, err := Build(d)
	if err != nil {
		return nil, nil, nil, err
	}
	s, err := sim.NewSolver(st.Circuit, sim.Options{})
	if err != nil {
		return nil, nil, nil, err
	}
	res := &sim.Result{}
	if err := s.SweepParallel(d.Sweep, res, runtime.GOMAXPROCS(0)); err != nil {
		return nil, nil, nil, err
	}
	return st, s, res, nil
}

// MeasureDesign builds, sweeps and measures a design without the rest of
// an Evaluation: what a search needs of each candidate. Its metrics are
// those Evaluate reports, bit for bit.
func MeasureDesign(d *Design) (Metrics, error) {
	st, _, res, err := sweep(d)
	if err != nil {
		return Metrics{}, err
	}
	return Measure(st, res), nil
}

// Evaluate builds, sweeps and measures a design.
func Evaluate(d *Design) (*Evaluation, error) {
	st, s, res, err := sweep(d)
	if err != nil {
		return nil, err
	}
	ev := &Evaluation{Design: d, Stage: st, Result: res, Metrics: Measure(st, res)}
	mid := res.Len() / 2
	ev.MidVCM = res.VCM[mid]
	for _, op := range s.Devices(s.PointAt(res, mid)) {
		ev.Devices = append(ev.Devices, report(op, st.Roles[op.Name]))
	}
	return ev, nil
}

func report(op sim.DeviceOp, role string) DeviceReport {
	return DeviceReport{
		Name: op.Name, Type: op.Type.String(), Role: role,
		W: op.Geom.W, L: op.Geom.L, M: op.Geom.Mult(),
		ID: op.ID, VGS: op.VGS, VDS: op.VDS, VBS: op.VBS, VTH: op.VTH, VDSAT: op.VDSAT,
		GM: op.GM, GDS: op.GDS, GMB: op.GMB, IC: op.IC, Region: string(op.Region),
	}
}

// JSON is the document `eval --json` writes (design.md §3).
type JSON struct {
	Topology    string         `json:"topology"`
	Process     string         `json:"process"`
	Supply      float64        `json:"supply"`
	Temperature float64        `json:"temperature"`
	Curve       []CurvePoint   `json:"curve"`
	Metrics     Metrics        `json:"metrics"`
	MidVCM      float64        `json:"devices_vcm"`
	Devices     []DeviceReport `json:"devices"`
	Caution     string         `json:"caution"`
}

// Doc returns the evaluation as its JSON document.
func (ev *Evaluation) Doc() JSON {
	return JSON{
		Topology: ev.Design.Topology, Process: ev.Design.Process.Name,
		Supply: ev.Design.Supply, Temperature: ev.Design.TempK,
		Curve: ev.Curve(), Metrics: ev.Metrics, MidVCM: ev.MidVCM, Devices: ev.Devices,
		Caution: Caution,
	}
}
