package objectives

import (
	"math"
	"strconv"

	"pairsmith/units"
)

// Kind says what a catalog entry describes.
type Kind int

// The kinds of entry.
const (
	// Figure is a figure of merit that Measure puts in Metrics. A spec
	// may set a target on it (Entry.Target) and name it as a trade-off
	// axis (Entry.Axis) when its entry says so.
	Figure Kind = iota + 1
	// Constraint is a check that every evaluation makes, whatever the
	// spec sets (docs/buildable.md): the evaluation finds where a device
	// fails it and with what amount (Assess's Findings whose Check is the
	// entry's Key), CheckViolations sums those into the entry's one
	// Violation, and that counts in Deb's rules like a target's.
	Constraint
)

// Sense says on which side of its bound a value is good.
type Sense int

// The senses of a bound.
const (
	AtLeast Sense = iota + 1 // value ≥ limit: larger is better
	AtMost                   // value ≤ limit: smaller is better
	Window                   // |value − at| ≤ tolerance
)

// Combine says how the values of one figure measured under several
// conditions make its worst case (see Worst).
type Combine int

// The ways of combining.
const (
	Lowest   Combine = iota + 1 // the smallest value
	Highest                     // the largest value
	Farthest                    // the value farthest from the target's centre (without one, the mean)
)

// Shown says where a figure is shown for reading: every place a level
// names shows the figures of that level and of every level before it.
type Shown int

// The places a figure is shown, from the shortest summary to the full
// listings.
const (
	// InEvery: every summary of a candidate, down to a one-line one (the
	// headline of a candidate on the report page).
	InEvery Shown = iota + 1
	// InRanking: the ranked families on the terminal, the verdict of a
	// run, the report page's other candidates.
	InRanking
	// InFamilies: the report page's ranked families.
	InFamilies
	// InEval: eval's metrics table.
	InEval
	// InFull: only the full listings: JSON, pareto.csv, the report page's
	// Pareto candidates and its paragraph on each candidate.
	InFull
)

// Target says how a spec sheet sets a bound on a figure.
type Target struct {
	// Key is the spec key under targets: "gm_min", "gm_ripple_max",
	// "switchover"; also the Violation's Target.
	Key string
	// Max is the largest limit a spec may write (MaxRippleTarget for
	// the ripple); 0 for none. Every limit must be above 0.
	Max float64
	// Want says what the field takes, for errors: the limit of an
	// AtLeast or AtMost target, the tolerance of a Window.
	Want string
	// AtWant says what a Window's centre takes ("a voltage within the
	// input range"); AtInRange asks for it within the input range.
	AtWant    string
	AtInRange bool
	// Limit is where Targets holds an AtLeast or AtMost target's limit
	// (NaN, zero, negative or infinite: not set).
	Limit func(*Targets) *float64
	// Window is where Targets holds a Window target.
	Window func(*Targets) *SwitchoverTarget
	// Frequency says the target is written {density, at}: a limit (in
	// Limit) at a frequency (Targets.NoiseAt), as noise_max is.
	Frequency bool
}

// Axis says how a figure is a trade-off axis. Every axis is minimised:
// an AtLeast figure is negated (see Spec.Axes).
type Axis struct {
	// Default puts the axis in the pareto list of a spec that names none.
	Default bool
	// Scale is the axis's natural unit when the spec sets no target on
	// the figure (see Spec.AxisScale); > 0.
	Scale float64
	// Missing is the axis value (negated already for an AtLeast figure)
	// of a figure that is NaN or infinite, given the spec's input range:
	// the worst value the figure can have, or one past every real one.
	Missing func(Range) float64
}

// Words are what tables, plots, texts and the glossary call a figure.
type Words struct {
	// Short names the figure in running text and the short tables:
	// "ripple", "transition width"; "" is the Key.
	Short string
	// Plot labels its axis on plots: "gm ripple"; "" is Short.
	Plot string
	// Meaning says in a line what it is, in eval's metrics table.
	Meaning string
	// Term and Doc are its glossary entry; Term "" is the Key, Doc ""
	// leaves it to another entry's (gm_max is in gm_min's).
	Term, Doc string
	// Shown is where it is shown.
	Shown Shown
	// Fixed writes it in tables with trailing zeros kept, so that a
	// column of measured values shows one precision.
	Fixed bool
	// Unbounded says why a value is +Inf for an entry whose +Inf is a
	// value: "gm falls to zero".
	Unbounded string
	// Missing says why a value can be NaN, in a violation's text: "no
	// handover"; "" for a figure that a successful evaluation never
	// leaves NaN. Tables write such a value as a dash.
	Missing string
	// Single and Incomplete say why a value is NaN in eval's metrics
	// table: on a stage with one input pair, and otherwise.
	Single, Incomplete string
	// Miss is a violation's text as a format of its value and its limit,
	// each written in Dim: "saturation: |V_DS| − |V_DSAT| %s, want ≥ %s".
	// "" writes it from the Sense: "gm_min 120 µS < 150 µS".
	Miss string
}

// Entry describes one figure or constraint: everything that checking,
// guard-banding, the trade-off axes, JSON, CSV, tables and plots need to
// know of it. A new figure is one entry in catalog (and its field in
// Metrics, which Measure fills, and, when a spec may bound it, in
// Targets).
type Entry struct {
	Key  string // the figure's name in JSON, pareto lists and tables: "gm_min"
	Kind Kind
	// Dim is the physical dimension of its values, in which a spec's
	// target on it is read.
	Dim units.Dim
	// Sense says which way it is better and how a bound on it reads;
	// 0 for a figure that only informs (gm_max).
	Sense Sense
	// Combine says how its values under several conditions make the
	// worst case (a Figure).
	Combine Combine
	// Field is where Metrics holds it (a Figure).
	Field func(*Metrics) *float64
	// Unbounded says +Inf is a value (a ripple where gm falls to zero):
	// JSON's null reads back as +Inf, not NaN, and a target counts it
	// as Cap (see Targets.Check).
	Unbounded bool
	Cap       float64
	// Column names it in pareto.csv, with its SI unit: "gm_min_S" (a
	// Figure).
	Column string
	Target Target // Key "": a spec cannot bound it
	Axis   Axis   // Scale 0: not a trade-off axis
	Words  Words
}

// HasTarget reports whether a spec may set a target on the entry.
func (e Entry) HasTarget() bool { return e.Target.Key != "" }

// IsAxis reports whether a spec may name the entry as a trade-off axis.
func (e Entry) IsAxis() bool { return e.Axis.Scale > 0 }

// Value returns the entry's figure in m (a Figure; NaN for a
// Constraint, which has none).
func (e Entry) Value(m Metrics) float64 {
	if e.Field == nil {
		return math.NaN()
	}
	return *e.Field(&m)
}

// ShortName is the entry's Words.Short, or its Key.
func (e Entry) ShortName() string { return or(e.Words.Short, e.Key) }

// PlotLabel is the entry's Words.Plot, or its ShortName.
func (e Entry) PlotLabel() string { return or(e.Words.Plot, e.ShortName()) }

// GlossaryTerm is the entry's Words.Term, or its Key.
func (e Entry) GlossaryTerm() string { return or(e.Words.Term, e.Key) }

func or(s, def string) string {
	if s != "" {
		return s
	}
	return def
}

// catalog is every figure and constraint, in the order of Metrics'
// fields, Targets.Check's violations, pareto.csv's columns and the
// tables' rows. It is read, never written; Catalog hands out copies.
var catalog = []Entry{
	{
		Key: AxisGMMin, Kind: Figure, Dim: units.Siemens, Sense: AtLeast, Combine: Lowest,
		Field:  func(m *Metrics) *float64 { return &m.GMMin },
		Column: "gm_min_S",
		Target: Target{Key: TargetGMMin, Want: "a conductance above 0 S, for example 150uS",
			Limit: func(t *Targets) *float64 { return &t.GMMin }},
		// gm_min = 0 (a dead pair) is the worst there is: −0 on the axis
		// as +0.
		Axis: Axis{Scale: DefaultScaleGMMin, Missing: func(Range) float64 { return 0 }},
		Words: Words{Meaning: "smallest gm over the sweep", Shown: InEvery, Term: "gm_min, gm_max",
			Doc: "the smallest and largest gm over the spec's common-mode range, sampled at its step."},
	},
	{
		Key: "gm_max", Kind: Figure, Dim: units.Siemens, Combine: Highest,
		Field:  func(m *Metrics) *float64 { return &m.GMMax },
		Column: "gm_max_S",
		Words:  Words{Meaning: "largest gm over the sweep", Shown: InEval},
	},
	{
		Key: AxisGMRipple, Kind: Figure, Dim: units.Percent, Sense: AtMost, Combine: Highest,
		Field:     func(m *Metrics) *float64 { return &m.GMRipple },
		Unbounded: true, Cap: RippleCap,
		Column: "gm_ripple",
		Target: Target{Key: TargetGMRippleMax, Max: MaxRippleTarget,
			Want:  "a ripple above 0 and at most 1000%, for example 20% or 0.2",
			Limit: func(t *Targets) *float64 { return &t.GMRippleMax }},
		Axis: Axis{Default: true, Scale: DefaultScaleGMRipple, Missing: func(Range) float64 { return RippleCap }},
		Words: Words{Short: "ripple", Plot: "gm ripple", Meaning: "gm_max / gm_min − 1", Shown: InEvery,
			Unbounded: "gm falls to zero",
			Doc: "gm_max / gm_min − 1 (42 % means gm_max is 1.42 × gm_min). It is ∞ where gm falls to zero somewhere in the range (below " +
				percentText(DeadGM) + " of gm_max: a pair switched off near its rail), which fails every ripple target."},
	},
	{
		Key: AxisPower, Kind: Figure, Dim: units.Watt, Sense: AtMost, Combine: Highest,
		Field:  func(m *Metrics) *float64 { return &m.Power },
		Column: "power_W",
		Target: Target{Key: TargetPowerMax, Want: "a power above 0 W, for example 200uW",
			Limit: func(t *Targets) *float64 { return &t.PowerMax }},
		Axis: Axis{Default: true, Scale: DefaultScalePower, Missing: func(Range) float64 { return worstAxisValue }},
		Words: Words{Meaning: "supply power, largest over the sweep", Shown: InEvery,
			Doc: "the supply voltage × the total current drawn from the supply, the largest value over the sweep. The current includes every tail and its reference (bias) branch, the switch and mirror branches of the families that have them, plus the summing stage's bias: its folding sources carry the largest NMOS pair current over the range plus 10 % of the larger pair's largest current for the cascode branches, whatever the common mode; the ideal reference voltages a family receives (vref) are taken to draw none."},
	},
	{
		Key: AxisArea, Kind: Figure, Dim: units.SquareMetre, Sense: AtMost, Combine: Highest,
		Field:  func(m *Metrics) *float64 { return &m.Area },
		Column: "area_m2",
		Target: Target{Key: TargetAreaMax, Want: "an area above 0 m², for example 3000um2",
			Limit: func(t *Targets) *float64 { return &t.AreaMax }},
		Axis: Axis{Default: true, Scale: DefaultScaleArea, Missing: func(Range) float64 { return worstAxisValue }},
		Words: Words{Meaning: "total gate area Σ W·L·m", Shown: InEvery,
			Doc: "the total gate area Σ W·L·m of every transistor of the stage, in µm²; routing, spacing and the summing stage are not included."},
	},
	{
		Key: TargetSwitchover, Kind: Figure, Dim: units.Volt, Sense: Window, Combine: Farthest,
		Field:  func(m *Metrics) *float64 { return &m.Switchover },
		Column: "switchover_V",
		Target: Target{Key: TargetSwitchover, Want: "a tolerance above 0 V, for example 0.1V",
			AtWant: "a voltage within the input range", AtInRange: true,
			Window: func(t *Targets) *SwitchoverTarget { return &t.Switchover }},
		Words: Words{Meaning: "centre of the NMOS/PMOS handover", Shown: InRanking, Fixed: true,
			Missing: "no handover", Single: "single pair", Incomplete: "no complete handover",
			Doc: "the centre of the handover from the PMOS to the NMOS pair: ∫ vcm · d share / ∫ d share over the range, with share = i_n / (i_n + i_p), the NMOS pair's part of the input-pair current. A single pair has none (—)."},
	},
	{
		Key: AxisTransitionWidth, Kind: Figure, Dim: units.Volt, Sense: AtMost, Combine: Highest,
		Field:  func(m *Metrics) *float64 { return &m.TransitionWidth },
		Column: "transition_width_V",
		Target: Target{Key: TargetTransitionWidthMax, Want: "a width above 0 V, for example 200mV",
			Limit: func(t *Targets) *float64 { return &t.TransitionWidthMax }},
		// No handover: the width of the input range, the widest a
		// transition can be there.
		Axis: Axis{Scale: DefaultScaleTransitionWidth, Missing: func(r Range) float64 { return r.High - r.Low }},
		Words: Words{Short: "transition width", Meaning: "NMOS share from 10 % to 90 %", Shown: InFamilies, Fixed: true,
			Missing: "no handover", Single: "single pair", Incomplete: "no complete handover",
			Doc: "how wide the handover is: from the lowest vcm where share reaches 10 % to the highest where it is still below 90 %. A single pair has none (—)."},
	},
	{
		// It tells how strongly the input devices are inverted; it
		// combines to the least strongly inverted condition.
		Key: "gm_id_min", Kind: Figure, Dim: units.PerVolt, Combine: Highest,
		Field:  func(m *Metrics) *float64 { return &m.GMOverIDMin },
		Column: "gm_id_min_per_V",
		Words: Words{Meaning: "smallest 2·gm / (i_n + i_p): the input devices' gm/I_D", Shown: InFull, Fixed: true,
			Missing: "no pair conducts",
			Doc:     "the smallest 2·gm / (i_n + i_p) over the range, in 1/V: the input transistors' gm/I_D where they are most strongly inverted. Physics bounds gm/I_D by 1/(n·U_T), its weak-inversion value (about 25–30 /V at room temperature); a level-1 model, which has no weak inversion, can exceed that, so on level-1 processes every device carrying its working current must keep an overdrive of at least 4·U_T (gm/I_D ≤ 1/(2·U_T)), the level1_validity check."},
	},
	{
		Key: AxisOffset, Kind: Figure, Dim: units.Volt, Sense: AtMost, Combine: Highest,
		Field:  func(m *Metrics) *float64 { return &m.Offset },
		Column: "offset_V",
		Target: Target{Key: TargetOffsetMax, Want: "an offset above 0 V, for example 4mV",
			Limit: func(t *Targets) *float64 { return &t.OffsetMax }},
		Axis: Axis{Scale: DefaultScaleOffset, Missing: func(Range) float64 { return worstAxisValue }},
		Words: Words{Meaning: "k-sigma input offset from mismatch, largest over the sweep", Shown: InEval,
			Missing: "no mismatch coefficients", Incomplete: "not estimated",
			Doc: "the k-sigma input offset that device mismatch leaves (k the sheet's mismatch.sigma, default 3), the largest over the range: each transistor's threshold and current-factor mismatch by Pelgrom's law from its drawn area, referred to the input through first-order sensitivities of the solved circuit (docs/mismatch.md)."},
	},
	{
		Key: AxisOffsetDrift, Kind: Figure, Dim: units.Volt, Sense: AtMost, Combine: Highest,
		Field:  func(m *Metrics) *float64 { return &m.OffsetDrift },
		Column: "offset_drift_V",
		Target: Target{Key: TargetOffsetDriftMax, Want: "an offset change above 0 V, for example 1mV",
			Limit: func(t *Targets) *float64 { return &t.OffsetDriftMax }},
		Axis: Axis{Scale: DefaultScaleOffset, Missing: func(Range) float64 { return worstAxisValue }},
		Words: Words{Meaning: "k-sigma change of offset across the sweep", Shown: InEval,
			Missing: "no mismatch coefficients", Incomplete: "not estimated",
			Doc: "the k-sigma change of the input offset between two common modes of the range, the largest over every pair: where the pairs hand over the offset moves from one pair's to the other's, a local loss of CMRR."},
	},
	{
		Key: "slew_current", Kind: Figure, Dim: units.Ampere, Combine: Lowest,
		Field:  func(m *Metrics) *float64 { return &m.SlewCurrent },
		Column: "slew_current_A",
		Words: Words{Meaning: "smallest output current for a large input over the sweep", Shown: InEval,
			Missing: "not estimated", Incomplete: "not estimated",
			Doc: "the smallest output current the stage delivers, over the range, with its inputs 0.5 V apart (each held within the rails), both ways: what slews the load."},
	},
	{
		Key: AxisSlew, Kind: Figure, Dim: units.VoltPerSecond, Sense: AtLeast, Combine: Lowest,
		Field:  func(m *Metrics) *float64 { return &m.Slew },
		Column: "slew_V_per_s",
		Target: Target{Key: TargetSlewMin, Want: "a slew rate above 0 V/s, for example 2V/us",
			Limit: func(t *Targets) *float64 { return &t.SlewMin }},
		Axis: Axis{Scale: DefaultScaleSlew, Missing: func(Range) float64 { return 0 }},
		Words: Words{Meaning: "slew_current into the load", Shown: InEval,
			Missing: "no load given", Incomplete: "no load given",
			Doc: "slew_current divided by the sheet's load: the slowest slew rate over the range."},
	},
	{
		Key: AxisMinSupply, Kind: Figure, Dim: units.Volt, Sense: AtMost, Combine: Highest,
		Field:     func(m *Metrics) *float64 { return &m.MinSupply },
		Unbounded: true, Cap: MaxSupply,
		Column: "min_supply_V",
		Target: Target{Key: TargetMinSupplyMax, Want: "a supply above 0 V, for example 1.5V",
			Limit: func(t *Targets) *float64 { return &t.MinSupplyMax }},
		Axis: Axis{Scale: DefaultScaleMinSupply, Missing: func(Range) float64 { return MaxSupply }},
		Words: Words{Meaning: "lowest supply that still works rail to rail", Shown: InEval,
			Unbounded: "not even at the highest supply", Missing: "not estimated", Incomplete: "not estimated",
			Doc: "the lowest supply, to 5 mV, at which the stage still meets the sheet's gm_min and gm_ripple_max (without those targets: keeps gm alive) rail to rail at every corner and temperature of its sign-off, found by bisection."},
	},
	{
		Key: AxisNoise, Kind: Figure, Dim: units.VoltPerRootHertz, Sense: AtMost, Combine: Highest,
		Field:  func(m *Metrics) *float64 { return &m.Noise },
		Column: "noise_V_per_rtHz",
		Target: Target{Key: TargetNoiseMax, Want: "a noise density above 0 V/√Hz, for example 25nV/rtHz", Frequency: true,
			Limit: func(t *Targets) *float64 { return &t.NoiseMax }},
		Axis: Axis{Scale: DefaultScaleNoise, Missing: func(Range) float64 { return worstAxisValue }},
		Words: Words{Meaning: "input noise density at the design's frequency (10 kHz unless set), largest over the sweep", Shown: InEval,
			Missing: "not estimated", Incomplete: "not estimated",
			Doc: "the input-referred voltage noise density at the design's noise frequency (10 kHz unless a noise_max target sets it), the largest over the range: every transistor's thermal and flicker noise carried to the output by the solved circuit and referred to the input through gm (docs/noise.md)."},
	},
	{
		Key: CheckGeometry, Kind: Constraint, Dim: units.Metre, Sense: AtLeast,
		Words: Words{Miss: "geometry: a drawn size %s against the rule %s"},
	},
	{
		Key: CheckSaturation, Kind: Constraint, Dim: units.Volt, Sense: AtLeast,
		Words: Words{Miss: "saturation: |V_DS| − |V_DSAT| %s, want ≥ %s"},
	},
	{
		Key: CheckValidity, Kind: Constraint, Dim: units.Volt, Sense: AtLeast,
		Words: Words{Miss: "level1_validity: overdrive %s < 4·U_T = %s (outside the square law)"},
	},
}

// percentText writes a fraction below 10 as a percentage with one
// decimal, "0.1 %", as the report's tables do.
func percentText(f float64) string { return strconv.FormatFloat(100*f, 'f', 1, 64) + " %" }

// Catalog returns every figure and constraint, in a fixed order: the
// figures in the order of Metrics' fields, then the constraints.
func Catalog() []Entry { return append([]Entry(nil), catalog...) }

// Figures returns the Figure entries, in Catalog's order.
func Figures() []Entry {
	var out []Entry
	for _, e := range catalog {
		if e.Kind == Figure {
			out = append(out, e)
		}
	}
	return out
}

// Lookup returns the entry whose Key, or whose target's spec key, is
// key: what names a figure, an axis, a target or a violation.
func Lookup(key string) (Entry, bool) {
	if e := find(catalog, key); e != nil {
		return *e, true
	}
	return Entry{}, false
}

// find returns the entry of entries named key (its Key or its target's
// spec key), nil when none is.
func find(entries []Entry, key string) *Entry {
	for i := range entries {
		if e := &entries[i]; e.Key == key || (e.HasTarget() && e.Target.Key == key) {
			return e
		}
	}
	return nil
}

// amount is the normalised violation of value against a bound of the
// given sense (see Targets.Check): 0 when met, MissingAmount when value
// is NaN or infinite. tol is a Window's tolerance (limit is its centre).
func amount(s Sense, value, limit, tol float64) float64 {
	if !isFinite(value) {
		return MissingAmount
	}
	switch s {
	case AtLeast:
		return math.Max(0, (limit-value)/limit)
	case AtMost:
		return math.Max(0, (value-limit)/limit)
	}
	return math.Max(0, (math.Abs(value-limit)-tol)/tol)
}

// Worst returns the worst case of one stage's measurements under several
// conditions, figure by figure as each entry's Combine says: the lowest
// gm_min, the highest ripple, power, area and transition width, the
// switchover farthest from t's centre (or, with no switchover target,
// from the mean of its values). A figure that is NaN under one
// condition is NaN in the worst case: what is missing somewhere is
// missing. The Metrics of a single condition are their own worst case,
// bit for bit; none give every figure NaN.
func Worst(ms []Metrics, t Targets) Metrics {
	return worstOf(catalog, ms, t)
}

func worstOf(entries []Entry, ms []Metrics, t Targets) Metrics {
	out, _ := worstIndexOf(entries, ms, t)
	return out
}

// worstIndexOf is worstOf with, for each entry of entries, the index into
// ms of the value it took (-1 for a constraint, for none, and for a
// figure that is NaN somewhere: the first such index then).
func worstIndexOf(entries []Entry, ms []Metrics, t Targets) (Metrics, []int) {
	var out Metrics
	at := make([]int, len(entries))
	vals := make([]float64, len(ms))
	for k, e := range entries {
		at[k] = -1
		if e.Kind != Figure {
			continue
		}
		dst := e.Field(&out)
		*dst = math.NaN()
		if len(ms) == 0 {
			continue
		}
		for i, m := range ms {
			vals[i] = e.Value(m)
		}
		at[k] = combine(e, vals, t)
		*dst = vals[at[k]]
	}
	return out, at
}

// combine returns the index of the worst of vals, at least one, as
// e.Combine says; the first NaN's when one is NaN.
func combine(e Entry, vals []float64, t Targets) int {
	if len(vals) == 1 {
		return 0
	}
	for i, v := range vals {
		if math.IsNaN(v) {
			return i
		}
	}
	w := 0
	switch e.Combine {
	case Lowest:
		for i, v := range vals[1:] {
			if v < vals[w] {
				w = i + 1
			}
		}
		return w
	case Highest:
		for i, v := range vals[1:] {
			if v > vals[w] {
				w = i + 1
			}
		}
		return w
	}
	centre := math.NaN()
	if e.HasTarget() && e.Target.Window != nil && t.Has(e.Target.Key) {
		centre = e.Target.Window(&t).At
	}
	if math.IsNaN(centre) {
		centre = 0
		for _, v := range vals {
			centre += v / float64(len(vals))
		}
	}
	for i, v := range vals[1:] {
		if math.Abs(v-centre) > math.Abs(vals[w]-centre) {
			w = i + 1
		}
	}
	return w
}
