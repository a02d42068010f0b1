package objectives

import (
	"encoding/json"
	"fmt"
	"math"
	"runtime"
	"slices"
	"strings"
	"sync"

	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// The checks every evaluation makes besides the spec's targets, by the
// names their violations carry (docs/buildable.md). They are always on:
// a candidate that fails one is infeasible, whatever its spec.
const (
	CheckGeometry   = "geometry"        // a drawn size breaks a process rule
	CheckSaturation = "saturation"      // a device that must be saturated is not, with the margin
	CheckValidity   = "level1_validity" // a level-1 result rests on a device outside the square law
)

// CheckNames returns the always-on checks, the catalog's Constraint
// entries, in its order.
func CheckNames() []string {
	var out []string
	for _, e := range catalog {
		if e.Kind == Constraint {
			out = append(out, e.Key)
		}
	}
	return out
}

// WorkingFraction is the share of its largest current over the range at
// or above which a device counts as carrying its working current, where
// the saturation and validity checks apply to it: a half (our choice,
// docs/buildable.md). Below it a device is turning off or off, and what
// it does there moves the result little.
const WorkingFraction = 0.5

// Inversion levels and saturation states, as `eval --devices` reports
// them.
const (
	InversionWeak     = "weak"     // inversion coefficient below 0.1
	InversionModerate = "moderate" // 0.1 … 10
	InversionStrong   = "strong"   // above 10
	StateSaturated    = "saturated"
	StateTriode       = "triode"
	StateOff          = "off"
)

// Inversion returns the inversion level of a device at op: from the EKV
// inversion coefficient, or on a level-1 card from the coefficient the
// square law's overdrive corresponds to, IC = (V_ov / 2U_T)² (the EKV
// strong-inversion relation V_P − V_S = 2U_T·√IC with n = 1; Enz and
// Vittoz, Charge-Based MOS Transistor Modeling, 2006, from memory). A
// level-1 device below threshold is off.
func Inversion(op device.OpPoint, tempK float64) string {
	ic := op.IC
	if op.Region == device.Off {
		return StateOff
	}
	if ic == 0 { // level-1: no coefficient of its own
		ov := overdrive(op)
		if !(ov > 0) {
			return StateOff
		}
		ic = math.Pow(ov/(2*device.ThermalVoltage(tempK)), 2)
	}
	switch {
	case ic < 0.1:
		return InversionWeak
	case ic > 10:
		return InversionStrong
	}
	return InversionModerate
}

// Saturation returns whether a device is saturated (|V_DS| ≥ |V_DSAT|),
// in triode, or off (a level-1 device below threshold).
func Saturation(op device.OpPoint) string {
	switch {
	case op.Region == device.Off:
		return StateOff
	case SatHeadroom(op) >= 0:
		return StateSaturated
	}
	return StateTriode
}

// SatHeadroom returns |V_DS| − |V_DSAT|, V: how far a device is from the
// edge of saturation (negative in triode).
func SatHeadroom(op device.OpPoint) float64 { return math.Abs(op.VDS) - math.Abs(op.VDSAT) }

// overdrive returns |V_GS| − |V_TH| in the conducting sense, V.
func overdrive(op device.OpPoint) float64 {
	if op.VTH < 0 { // a PMOS: SPICE signs
		return op.VTH - op.VGS
	}
	return op.VGS - op.VTH
}

// Margin returns the saturation margin the design is checked with: the
// process's (device.Rules.SaturationMargin, 50 mV unless its rules say
// otherwise).
func (d *Design) Margin() float64 {
	if d.Process == nil || (!d.Process.Rules.Given && d.Process.Rules.SaturationMargin == 0) {
		return device.DefaultSaturationMargin
	}
	return d.Process.Rules.SaturationMargin
}

// Finding is one device failing one always-on check, over a span of the
// range.
type Finding struct {
	Check  string  // CheckGeometry, CheckSaturation or CheckValidity
	Device string  // "M6", or "summing stage"
	Role   string  // "pmos tail"
	Points int     // sweep points that fail (0 for geometry)
	From   float64 // first and last failing common mode, V (NaN for geometry)
	To     float64
	VCM    float64 // the worst point, V (NaN for geometry)
	// Value and Limit are what was found and what was wanted at the worst
	// point: V_DS − V_DSAT against the margin, the overdrive against
	// 4·U_T, a drawn size against its rule.
	Value, Limit float64
	// Amount is the normalised shortfall at the worst point, > 0: the
	// missing V_DS over the V_DS needed, the missing overdrive over
	// 4·U_T, the size's distance from its rule over the rule.
	Amount float64
	What   string // the words for it
	// Condition names the condition the finding is from ("ss, 1.62 V,
	// 125 °C") when the design is measured at more than one; "" at one.
	Condition string
}

// MarshalJSON writes {"check", "device", "role", "points", "from", "to",
// "vcm", "value", "limit", "amount", "what", "condition"} in SI units
// (condition left out at a single condition), a common mode
// that does not apply (a geometry finding) as null.
func (f Finding) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Check  string   `json:"check"`
		Device string   `json:"device"`
		Role   string   `json:"role"`
		Points int      `json:"points"`
		From   *float64 `json:"from"`
		To     *float64 `json:"to"`
		VCM    *float64 `json:"vcm"`
		Value  *float64 `json:"value"`
		Limit  *float64 `json:"limit"`
		Amount float64  `json:"amount"`
		What   string   `json:"what"`
		Cond   string   `json:"condition,omitempty"`
	}{f.Check, f.Device, f.Role, f.Points, finite(f.From), finite(f.To), finite(f.VCM),
		finite(f.Value), finite(f.Limit), f.Amount, f.What, f.Condition})
}

func (f Finding) String() string {
	where := ""
	if f.Points > 0 {
		where = fmt.Sprintf(" at vcm %s to %s (%d points; worst at %s)", short(f.From, units.Volt), short(f.To, units.Volt), f.Points, short(f.VCM, units.Volt))
	}
	if f.Condition != "" {
		where += " at " + f.Condition
	}
	return fmt.Sprintf("%s: %s (%s): %s%s", f.Check, f.Device, f.Role, f.What, where)
}

// Assess makes the always-on checks of a swept stage (docs/buildable.md):
// the geometry rules the builder recorded, saturation with margin
// (volts) of every device whose duty needs it at every point where it
// carries its working current, and on a level-1 process the square law's
// validity of every device at every such point. s is the solver that
// swept res, whose stored solution gives the devices' operating points
// (sim.Solver.DeviceColumn; nil for the geometry and headroom checks
// alone); tempK the temperature. A long sweep's devices are checked in
// parallel; a search's short sweeps on the calling goroutine, whose
// caller already keeps the cores busy.
func Assess(st *topologies.Stage, res *sim.Result, s *sim.Solver, kind string, margin, tempK float64) []Finding {
	return assess(st, res, s, kind, margin, tempK, &assessScratch{})
}

// assessScratch holds the buffers Assess fills, kept by a search's
// solvers (SolverCache) from one evaluation to the next.
type assessScratch struct {
	volts             sim.Voltages
	col               sim.OpColumn
	work, low, exempt []bool
}

// flags returns scr's work, low and exempt flags for n points.
func (scr *assessScratch) flags(n int) (work, low, exempt []bool) {
	if cap(scr.work) < n {
		scr.work, scr.low, scr.exempt = make([]bool, n), make([]bool, n), make([]bool, n)
	}
	return scr.work[:n], scr.low[:n], scr.exempt[:n]
}

// assess is Assess with its buffers in scr; a long sweep's parallel
// workers take buffers of their own.
func assess(st *topologies.Stage, res *sim.Result, s *sim.Solver, kind string, margin, tempK float64, scr *assessScratch) []Finding {
	var out []Finding
	for _, g := range st.Geometry {
		out = append(out, Finding{Check: CheckGeometry, Device: g.Device, Role: g.Role,
			From: math.NaN(), To: math.NaN(), VCM: math.NaN(), Value: g.Value, Limit: g.Limit,
			Amount: math.Min(g.Amount(), MissingAmount), What: g.GeometryIssue.String()})
	}
	if need := topologies.MinVHead(margin); st.VHead < need*(1-1e-9) {
		out = append(out, Finding{Check: CheckSaturation, Device: "summing stage", Role: "folding sources and mirror",
			From: math.NaN(), To: math.NaN(), VCM: math.NaN(), Value: st.VHead - topologies.FoldOverdrive, Limit: margin,
			Amount: (need - st.VHead) / need,
			What: fmt.Sprintf("vhead %s leaves its devices (V_DSAT %s) %s above V_DSAT, want the margin %s",
				short(st.VHead, units.Volt), short(topologies.FoldOverdrive, units.Volt),
				short(st.VHead-topologies.FoldOverdrive, units.Volt), short(margin, units.Volt))})
	}
	if s == nil || res == nil || res.Len() == 0 {
		return out
	}
	n := res.Len()
	ut := device.ThermalVoltage(tempK)
	c := st.Circuit
	in, ip := res.Probe[c.ProbeIndex(topologies.ProbeIN)], res.Probe[c.ProbeIndex(topologies.ProbeIP)]
	// minor reports whether a side's pair carries at most half of the two
	// pairs' current at point i: the other pair has taken over.
	// A stage with one pair only (n-pair, p-pair) has no other pair to
	// take over: where its pair turns off at the rail the gm targets
	// judge it, and its devices are exempt as a device of neither pair.
	loneN, loneP := !(slices.Max(ip) > 0), !(slices.Max(in) > 0)
	minor := func(side topologies.Side, i int) bool {
		mine, tot, lone := in[i], in[i]+ip[i], loneN
		if side == topologies.PSide {
			mine, lone = ip[i], loneP
		}
		return side == topologies.NoSide || lone || !(tot > 0) || mine <= 0.5*tot
	}
	want := Checked(st, kind)
	// The sweep recorded the operating points (a short sweep: a
	// search's), or DeviceColumn works them out from the solution.
	volts := &scr.volts
	s.Voltages(res, volts)
	one := func(k int, scr *assessScratch) []Finding {
		work, low, exempt := scr.flags(n)
		s.DeviceColumn(volts, k, &scr.col)
		return assessDevice(st.Devices[k], &scr.col, res, work, low, exempt, minor, kind, margin, ut)
	}
	// A device whose twin (sim.Solver.Twin: the other half of its pair at
	// vid = 0) does the same duty on the same side has the twin's findings
	// under its own name.
	twin := make([]int, len(st.Devices))
	for k, dev := range st.Devices {
		twin[k] = -1
		if !want[k] {
			continue
		}
		if j := s.Twin(volts, k); j >= 0 && want[j] && st.Devices[j].Duty == dev.Duty && st.Devices[j].Side == dev.Side {
			twin[k] = j
		}
	}
	per := make([][]Finding, len(st.Devices))
	gather := func() []Finding {
		for k, j := range twin {
			if j >= 0 {
				per[k] = slices.Clone(per[j])
				for f := range per[k] {
					per[k][f].Device, per[k][f].Role = st.Devices[k].Name, st.Devices[k].Role
				}
			}
		}
		for _, fs := range per {
			out = append(out, fs...)
		}
		return out
	}
	// A search's short sweeps are checked on the goroutine that swept
	// them, device by device.
	if n < parallelPoints {
		for k := range st.Devices {
			if want[k] && twin[k] < 0 {
				per[k] = one(k, scr)
			}
		}
		return gather()
	}
	// A long sweep's devices are checked in parallel, each worker with its
	// own column and flags, the devices that move first, the frozen ones
	// (one model evaluation each) after them, so that the workers end
	// together. The findings keep the devices' order.
	check := func(ks <-chan int, scr *assessScratch) {
		for k := range ks {
			per[k] = one(k, scr)
		}
	}
	next := make(chan int, len(st.Devices))
	for _, frozen := range []bool{false, true} {
		for k := range st.Devices {
			if want[k] && twin[k] < 0 && s.Frozen(k) == frozen {
				next <- k
			}
		}
	}
	close(next)
	var wg sync.WaitGroup
	for range min(runtime.GOMAXPROCS(0), len(st.Devices)) {
		wg.Go(func() { check(next, &assessScratch{}) })
	}
	wg.Wait()
	return gather()
}

// parallelPoints is the sweep length from which Assess checks devices in
// parallel: a search's sweeps (37 and 181 points) are checked on the
// worker that swept them, an eval's long sweep on every core.
const parallelPoints = 1000

// assessDevice makes the saturation and validity checks of one device
// over a sweep from its operating points col, with work, low and exempt
// as its scratch space.
func assessDevice(dev topologies.Device, col *sim.OpColumn, res *sim.Result, work, low, exempt []bool,
	minor func(topologies.Side, int) bool, kind string, margin, ut float64) []Finding {
	var out []Finding
	n := res.Len()
	// One length for every column, so that the loops below check no
	// bound.
	vcm := res.VCM[:n]
	id, off, vds, vdsat := col.ID[:len(vcm)], col.Off[:len(vcm)], col.VDS[:len(vcm)], col.VDSAT[:len(vcm)]
	vgs, vth := col.VGS[:len(vcm)], col.VTH[:len(vcm)]
	work, low = work[:len(vcm)], low[:len(vcm)]
	imax := 0.0
	for _, x := range id {
		if a := math.Abs(x); a > imax {
			imax = a
		}
	}
	if !(imax > 0) {
		return nil
	}
	for i := range vcm {
		work[i] = !off[i] && math.Abs(id[i]) >= WorkingFraction*imax
		low[i] = math.Abs(vds[i])-math.Abs(vdsat[i]) < margin
	}
	if dev.Duty == topologies.Saturated {
		railTurnOff(exempt, func(i int) bool { return low[i] }, func(i int) bool { return work[i] },
			func(i int) bool { return minor(dev.Side, i) })
		f := Finding{Check: CheckSaturation, Device: dev.Name, Role: dev.Role}
		for i, x := range vcm {
			if !work[i] || !low[i] || exempt[i] {
				continue
			}
			ds, dsat := math.Abs(vds[i]), math.Abs(vdsat[i])
			need := dsat + margin
			f.add(x, ds-dsat, margin, (need-ds)/need)
		}
		if f.Points > 0 {
			f.What = fmt.Sprintf("|V_DS| − |V_DSAT| = %s, want at least the margin %s", short(f.Value, units.Volt), short(f.Limit, units.Volt))
			out = append(out, f)
		}
	}
	if kind == "level1" {
		lim := 4 * ut
		f := Finding{Check: CheckValidity, Device: dev.Name, Role: dev.Role}
		for i, x := range vcm {
			if !work[i] {
				continue
			}
			if ov := overdrive(device.OpPoint{VGS: vgs[i], VTH: vth[i]}); ov < lim {
				f.add(x, ov, lim, math.Min((lim-ov)/lim, MissingAmount))
			}
		}
		if f.Points > 0 {
			f.What = fmt.Sprintf("overdrive %s below 4·U_T = %s (gm/I_D above 1/(2·U_T)): the square law does not describe it",
				short(f.Value, units.Volt), short(f.Limit, units.Volt))
			out = append(out, f)
		}
	}
	return out
}

// Checked returns which devices of a stage Assess needs the operating
// points of on a process of that model kind: every device on level 1
// (validity), those whose duty is saturation otherwise.
func Checked(st *topologies.Stage, kind string) []bool {
	out := make([]bool, len(st.Devices))
	for k, d := range st.Devices {
		out[k] = kind == "level1" || d.Duty == topologies.Saturated
	}
	return out
}

// railTurnOff marks in exempt (one flag a point, all set afresh) the
// points exempt from the saturation check because
// the device is turning off at an end of the range, as a pair's tail does
// at its rail: within a run of points short of the margin that reaches an
// end of the sweep and along which the device stops carrying its working
// current somewhere, the points where its pair carries at most half of
// the two pairs' current (minor: the other pair has taken over; always
// for a device of neither pair). A device that stays short at full
// current up to the end (a tail whose current a switch takes over), or a
// tail short of the margin where its own pair still carries most of the
// current, is not exempt.
func railTurnOff(exempt []bool, short, working, minor func(int) bool) {
	n := len(exempt)
	clear(exempt)
	mark := func(from, step int) {
		end, off := from, false
		for i := from; i >= 0 && i < n && short(i); i += step {
			end = i
			off = off || !working(i)
		}
		if !off || !short(from) {
			return
		}
		for i := from; ; i += step {
			exempt[i] = minor(i)
			if i == end {
				break
			}
		}
	}
	mark(0, 1)
	mark(n-1, -1)
}

// add counts a failing point of a swept check at common mode vcm, with
// the value, limit and amount there, points taken in the order of the
// sweep; the worst amount gives VCM, Value and Limit.
func (f *Finding) add(vcm, val, lim, amt float64) {
	if f.Points == 0 {
		f.From = vcm
	}
	f.Points++
	f.To = vcm
	if amt > f.Amount {
		f.Amount, f.Value, f.Limit, f.VCM = amt, val, lim, vcm
	}
}

// CheckViolations sums findings into one violation per always-on check,
// in the order of CheckNames, met ones (Amount 0) included: the Amounts
// Deb's rules add to the targets'. Value is the worst finding's value.
func CheckViolations(fs []Finding) []Violation {
	var out []Violation
	for _, name := range CheckNames() {
		v := Violation{Target: name, Value: math.NaN(), Limit: math.NaN()}
		worst := 0.0
		for _, f := range fs {
			if f.Check != name {
				continue
			}
			v.Amount += f.Amount
			if f.Amount > worst {
				worst, v.Value, v.Limit, v.Condition = f.Amount, f.Value, f.Limit, f.Condition
			}
		}
		out = append(out, v)
	}
	return out
}

// FindingsText writes findings one per line, for messages.
func FindingsText(fs []Finding) string {
	var b strings.Builder
	for _, f := range fs {
		b.WriteString(f.String())
		b.WriteByte('\n')
	}
	return b.String()
}
