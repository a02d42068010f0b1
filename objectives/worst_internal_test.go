package objectives

import "testing"

// TestNearestStart: a condition starts from the measured one nearest in
// temperature, then supply, then of its own corner, the earliest among
// equals (our choice, see nearestStart).
func TestNearestStart(t *testing.T) {
	c := func(corner string, v, tc float64) Condition {
		return Condition{Corner: corner, Supply: v, TempK: tc + 273.15}
	}
	order := []Condition{
		c("tt", 1.8, 27),   // 0: the nominal
		c("ff", 1.8, 27),   // 1
		c("tt", 1.62, -40), // 2
		c("ss", 1.62, -40), // 3
		c("ss", 1.98, -40), // 4
		c("ff", 1.62, 27),  // 5
		c("ss", 1.8, 27),   // 6
		c("ff", 1.98, 125), // 7
		c("tt", 1.98, 27),  // 8
	}
	for _, tc := range []struct{ k, want int }{
		{1, 0}, // the only one
		{2, 0}, // no other temperature measured
		{3, 2}, // same temperature and supply
		{4, 3}, // −40 °C, both at 1.62 V: its own corner
		{5, 1}, // 27 °C: nearest supply 1.8 V, of its own corner
		{6, 0}, // 1.8 V at 27 °C: the nominal, earliest of equals
		{7, 1}, // 125 °C: 27 °C is nearest, then 1.8 V, then its own corner
		{8, 0}, // 1.98 V at 27 °C: nearest supply 1.8 V, tt
	} {
		if got := nearestStart(order, tc.k); got != tc.want {
			t.Errorf("start of %v: %v (%d), want %v (%d)", order[tc.k], order[got], got, order[tc.want], tc.want)
		}
	}
}

// TestConditionsWhateverTheWorkers: eval's conditions, each started from
// another's first solution, give the same metrics bit for bit on one
// worker and on four (the start of each is fixed by the conditions'
// order, not by which finishes first).
func TestConditionsWhateverTheWorkers(t *testing.T) {
	d, err := ReadDesign("d.yaml", []byte("topology: current-switch\nprocess: demo18\nsupply: {min: 1.62V, max: 1.98V}\n"+
		"temperature: {min: -40C, max: 125C}\ncorners: [tt, ss, ff]\nsweep: {low: 0V, high: supply, step: 50mV}\n"), "")
	if err != nil {
		t.Fatal(err)
	}
	nom, err := sweep(d, nil, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	conds := d.AllConditions()[1:]
	var runs [2][]ConditionEval
	for k, workers := range []int{1, 4} {
		runs[k] = make([]ConditionEval, len(conds))
		if err := measureConditions(d, nom.res.X[:nom.s.Unknowns()], conds, runs[k], &SolverCache{}, workers); err != nil {
			t.Fatal(err)
		}
	}
	for i := range conds {
		if !runs[0][i].Metrics.Same(runs[1][i].Metrics) {
			t.Errorf("%v: one worker %+v, four %+v", conds[i], runs[0][i].Metrics, runs[1][i].Metrics)
		}
	}
}
