package device

import (
	"errors"
	"fmt"
	"slices"

	"pairsmith/units"
)

// Shift is how a process corner moves one device type's card: DVT
// changes the magnitude of the threshold VTO (V; negative is faster) and
// DKP scales the transconductance parameter KP by 1 + DKP.
type Shift struct {
	DVT, DKP float64
}

// Corner is a named process corner: a shift of each device type's card.
// It applies to both model kinds (level 1 and EKV), whose cards both
// carry VTO and KP.
type Corner struct {
	Name string
	N, P Shift
}

// Typical is the corner name of the unshifted cards.
const Typical = "tt"

// shifted returns the card of polarity t moved by the corner's shift.
func (c Corner) shifted(m Model, t Type) Model {
	sh := c.N
	if t == PMOS {
		sh = c.P
	}
	return Shifted(m, sh)
}

// Shifted returns a copy of card m with its threshold's magnitude moved
// by sh.DVT (V) and its KP scaled by 1 + sh.DKP: a corner's card, or one
// device's own card in a mismatch sample. A card of another kind is
// returned as it is.
func Shifted(m Model, sh Shift) Model {
	switch card := m.(type) {
	case *Level1:
		out := *card
		out.VTO += float64(card.Polarity) * sh.DVT // +1 for an NMOS, −1 for a PMOS (SPICE signs)
		out.KP *= 1 + sh.DKP
		return &out
	case *EKV:
		out := *card
		out.VTO += float64(card.Polarity) * sh.DVT
		out.KP *= 1 + sh.DKP
		return &out
	}
	return m
}

// CornerNames returns the names of the process's corners, the typical one
// first.
func (p *Process) CornerNames() []string {
	out := make([]string, len(p.Corners))
	for i, c := range p.Corners {
		out[i] = c.Name
	}
	return out
}

// AtCorner returns a copy of the process whose cards are those of the
// named corner (Process.Corner names it), shifted from the cards as
// written whatever corner p is at; the typical corner's copy has those
// cards. An unknown name is an error that lists the process's corners.
func (p *Process) AtCorner(name string) (*Process, error) {
	i := slices.IndexFunc(p.Corners, func(c Corner) bool { return c.Name == name })
	if i < 0 {
		return nil, fmt.Errorf("process %s: no corner %q (it has %v)", p.Name, name, p.CornerNames())
	}
	n, pm := p.typical[0], p.typical[1]
	if n == nil || pm == nil { // a Process made in code: its cards are the typical ones
		n, pm = p.N, p.P
	}
	c := p.Corners[i]
	out := *p
	out.N, out.P, out.typical = c.shifted(n, NMOS), c.shifted(pm, PMOS), [2]Model{n, pm}
	out.Corner = c.Name
	return &out, nil
}

// ShiftRanges are the physical ranges of a corner's shifts: the
// threshold by at most ±0.5 V and kp by −50 % to +100 % (corners of real
// processes move them by tens of millivolts and some ten per cent, from
// memory).
func ShiftRanges() []Range {
	return []Range{
		{Field: "dvt", Dim: units.Volt, Min: -0.5, Max: 0.5, What: "a change of the threshold's magnitude",
			Why: "process corners move thresholds by tens of millivolts (from memory)"},
		{Field: "dkp", Dim: units.Percent, Min: -0.5, Max: 1, What: "a relative change of kp",
			Why: "process corners move kp by some ten per cent (from memory)"},
	}
}

// readCorners reads a process file's corners section:
//
//	corners:
//	  ff: {nmos: {dvt: -40mV, dkp: 8%}, pmos: {dvt: -50mV, dkp: 8%}}
//	  ss: {nmos: {dvt: 40mV, dkp: -8%}, pmos: {dvt: 50mV, dkp: -8%}}
//
// in the order written; a device type or a value left out does not move.
// The typical corner tt is the unshifted cards: listed first whether the
// file names it or not, and a file that names it may not shift it. A file
// without the section has tt only. A shift that moves a card's |VTO| or
// kp out of its physical range (CardRanges) is refused at its line.
func readCorners(root *units.Map, n, pm Model) ([]Corner, error) {
	out := []Corner{{Name: Typical}}
	if !root.Has("corners") {
		return out, nil
	}
	cs, _, err := root.Map("corners")
	if err != nil {
		return nil, err
	}
	for _, name := range cs.Keys() {
		cm, _, err := cs.Map(name)
		if err != nil {
			return nil, err
		}
		if err := cm.Check("nmos", "pmos"); err != nil {
			return nil, err
		}
		c := Corner{Name: name}
		for _, side := range []struct {
			key  string
			t    Type
			card Model
			sh   *Shift
		}{{"nmos", NMOS, n, &c.N}, {"pmos", PMOS, pm, &c.P}} {
			if !cm.Has(side.key) {
				continue
			}
			sm, _, err := cm.Map(side.key)
			if err != nil {
				return nil, err
			}
			if err := sm.Check("dvt", "dkp"); err != nil {
				return nil, err
			}
			dst := map[string]*float64{"dvt": &side.sh.DVT, "dkp": &side.sh.DKP}
			for _, r := range ShiftRanges() {
				v, err := sm.QuantityOr(r.Field, r.Dim, 0)
				if err != nil {
					return nil, err
				}
				if sm.Has(r.Field) && !r.Contains(v) {
					return nil, sm.ErrorAt(r.Field, sm.Text(r.Field), r.Want(), errors.New(r.Why))
				}
				*dst[r.Field] = v
			}
			if err := checkShifted(c.shifted(side.card, side.t), side.t); err != nil {
				field := "dvt"
				if !sm.Has(field) {
					field = "dkp"
				}
				return nil, sm.ErrorAt(field, sm.Text(field), "a shift that keeps the card in its physical range", err)
			}
		}
		if name == Typical {
			if c.N != (Shift{}) || c.P != (Shift{}) {
				return nil, cs.ErrorAt(name, "", "no shift: tt is the cards as written", errors.New("the typical corner is the unshifted cards"))
			}
			continue
		}
		out = append(out, c)
	}
	return out, nil
}

// checkShifted reports a shifted card whose |VTO| or kp left its
// physical range (CardRanges).
func checkShifted(m Model, t Type) error {
	c, ok := m.(thresholdCard)
	if !ok {
		return nil
	}
	vto, kp := c.vtoKP()
	for _, r := range CardRanges(t) {
		switch {
		case r.Field == "vto" && !r.Contains(vto):
			return fmt.Errorf("the shifted vto %s is outside %s", units.Format(vto, units.Volt), r.Want())
		case r.Field == "kp" && !r.Contains(kp):
			return fmt.Errorf("the shifted kp %s is outside %s", units.Format(kp, r.Dim), r.Want())
		}
	}
	return nil
}

// thresholdCard is a card with a threshold VTO and a kp, the two values a
// corner moves: both model kinds.
type thresholdCard interface{ vtoKP() (vto, kp float64) }

func (c *Level1) vtoKP() (vto, kp float64) { return c.VTO, c.KP }
func (c *EKV) vtoKP() (vto, kp float64)    { return c.VTO, c.KP }
