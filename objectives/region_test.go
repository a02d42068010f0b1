package objectives_test

import (
	"math"
	"testing"

	"pairsmith/objectives"
	"pairsmith/sim/device"
)

// TestValiditySqrtBias: on a level-1 process, the square-root loop
// sized as the level-1 demo spec's winner was before every device was
// checked fails the validity rule on its loop, mirror and input devices;
// the same family sized for strong inversion passes it
// (docs/buildable.md#level-1-validity). The flagged devices are checked
// against the square law itself: a saturated level-1 device has
// gm/I_D = 2/(V_GS − V_TH) exactly (Shichman and Hodges, IEEE JSSC 3,
// 1968), so one flagged at mid-range has gm/I_D above 1/(2·U_T) in the
// devices table, independently of the finding's own number.
func TestValiditySqrtBias(t *testing.T) {
	weak := loadEval(t, "testdata/sqrt-bias-weak-loop.yaml")
	ut := device.ThermalVoltage(weak.Design.TempK)
	flagged := map[string]objectives.Finding{}
	for _, f := range weak.Findings {
		if f.Check == objectives.CheckValidity {
			flagged[f.Device] = f
		}
	}
	for _, role := range []string{"nmos mirror input", "nmos tail (mirror output)", "replica tail", "nmos input"} {
		found := false
		for _, d := range weak.Devices {
			if _, ok := flagged[d.Name]; ok && d.Role == role {
				found = true
			}
		}
		if !found {
			t.Errorf("weak loop: no %s flagged; findings:\n%s", role, objectives.FindingsText(weak.Findings))
		}
	}
	checked := 0
	for _, d := range weak.Devices {
		f, ok := flagged[d.Name]
		if !ok || d.Saturation != objectives.StateSaturated || weak.MidVCM < f.From || weak.MidVCM > f.To {
			continue
		}
		gmid := d.GM / math.Abs(d.ID)
		if want := 2 / math.Abs(d.VGS-d.VTH); math.Abs(gmid-want) > 1e-6*want {
			t.Errorf("%s: gm/I_D %g, want the square law's 2/V_ov = %g", d.Name, gmid, want)
		}
		if !(gmid > 1/(2*ut)) {
			t.Errorf("%s flagged at %g V, yet gm/I_D = %g ≤ 1/(2·U_T) = %g", d.Name, weak.MidVCM, gmid, 1/(2*ut))
		}
		checked++
	}
	if checked == 0 {
		t.Error("no flagged device saturated at mid-range: the square-law cross-check checked nothing")
	}
	strong := loadEval(t, "testdata/sqrt-bias-strong.yaml")
	for _, f := range strong.Findings {
		if f.Check == objectives.CheckValidity {
			t.Errorf("strong sizing flagged: %s", f)
		}
	}
}

func loadEval(t *testing.T, path string) *objectives.Evaluation {
	t.Helper()
	d, err := objectives.LoadDesign(path)
	if err != nil {
		t.Fatal(err)
	}
	ev, err := objectives.Evaluate(d)
	if err != nil {
		t.Fatal(err)
	}
	return ev
}
