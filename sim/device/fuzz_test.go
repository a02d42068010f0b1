package device

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"gopkg.in/yaml.v3"

	"pairsmith/units"
)

// FuzzReadProcess reads any text as a process file. Nothing may panic; an
// error is a *units.Error whose message starts "fuzz.yaml:LINE: " (or
// "fuzz.yaml: " for a file over units.MaxFileSize); a process read in has
// an NMOS and a PMOS card of its kind, writes back (formatProcess) as a
// file that reads as the same process (the same values; the
// lines differ), and its cards give a finite drain
// current for a 10 µm / 1 µm transistor at 1 V of gate and drain drive
// at the nominal temperature, or an error from Instance. The seeds are in
// testdata/fuzz/FuzzReadProcess.
func FuzzReadProcess(f *testing.F) {
	f.Fuzz(func(t *testing.T, data []byte) {
		p, err := ReadProcess("fuzz.yaml", data)
		if err != nil {
			var ue *units.Error
			if !errors.As(err, &ue) {
				t.Fatalf("error %q (%T) is not a *units.Error", err, err)
			}
			msg := err.Error()
			if errors.Is(err, units.ErrTooLarge) && ue.Line == 0 && strings.HasPrefix(msg, "fuzz.yaml: ") {
				return
			}
			if ue.File != "fuzz.yaml" || ue.Line < 1 || !strings.HasPrefix(msg, fmt.Sprintf("fuzz.yaml:%d: ", ue.Line)) {
				t.Fatalf("error %q does not start with fuzz.yaml:LINE:", msg)
			}
			return
		}
		if p.N == nil || p.P == nil || p.N.Type() != NMOS || p.P.Type() != PMOS || p.N.Kind() != p.Kind || p.P.Kind() != p.Kind {
			t.Fatalf("process %+v: want an NMOS and a PMOS card of kind %s", p, p.Kind)
		}
		text := formatProcess(p)
		back, err := ReadProcess("fuzz.yaml", []byte(text))
		if err != nil {
			t.Fatalf("the process written back does not read: %v\n%s", err, text)
		}
		same := p.Name == back.Name && p.Doc == back.Doc && p.Kind == back.Kind && p.TnomK == back.TnomK &&
			p.File == back.File && reflect.DeepEqual(p.N, back.N) && reflect.DeepEqual(p.P, back.P)
		if !same {
			t.Fatalf("the process written back reads as another:\n%+v\n%+v\n%s", p, back, text)
		}
		for _, card := range []Model{p.N, p.P} {
			inst, err := card.Instance(Geometry{W: 10e-6, L: 1e-6}, p.TnomK)
			if err != nil {
				continue
			}
			s := float64(card.Type())
			e := inst.Eval(s, s, 0, 0)
			for _, x := range []float64{e.ID, e.GD, e.GG, e.GS, e.GB} {
				if math.IsNaN(x) || math.IsInf(x, 0) {
					t.Fatalf("%s card %+v at 1 V drive: %+v", card.Type(), card, e)
				}
			}
		}
	})
}

// formatProcess writes a process as a process file (the format
// ReadProcess documents), every value as units.Format writes it, which
// reads back bit for bit. A level-1 card gets tcv and bex only when it
// follows the linear temperature law, which giving them selects.
func formatProcess(p *Process) string {
	var b strings.Builder
	fmt.Fprintf(&b, "name: %s\ndoc: %s\nmodel: %s\ntnom: %s\n", yamlText(p.Name), yamlText(p.Doc), p.Kind,
		units.Format(p.TnomK, units.Temperature))
	for _, c := range []struct {
		key  string
		card Model
	}{{"nmos", p.N}, {"pmos", p.P}} {
		var vto, kp, gamma, phi, lambda, ld, tcv, bex float64
		temp := true
		switch m := c.card.(type) {
		case *Level1:
			vto, kp, gamma, phi, lambda, ld, tcv, bex = m.VTO, m.KP, m.Gamma, m.Phi, m.Lambda, m.LD, m.TCV, m.BEX
			temp = m.LinearTemp
		case *EKV:
			vto, kp, gamma, phi, lambda, ld, tcv, bex = m.VTO, m.KP, m.Gamma, m.Phi, m.Lambda, m.LD, m.TCV, m.BEX
		}
		fmt.Fprintf(&b, "%s: {vto: %s, kp: %s, gamma: %s, phi: %s, lambda: %s, ld: %s", c.key,
			units.Format(vto, units.Volt), units.Format(kp, units.AmperePerVoltSq), units.Format(gamma, units.SqrtVolt),
			units.Format(phi, units.Volt), units.Format(lambda, units.PerVolt), units.Format(ld, units.Metre))
		if temp {
			fmt.Fprintf(&b, ", tcv: %s, bex: %s", units.Format(tcv, units.VoltPerKelvin), units.Format(bex, units.Dimensionless))
		}
		b.WriteString("}\n")
	}
	return b.String()
}

// yamlText writes s as a YAML scalar that reads back as s.
func yamlText(s string) string {
	out, err := yaml.Marshal(s)
	if err != nil {
		return strconv.Quote(s)
	}
	return strings.TrimSuffix(string(out), "\n")
}
