package topologies_test

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"pairsmith/internal/ngspice"
	"pairsmith/objectives"
	"pairsmith/report"
	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// level1Cases are the level-1 processes the families are checked on, with
// the supply of their class.
var level1Cases = []struct {
	process string
	supply  float64
}{
	{"demo18-l1", 1.8},
	{"demo33-l1", 3.3},
}

// sizings returns the family's defaults and n random sizings near them:
// each log-scaled parameter drawn log-uniformly within a factor of 3 of
// its default, each linear one uniformly within ±25 % of its span, all
// clipped to the bounds. Voltage parameters (reference voltages, headroom)
// are first scaled with the supply, as a designer would move them. Far
// from the defaults a stage may have several DC solutions (the 1:3
// mirrors latch if both switches conduct at once), where two simulators
// can legitimately land on different ones; near them it has one.
func sizings(f topologies.Family, supply float64, n int, rng *rand.Rand) []topologies.Values {
	base := topologies.Defaults(f)
	for _, p := range f.Params() {
		if p.Unit == units.Volt {
			base[p.Name] = math.Min(p.Max, p.Default*supply/1.8)
		}
	}
	out := []topologies.Values{base}
	for k := 0; k < n; k++ {
		v := topologies.Values{}
		for _, p := range f.Params() {
			x := base[p.Name]
			if p.Scale == topologies.Choice {
				v[p.Name] = math.Floor(rng.Float64() * float64(len(p.Choices)))
				continue
			}
			if p.Scale == topologies.Log {
				x *= math.Pow(3, 2*rng.Float64()-1)
			} else {
				x += (2*rng.Float64() - 1) * 0.25 * (p.Max - p.Min)
			}
			v[p.Name] = math.Min(p.Max, math.Max(p.Min, x))
		}
		out = append(out, v)
	}
	return out
}

// ngspiceTolerances make ngspice's own Newton iteration converge far
// tighter than the comparison needs, so that what is compared is the
// circuit, not two solvers' stopping rules.
const ngspiceTolerances = ".options reltol=1e-7 abstol=1e-15 vntol=1e-10 itl1=500 itl2=200\n"

// TestFamiliesAgainstNgspice simulates every family's testbench deck, at
// its defaults and at random sizings, on two level-1 processes, and
// compares with pairsmith's own sweep.
//
// Source: ngspice (Debian package), running the deck `netlist
// --testbench --dc` writes, with the level-1 cards of the process.
// Checks (issue 2): gm at every point within 1 % of the peak gm, where
// ngspice's gm is the central difference of I(VOUT) over VID = ±0.1 mV (its
// truncation error, from the cubic term of a pair's transfer curve, is
// about (0.1 mV / V_ov)², under 1e-5 here); every transistor's channel
// current (ngspice's id + ibd) within 0.1 % (plus a 0.1 nA floor for
// devices that are off, where ngspice's source junction still leaks).
func TestFamiliesAgainstNgspice(t *testing.T) {
	ngspice.Require(t)
	rng := rand.New(rand.NewPCG(7, 11))
	var worstGM, worstID float64
	for _, pc := range level1Cases {
		proc, ok := device.Builtin(pc.process)
		if !ok {
			t.Fatalf("no built-in %s", pc.process)
		}
		for _, f := range topologies.All() {
			for k, v := range sizings(f, pc.supply, 3, rng) {
				name := fmt.Sprintf("%s/%s/%d", pc.process, f.Name(), k)
				t.Run(name, func(t *testing.T) {
					gm, id := compareWithNgspice(t, f, v, proc, pc.supply, 27+device.ZeroC, 0.05, true)
					worstGM = math.Max(worstGM, gm)
					worstID = math.Max(worstID, id)
				})
			}
		}
	}
	t.Logf("worst gm error %.3g of peak gm; worst drain-current error %.3g relative", worstGM, worstID)
}

// TestFamiliesAtCornersAgainstNgspice: every family at its defaults on
// demo18-l1 at two far conditions — the fast corner at the highest supply
// and temperature (ff, 1.98 V, 125 °C) and the slow one at the lowest
// (ss, 1.62 V, −40 °C) — with each temperature law of the reference
// currents, referred to 27 °C, against ngspice running the deck written
// with that corner's cards, supply and .temp, the laws as behavioural
// sources of ngspice's own temperature (temper).
//
// Source: ngspice (Debian package), as TestFamiliesAgainstNgspice. Check
// (issue 9): gm within 1 % of the peak at every point. The drain currents
// are not held to 0.1 % here: ngspice's default junctions (IS = 1e-14 A at
// tnom) leak about a nanoampere each at 125 °C, which pairsmith's devices,
// without junction diodes, leave out; the square-root loop's gain turns
// that into 0.23 % of its tail current at ff. The same leakage biases the
// current switch's NMOS pair, switched off at ff and 125 °C, at 1.4 nA in
// ngspice instead of pairsmith's picoamperes, where the square law gives it
// √(2·β·I) ≈ 3.4 µS: the worst gm error, 0.82 % of the peak (0.13 % at
// 27 °C), under the 1 % bound and explained.
func TestFamiliesAtCornersAgainstNgspice(t *testing.T) {
	ngspice.Require(t)
	proc, _ := device.Builtin("demo18-l1")
	worst := 0.0
	for _, c := range []struct {
		corner string
		supply float64
		tempC  float64
	}{{"ff", 1.98, 125}, {"ss", 1.62, -40}} {
		at, err := proc.AtCorner(c.corner)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range topologies.All() {
			for law, name := range topologies.BiasLaws {
				t.Run(fmt.Sprintf("%s/%gV/%gC/%s/%s", c.corner, c.supply, c.tempC, f.Name(), name), func(t *testing.T) {
					v := sizings(f, c.supply, 0, nil)[0]
					v[topologies.PBiasLaw.Name] = float64(law)
					// 36 steps rail to rail, so that ngspice's .dc ends at the
					// rail as pairsmith's sweep does.
					gm, _ := compareWithNgspice(t, f, v, at, c.supply, c.tempC+device.ZeroC, c.supply/36, false)
					worst = math.Max(worst, gm)
				})
			}
		}
	}
	t.Logf("worst gm error %.3g of peak gm", worst)
}

func compareWithNgspice(t *testing.T, f topologies.Family, v topologies.Values, proc *device.Process, supply, tempK, step float64, checkID bool) (gmErr, idErr float64) {
	t.Helper()
	d := &objectives.Design{
		Topology: f.Name(), ProcessRef: proc.Name, Conditions: topologies.Conditions{Process: proc, Supply: supply, TempK: tempK, BiasRefK: 27 + device.ZeroC},
		Sweep: sim.SweepSpec{Low: 0, High: supply, Step: step},
	}
	var err error
	if d.Params, err = topologies.Complete(f, v); err != nil {
		t.Fatal(err)
	}
	st, err := objectives.Build(d)
	if err != nil {
		t.Fatal(err)
	}
	s, err := sim.NewSolver(st.Circuit, sim.Options{})
	if err != nil {
		t.Fatal(err)
	}
	res := &sim.Result{}
	if err := s.Sweep(d.Sweep, res); err != nil {
		t.Fatal(err)
	}
	var deck bytes.Buffer
	if err := report.Testbench(&deck, d, st, report.TestbenchOptions{DC: true}); err != nil {
		t.Fatal(err)
	}
	base := strings.Replace(deck.String(), ".end\n", ngspiceTolerances+".end\n", 1)
	vectors := []string{"i(vout)"}
	for _, m := range st.Circuit.Mosfets {
		key := "@" + strings.ToLower(m.Name)
		vectors = append(vectors, key+"[id]", key+"[ibd]")
	}
	run := func(vid float64) ngspice.Table {
		t.Helper()
		text := strings.Replace(base, "VID id 0 DC 0\n", fmt.Sprintf("VID id 0 DC %g\n", vid), 1)
		if vid != 0 && text == base {
			t.Fatal("testbench has no VID line to alter")
		}
		tab, err := ngspice.Run(text, vectors...)
		if err != nil {
			t.Fatal(err)
		}
		if len(tab.Scale) != res.Len() {
			t.Fatalf("ngspice gave %d points, pairsmith %d", len(tab.Scale), res.Len())
		}
		return tab
	}
	const h = 1e-4
	op, up, dn := run(0), run(h), run(-h)

	peak := 0.0
	for _, g := range res.GM {
		peak = math.Max(peak, math.Abs(g))
	}
	for i := range res.VCM {
		if math.Abs(op.Scale[i]-res.VCM[i]) > 1e-9 {
			t.Fatalf("point %d: ngspice at vcm %g, pairsmith at %g", i, op.Scale[i], res.VCM[i])
		}
		ng := (up.Vectors["i(vout)"][i] - dn.Vectors["i(vout)"][i]) / (2 * h)
		e := math.Abs(ng-res.GM[i]) / peak
		gmErr = math.Max(gmErr, e)
		if e > 0.01 {
			t.Errorf("vcm %.3f: gm %.6g S, ngspice %.6g S (%.2g of peak %.4g S)", res.VCM[i], res.GM[i], ng, e, peak)
		}
		devs := s.Devices(s.PointAt(res, i))
		for _, dv := range devs {
			// ngspice reports a MOS1 device's id in the device's own
			// sign (positive for a conducting PMOS); pairsmith in the SPICE
			// terminal sign (negative for it). ngspice's id includes the
			// drain–bulk junction's current, reported as ibd, which
			// pairsmith's channel current leaves out: id + ibd is the
			// channel's (as in device's TestLevel1AgainstNgspice). At
			// 125 °C the junctions leak about 1 nA.
			key := "@" + strings.ToLower(dv.Name)
			ngID := float64(dv.Type) * (op.Vectors[key+"[id]"][i] + op.Vectors[key+"[ibd]"][i])
			diff := math.Abs(ngID - dv.ID)
			scale := math.Max(math.Abs(ngID), math.Abs(dv.ID))
			if checkID && diff > 1e-3*scale+1e-10 {
				t.Errorf("vcm %.3f: %s (%s) id %.6g A, ngspice %.6g A", res.VCM[i], dv.Name, st.Roles[dv.Name], dv.ID, ngID)
			}
			if scale > 1e-8 {
				idErr = math.Max(idErr, diff/scale)
			}
		}
	}
	return gmErr, idErr
}
