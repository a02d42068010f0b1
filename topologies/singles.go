package topologies

// nPair is a single NMOS differential pair with a mirrored NMOS tail: the
// baseline that loses its gm as the common mode approaches ground, where
// the pair runs out of gate-source voltage and its tail out of headroom
// (any analog design text, e.g. Razavi, Design of Analog CMOS Integrated
// Circuits, ch. 4).
type nPair struct{}

func (nPair) Name() string { return "n-pair" }
func (nPair) Summary() string {
	return "single NMOS pair with a mirrored tail; loses gm near the negative rail"
}
func (nPair) Params() []Param { return pairParams(true, false) }

func (f nPair) Build(v Values, cond Conditions) (*Stage, error) {
	b, err := newBuilder(f, v, cond)
	if err != nil {
		return nil, err
	}
	tn := b.c.Node("tn")
	b.nPair(tn)
	b.nTail(tn)
	return b.finish()
}

// pPair is a single PMOS differential pair with a mirrored PMOS tail; it
// loses its gm as the common mode approaches the supply.
type pPair struct{}

func (pPair) Name() string { return "p-pair" }
func (pPair) Summary() string {
	return "single PMOS pair with a mirrored tail; loses gm near the positive rail"
}
func (pPair) Params() []Param { return pairParams(false, true) }

func (f pPair) Build(v Values, cond Conditions) (*Stage, error) {
	b, err := newBuilder(f, v, cond)
	if err != nil {
		return nil, err
	}
	tp := b.c.Node("tp")
	b.pPair(tp)
	b.pTail(tp)
	return b.finish()
}

// complementary is an NMOS and a PMOS pair in parallel on the same inputs,
// each with its own tail: the plain rail-to-rail stage. Where both pairs
// conduct the summed gm is the sum of both; in strong inversion that is
// twice the gm of either pair alone near a rail (J. H. Huijsing,
// D. Linebarger, "Low-voltage operational amplifier with rail-to-rail
// input and output ranges", IEEE JSSC 20(6), 1985).
type complementary struct{}

func (complementary) Name() string { return "complementary" }
func (complementary) Summary() string {
	return "NMOS and PMOS pairs in parallel, each with its own tail; gm doubles where both conduct"
}
func (complementary) Params() []Param { return pairParams(true, true) }

func (f complementary) Build(v Values, cond Conditions) (*Stage, error) {
	b, err := newBuilder(f, v, cond)
	if err != nil {
		return nil, err
	}
	tn, tp := b.c.Node("tn"), b.c.Node("tp")
	b.nPair(tn)
	b.pPair(tp)
	b.nTail(tn)
	b.pTail(tp)
	return b.finish()
}
