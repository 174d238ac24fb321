package synth

import (
	"fmt"
	"math"
	"math/cmplx"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"

	"drawerfit/fault"
)

// AnalyzeNetlist runs a small-signal AC analysis of a SPICE netlist by
// modified nodal analysis and returns V(out)/V(in) at each frequency (Hz).
// It is independent of the topology descriptions: it reads only the text.
//
// It understands what Netlist writes and a little more: a title first line,
// comments (*, and ; to end of line), + continuation lines, R, C, V (DC
// and AC magnitude/phase) and E (linear voltage-controlled voltage source)
// elements, .subckt/.ends definitions and X instances, value suffixes
// (f p n u m k meg g t, case-insensitive as in SPICE, trailing unit letters
// ignored), and skips .control blocks and other dot lines. Node and element
// names are case-insensitive. The circuit must have nodes "in" and "out".
//
// Method: unknowns are the node voltages and one current per V and E
// element; each frequency's complex system is solved with gonum's LU
// factorisation in its equivalent real form [Re -Im; Im Re]. An E row is
// divided by its gain, so a very large gain (an ideal op-amp) stays well
// conditioned. Errors are fault.Invalid for text it cannot read and for a
// singular circuit.
func AnalyzeNetlist(netlist string, freqs []float64) ([]complex128, error) {
	c, err := parseNetlist(netlist)
	if err != nil {
		return nil, err
	}
	return c.analyze(freqs)
}

type elem struct {
	kind  byte // 'r', 'c', 'v', 'e'
	name  string
	nodes []string
	value float64    // ohms, farads, gain
	ac    complex128 // V: AC phasor
}

type subckt struct {
	ports []string
	lines [][]string
}

type circuit struct {
	elems []elem
}

// netlistLines splits the text into logical lines of lower-case fields,
// joining continuations and dropping comments and the title.
func netlistLines(text string) [][]string {
	raw := strings.Split(strings.ReplaceAll(text, "\r\n", "\n"), "\n")
	var out [][]string
	for i, l := range raw {
		if i == 0 {
			continue // SPICE: the first line is the title
		}
		if k := strings.IndexByte(l, ';'); k >= 0 {
			l = l[:k]
		}
		l = strings.TrimSpace(strings.ToLower(l))
		if l == "" || l[0] == '*' {
			continue
		}
		if l[0] == '+' {
			if len(out) > 0 {
				out[len(out)-1] = append(out[len(out)-1], strings.Fields(l[1:])...)
			}
			continue
		}
		out = append(out, strings.Fields(strings.NewReplacer("(", " ", ")", " ", ",", " ", "=", " = ").Replace(l)))
	}
	return out
}

func parseNetlist(text string) (*circuit, error) {
	lines := netlistLines(text)
	subs := map[string]*subckt{}
	var top [][]string
	var cur *subckt
	inControl := false
	for _, f := range lines {
		switch {
		case inControl:
			if f[0] == ".endc" {
				inControl = false
			}
			continue
		case f[0] == ".control":
			inControl = true
			continue
		case f[0] == ".subckt":
			if cur != nil {
				return nil, fault.Invalidf("netlist: nested .subckt %s", strings.Join(f, " "))
			}
			if len(f) < 3 {
				return nil, fault.Invalidf("netlist: .subckt needs a name and ports")
			}
			cur = &subckt{ports: f[2:]}
			subs[f[1]] = cur
			continue
		case f[0] == ".ends":
			if cur == nil {
				return nil, fault.Invalidf("netlist: .ends without .subckt")
			}
			cur = nil
			continue
		case f[0][0] == '.' && f[0] != ".end":
			continue
		}
		if f[0] == ".end" {
			break
		}
		if cur != nil {
			cur.lines = append(cur.lines, f)
		} else {
			top = append(top, f)
		}
	}
	if cur != nil {
		return nil, fault.Invalidf("netlist: .subckt without .ends")
	}
	c := &circuit{}
	if err := c.add(top, "", map[string]string{}, subs, 0); err != nil {
		return nil, err
	}
	return c, nil
}

// add appends the elements of lines, renaming nodes through ports (a
// subcircuit's port map) and prefixing other nodes, except ground.
func (c *circuit) add(lines [][]string, prefix string, ports map[string]string, subs map[string]*subckt, depth int) error {
	if depth > 20 {
		return fault.Invalidf("netlist: subcircuits nested too deeply")
	}
	node := func(n string) string {
		if n == "0" || n == "gnd" {
			return "0"
		}
		if m, ok := ports[n]; ok {
			return m
		}
		return prefix + n
	}
	for _, f := range lines {
		name := f[0]
		switch name[0] {
		case 'r', 'c':
			if len(f) < 4 {
				return fault.Invalidf("netlist: %s needs two nodes and a value", name)
			}
			v, err := parseSpiceValue(f[3])
			if err != nil {
				return err
			}
			if !(v > 0) || math.IsInf(v, 0) {
				return fault.Invalidf("netlist: %s has non-positive value %s", name, f[3])
			}
			c.elems = append(c.elems, elem{kind: name[0], name: prefix + name, nodes: []string{node(f[1]), node(f[2])}, value: v})
		case 'v':
			if len(f) < 3 {
				return fault.Invalidf("netlist: %s needs two nodes", name)
			}
			e := elem{kind: 'v', name: prefix + name, nodes: []string{node(f[1]), node(f[2])}}
			for k := 3; k < len(f); k++ {
				if f[k] == "ac" {
					mag, ph := 1.0, 0.0
					if k+1 < len(f) {
						if v, err := parseSpiceValue(f[k+1]); err == nil {
							mag = v
							k++
							if k+1 < len(f) {
								if p, err := parseSpiceValue(f[k+1]); err == nil {
									ph = p
									k++
								}
							}
						}
					}
					e.ac = cmplx.Rect(mag, ph*math.Pi/180)
				}
			}
			c.elems = append(c.elems, e)
		case 'e':
			if len(f) < 6 {
				return fault.Invalidf("netlist: %s needs four nodes and a gain", name)
			}
			g, err := parseSpiceValue(f[5])
			if err != nil {
				return err
			}
			c.elems = append(c.elems, elem{kind: 'e', name: prefix + name, value: g,
				nodes: []string{node(f[1]), node(f[2]), node(f[3]), node(f[4])}})
		case 'x':
			if len(f) < 2 {
				return fault.Invalidf("netlist: %s needs nodes and a subcircuit", name)
			}
			sub, ok := subs[f[len(f)-1]]
			if !ok {
				return fault.Invalidf("netlist: %s uses unknown subcircuit %s", name, f[len(f)-1])
			}
			conn := f[1 : len(f)-1]
			if len(conn) != len(sub.ports) {
				return fault.Invalidf("netlist: %s connects %d nodes to a subcircuit with %d ports", name, len(conn), len(sub.ports))
			}
			pm := map[string]string{}
			for k, p := range sub.ports {
				pm[p] = node(conn[k])
			}
			if err := c.add(sub.lines, prefix+name+".", pm, subs, depth+1); err != nil {
				return err
			}
		default:
			return fault.Invalidf("netlist: unsupported element %s (only R, C, V, E and X)", name)
		}
	}
	return nil
}

// parseSpiceValue reads a SPICE number: a float with an optional scale
// suffix (f p n u m k meg g t; "mil" is not supported) and trailing letters
// ignored.
func parseSpiceValue(s string) (float64, error) {
	i := 0
	for i < len(s) && strings.IndexByte("0123456789.+-e", s[i]) >= 0 {
		// An 'e' is an exponent only when a digit or sign follows.
		if s[i] == 'e' && (i+1 >= len(s) || strings.IndexByte("0123456789+-", s[i+1]) < 0) {
			break
		}
		i++
	}
	v, err := strconv.ParseFloat(s[:i], 64)
	if err != nil {
		return 0, fault.Invalidf("netlist: cannot read the number %q", s)
	}
	rest := s[i:]
	scale := 1.0
	switch {
	case strings.HasPrefix(rest, "meg"):
		scale = 1e6
	case rest == "":
	default:
		switch rest[0] {
		case 'f':
			scale = 1e-15
		case 'p':
			scale = 1e-12
		case 'n':
			scale = 1e-9
		case 'u':
			scale = 1e-6
		case 'm':
			scale = 1e-3
		case 'k':
			scale = 1e3
		case 'g':
			scale = 1e9
		case 't':
			scale = 1e12
		}
	}
	return v * scale, nil
}

// analyze solves the circuit at each frequency and returns V(out)/V(in).
func (c *circuit) analyze(freqs []float64) ([]complex128, error) {
	idx := map[string]int{}
	var names []string
	for _, e := range c.elems {
		for _, n := range e.nodes {
			if _, ok := idx[n]; !ok && n != "0" {
				idx[n] = len(names)
				names = append(names, n)
			}
		}
	}
	in, okIn := idx["in"]
	out, okOut := idx["out"]
	if !okIn || !okOut {
		return nil, fault.Invalidf("netlist: needs nodes in and out")
	}
	nn := len(names)
	nb := 0
	for _, e := range c.elems {
		if e.kind == 'v' || e.kind == 'e' {
			nb++
		}
	}
	n := nn + nb
	a := make([]complex128, n*n)
	rhs := make([]complex128, n)
	at := func(i, j int, v complex128) {
		if i >= 0 && j >= 0 {
			a[i*n+j] += v
		}
	}
	nodeIx := func(s string) int {
		if s == "0" {
			return -1
		}
		return idx[s]
	}
	A := mat.NewDense(2*n, 2*n, nil)
	bv := mat.NewVecDense(2*n, nil)
	var x, r, dx mat.VecDense
	var lu mat.LU
	res := make([]complex128, len(freqs))
	for fi, f := range freqs {
		for i := range a {
			a[i] = 0
		}
		for i := range rhs {
			rhs[i] = 0
		}
		w := 2 * math.Pi * f
		br := nn
		for _, e := range c.elems {
			p, m := nodeIx(e.nodes[0]), nodeIx(e.nodes[1])
			switch e.kind {
			case 'r', 'c':
				y := complex(1/e.value, 0)
				if e.kind == 'c' {
					y = complex(0, w*e.value)
				}
				at(p, p, y)
				at(m, m, y)
				at(p, m, -y)
				at(m, p, -y)
			case 'v':
				at(p, br, 1)
				at(m, br, -1)
				at(br, p, 1)
				at(br, m, -1)
				rhs[br] = e.ac
				br++
			case 'e':
				cp, cm := nodeIx(e.nodes[2]), nodeIx(e.nodes[3])
				at(p, br, 1)
				at(m, br, -1)
				// (V+ - V-) - g (Vc+ - Vc-) = 0, divided by g when |g| > 1.
				ko, kc := complex(1, 0), complex(e.value, 0)
				if math.Abs(e.value) > 1 {
					ko, kc = complex(1/e.value, 0), 1
				}
				at(br, p, ko)
				at(br, m, -ko)
				at(br, cp, -kc)
				at(br, cm, kc)
				br++
			}
		}
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				v := a[i*n+j]
				A.Set(i, j, real(v))
				A.Set(i, j+n, -imag(v))
				A.Set(i+n, j, imag(v))
				A.Set(i+n, j+n, real(v))
			}
			bv.SetVec(i, real(rhs[i]))
			bv.SetVec(i+n, imag(rhs[i]))
		}
		lu.Factorize(A)
		if err := lu.SolveVecTo(&x, false, bv); err != nil {
			var cond mat.Condition
			if !isCondition(err, &cond) {
				return nil, fmt.Errorf("netlist: solve at %g Hz: %w", f, err)
			}
			if math.IsInf(float64(cond), 1) {
				return nil, fault.Invalidf("netlist: the circuit is singular at %g Hz (a floating node or a loop of sources?)", f)
			}
			// A merely large condition number is a warning; the result is
			// still the LU solution, and the tests hold it to the closed form.
		}
		// Iterative refinement (two steps in working precision) shrinks the
		// componentwise error, which matters deep in a stopband where V(out)
		// is many orders of magnitude below the other unknowns.
		for it := 0; it < 2; it++ {
			r.MulVec(A, &x)
			r.SubVec(bv, &r)
			if err := lu.SolveVecTo(&dx, false, &r); err != nil {
				if _, ok := err.(mat.Condition); !ok {
					return nil, fmt.Errorf("netlist: refine at %g Hz: %w", f, err)
				}
			}
			x.AddVec(&x, &dx)
		}
		vin := complex(x.AtVec(in), x.AtVec(in+n))
		vout := complex(x.AtVec(out), x.AtVec(out+n))
		if vin == 0 {
			return nil, fault.Invalidf("netlist: V(in) is zero at %g Hz (no AC source at in?)", f)
		}
		res[fi] = vout / vin
	}
	return res, nil
}

func isCondition(err error, c *mat.Condition) bool {
	e, ok := err.(mat.Condition)
	if ok {
		*c = e
	}
	return ok
}
