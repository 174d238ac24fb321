package schematic

import (
	"bytes"
	"fmt"
	"html"
	"math"
	"slices"
	"strings"

	"drawerfit/synth"
)

// Label is what the drawing writes beside one element of the topology.
type Label struct {
	// Ref is the board designator (R4, C7); empty means the topology's own
	// element reference.
	Ref string
	// Value is the element's value as people read it, e.g. "15.3 kΩ".
	Value string
	// Makeup says what the value is made of when it is more than one part,
	// e.g. "12 kΩ + 3.3 kΩ series"; empty for a single part.
	Makeup string
	// Bins are the storage locations of the element's parts, one per part
	// (repeats allowed).
	Bins []string
}

// Options controls one drawing.
type Options struct {
	// ID prefixes the id of the <svg> and of every element in it, so that
	// several drawings can share a page; empty means "sch".
	ID string
	// Title is the drawing's <title> (for screen readers and tooltips);
	// empty means the topology's name.
	Title string
	// Labels are per element, in the topology's Elements order. A missing
	// entry (or a nil slice) shows the element's reference only.
	Labels []Label
	// OpAmp is the op-amp's designator; empty means "U1".
	OpAmp string
	// In and Out label the section's terminals; empty means "in" and "out".
	In, Out string
	// Bias, when not nil, is a resistor in the follower's loop from the
	// op-amp's output to its - input (bias-current compensation); it is
	// drawn as an element with the id suffix "bias".
	Bias *Label
	// Pins are the op-amp's pin numbers, drawn beside its inputs and
	// output; nil draws none (the caller says where to find them).
	Pins *Pins
}

// Pins are an op-amp channel's pin numbers as its package's pinout gives
// them (text, e.g. "3"); an empty field is not drawn.
type Pins struct {
	Plus, Minus, Out string
}

// Geometry of the drawing in SVG user units (px at 96 dpi). The numbers are
// a layout choice of this package: a 170 px pitch leaves room for a label
// like "12.33 kΩ + 470 Ω series" at 10 px between two nodes.
const (
	pitch      = 170.0 // distance between chain nodes
	left       = 40.0  // x of the input node
	chainY     = 0.0   // y of the series chain (the drawing is translated later)
	railRise   = 120.0 // height of the feedback rail above the chain
	groundDrop = 120.0 // length of a shunt branch from its node to ground
	shuntShift = 40.0  // horizontal spacing of extra shunts on one node
	opGap      = 40.0  // from the + input node to the op-amp's input edge
	opWidth    = 60.0
	opMinusDY  = 24.0 // - input below the + input
	opHalfH    = 28.0 // op-amp triangle extends this far past the inputs
	loopDrop   = 46.0 // the follower's feedback loop runs this far below the chain
	outRun     = 90.0 // from the op-amp's input edge to the output node
	termRun    = 40.0 // from the output node to the output terminal
	bodyLen    = 36.0 // resistor box length
	bodyW      = 12.0 // resistor box width
	plateGap   = 8.0  // capacitor plate spacing
	plateLen   = 26.0
	lineH      = 12.0 // label line spacing
	fontSize   = 10.0
)

// layout is the result of classifying a topology's elements.
type layout struct {
	chain    []string // nodes from "in" to the driven op-amp input
	series   []int    // element index between chain[i] and chain[i+1]
	seriesUp []bool   // true when the element's From is chain[i+1]
	shunts   map[string][]int
	feedback map[string][]int
	// drive is the op-amp input the chain ends on: the + input, or the -
	// input when the + input is grounded (an inverting section).
	drive string
	// divGround and divFeedback are the gain divider's elements (- input
	// to ground, output to - input), -1 without a divider.
	divGround, divFeedback int
}

// classify sorts the elements of t into the series chain, shunts to ground
// and feedback to the output. It fails for a topology the layout cannot
// draw: an element from ground to the output, an element with both ends on
// one node, or series elements that do not form one path from "in" to Plus.
func classify(t *synth.Topology) (*layout, error) {
	if t.Plus() == "" {
		return nil, fmt.Errorf("schematic: topology %s has no + input node", t.ID())
	}
	l := &layout{shunts: map[string][]int{}, feedback: map[string][]int{}, drive: t.Plus(), divGround: -1, divFeedback: -1}
	minus := t.Minus()
	if minus == "" {
		minus = "out"
	}
	if t.Plus() == "0" {
		l.drive = minus
	}
	divider := minus != "out" && minus != l.drive
	type edge struct {
		i    int
		a, b string
	}
	var series []edge
	for i, e := range t.Elements() {
		a, b := e.From, e.To
		if a == b {
			return nil, fmt.Errorf("schematic: %s %s has both ends on node %q", t.ID(), e.Ref, a)
		}
		rail := func(n string) bool { return n == "0" || n == "out" }
		if divider && (a == minus || b == minus) {
			other := a
			if a == minus {
				other = b
			}
			switch {
			case other == "0" && l.divGround < 0:
				l.divGround = i
			case other == "out" && l.divFeedback < 0:
				l.divFeedback = i
			default:
				return nil, fmt.Errorf("schematic: %s %s on the - input %q is not part of a divider from the output to ground", t.ID(), e.Ref, minus)
			}
			continue
		}
		switch {
		case rail(a) && rail(b):
			return nil, fmt.Errorf("schematic: %s %s joins ground and the output; the layout has no place for it", t.ID(), e.Ref)
		case b == "0":
			l.shunts[a] = append(l.shunts[a], i)
		case a == "0":
			l.shunts[b] = append(l.shunts[b], i)
		case b == "out":
			l.feedback[a] = append(l.feedback[a], i)
		case a == "out":
			l.feedback[b] = append(l.feedback[b], i)
		default:
			series = append(series, edge{i, a, b})
		}
	}
	used := make([]bool, len(series))
	l.chain = []string{"in"}
	if divider && (l.divGround < 0 || l.divFeedback < 0) {
		return nil, fmt.Errorf("schematic: %s has an incomplete gain divider on the - input %q", t.ID(), minus)
	}
	for cur := "in"; cur != l.drive; {
		next := -1
		for k, s := range series {
			if !used[k] && (s.a == cur || s.b == cur) {
				if next >= 0 {
					return nil, fmt.Errorf("schematic: %s branches at node %q; the layout draws one series chain", t.ID(), cur)
				}
				next = k
			}
		}
		if next < 0 {
			return nil, fmt.Errorf("schematic: %s has no series path from %q to the op-amp input %q", t.ID(), "in", l.drive)
		}
		used[next] = true
		s := series[next]
		up := s.b == cur
		to := s.b
		if up {
			to = s.a
		}
		l.series = append(l.series, s.i)
		l.seriesUp = append(l.seriesUp, up)
		l.chain = append(l.chain, to)
		cur = to
	}
	for k, u := range used {
		if !u {
			return nil, fmt.Errorf("schematic: %s %s is not on the series chain from %q to %q",
				t.ID(), t.Element(series[k].i).Ref, "in", l.drive)
		}
	}
	for n := range l.shunts {
		if !slices.Contains(l.chain, n) {
			return nil, fmt.Errorf("schematic: %s has a shunt on node %q, which is not on the chain", t.ID(), n)
		}
	}
	for n := range l.feedback {
		if !slices.Contains(l.chain, n) {
			return nil, fmt.Errorf("schematic: %s has a feedback element on node %q, which is not on the chain", t.ID(), n)
		}
	}
	return l, nil
}

type pt struct{ x, y float64 }

func (p pt) String() string { return num(p.x) + "," + num(p.y) }

// num writes a coordinate with at most one decimal.
func num(v float64) string {
	v = math.Round(v*10) / 10
	if v == 0 {
		v = 0
	}
	return strings.TrimSuffix(strings.TrimRight(fmt.Sprintf("%.1f", v), "0"), ".")
}

// canvas accumulates SVG elements and the drawing's extent.
type canvas struct {
	b                      bytes.Buffer
	minX, minY, maxX, maxY float64
}

func (c *canvas) extend(p pt) {
	c.minX, c.maxX = math.Min(c.minX, p.x), math.Max(c.maxX, p.x)
	c.minY, c.maxY = math.Min(c.minY, p.y), math.Max(c.maxY, p.y)
}

func (c *canvas) printf(format string, a ...any) { fmt.Fprintf(&c.b, format, a...) }

func esc(s string) string { return html.EscapeString(s) }

// wire draws a polyline of class "wire" on net.
func (c *canvas) wire(net string, pts ...pt) {
	s := make([]string, len(pts))
	for i, p := range pts {
		s[i] = p.String()
		c.extend(p)
	}
	c.printf(`<polyline class="wire" data-net="%s" points="%s"/>`+"\n", esc(net), strings.Join(s, " "))
}

func (c *canvas) junction(p pt) {
	c.printf(`<circle class="junction" cx="%s" cy="%s" r="2.5" fill="black"/>`+"\n", num(p.x), num(p.y))
}

// estWidth estimates the width of s at the label font: 0.56 em a character
// is a fair mean for sans-serif text (measured, not from a source) and only
// sizes the drawing's margins.
func estWidth(s string) float64 {
	return float64(len([]rune(s))) * fontSize * 0.56
}

// SVG draws topology t as a standalone SVG element (no XML declaration, so
// that it can be placed inside HTML as it is). Errors: the topology's shape
// is not one the layout can draw (see the package doc).
func SVG(t *synth.Topology, o Options) ([]byte, error) {
	l, err := classify(t)
	if err != nil {
		return nil, err
	}
	if o.ID == "" {
		o.ID = "sch"
	}
	if o.Title == "" {
		o.Title = t.Name()
	}
	if o.OpAmp == "" {
		o.OpAmp = "U1"
	}
	if o.In == "" {
		o.In = "in"
	}
	if o.Out == "" {
		o.Out = "out"
	}
	label := func(i int) Label {
		var lb Label
		if i < len(o.Labels) {
			lb = o.Labels[i]
		}
		if lb.Ref == "" {
			lb.Ref = t.Element(i).Ref
		}
		return lb
	}

	var c canvas
	nodeX := map[string]float64{}
	for i, n := range l.chain {
		nodeX[n] = left + float64(i)*pitch
	}
	drive := l.drive
	px := nodeX[drive]
	opX := px + opGap + float64(max(0, len(l.shunts[drive])-1))*shuntShift
	if l.divGround >= 0 {
		// Room for the divider's resistor to ground clear of the shunt
		// labels at the + input.
		opX += 70
	}
	outX := opX + outRun
	outY := chainY + opMinusDY/2
	railY := chainY - railRise
	c.extend(pt{0, chainY})

	// Series chain.
	for k, ei := range l.series {
		a, b := pt{nodeX[l.chain[k]], chainY}, pt{nodeX[l.chain[k+1]], chainY}
		from, to := a, b
		if l.seriesUp[k] {
			from, to = b, a
		}
		lb := label(ei)
		c.element(o.ID, t.Element(ei), lb, from, to, func() {
			mid := (a.x + b.x) / 2
			c.labels(lb, pt{mid, chainY + 22}, "middle")
		})
	}
	// Shunts to ground and feedback to the rail. conductors counts what
	// meets at each chain node, for the node dots.
	conductors := map[string]int{}
	for _, ei := range l.series {
		conductors[t.Element(ei).From]++
		conductors[t.Element(ei).To]++
	}
	var railXs []float64
	for _, n := range l.chain {
		x0 := nodeX[n]
		for j, ei := range l.shunts[n] {
			e := t.Element(ei)
			x := x0 + float64(j)*shuntShift
			top := pt{x, chainY}
			if j > 0 {
				c.wire(n, pt{x0 + float64(j-1)*shuntShift, chainY}, top)
				if j < len(l.shunts[n])-1 {
					c.junction(top)
				}
			} else {
				conductors[n]++
			}
			bottom := pt{x, chainY + groundDrop}
			from, to := top, bottom
			if e.From == "0" {
				from, to = bottom, top
			}
			lb := label(ei)
			c.element(o.ID, e, lb, from, to, func() {
				c.labels(lb, pt{x + 16, chainY + loopDrop + 20}, "start")
			})
			c.ground(bottom)
		}
		for _, ei := range l.feedback[n] {
			e := t.Element(ei)
			bottom, top := pt{x0, chainY}, pt{x0, railY}
			conductors[n]++
			from, to := bottom, top
			if e.From == "out" {
				from, to = top, bottom
			}
			lb := label(ei)
			c.element(o.ID, e, lb, from, to, func() {
				c.labels(lb, pt{x0 + 16, chainY - railRise*0.5 - lineH}, "start")
			})
			railXs = append(railXs, x0)
		}
	}
	// The op-amp: the chain's end drives the upper input (the + input, or
	// the - input of an inverting section), the other input is below it.
	upper, lower := pt{opX, chainY}, pt{opX, chainY + opMinusDY}
	plusPin, minusPin := upper, lower
	inverting := t.Plus() == "0"
	if inverting {
		plusPin, minusPin = lower, upper
	}
	c.wire(drive, pt{px, chainY}, upper)
	conductors[drive]++
	outPin := pt{opX + opWidth, outY}
	outNode := pt{outX, outY}
	outTerm := pt{outX + termRun, outY}
	plusNet, minusNet := t.Plus(), t.Minus()
	if minusNet == "" {
		minusNet = "out"
	}
	loopX := opX - 14
	switch {
	case inverting:
		// + input to ground, through the bias resistor when drawn.
		gnd := pt{loopX, chainY + loopDrop + 20}
		if o.Bias == nil {
			c.wire("0", lower, pt{loopX, lower.y}, gnd)
		} else {
			plusNet = "plus"
			at := pt{loopX, lower.y}
			c.wire("plus", lower, at)
			gnd = pt{loopX, lower.y + 70}
			e := synth.Element{Ref: "bias", Symbol: "Rbias", Kind: synth.Resistor, From: "plus", To: "0",
				Role: "bias-current compensation, + input to ground"}
			c.element(o.ID, e, *o.Bias, at, gnd, func() {
				c.labels(*o.Bias, pt{loopX - 8, lower.y + 40}, "end")
			})
		}
		c.ground(gnd)
	case l.divGround >= 0:
		// Gain divider: Rb from the output to node n on the loop's bottom
		// run, Ra from n to ground, n up to the - input (through the bias
		// resistor when drawn).
		nY := chainY + loopDrop
		if o.Bias != nil {
			nY += 40
		}
		n := pt{loopX, nY}
		fb, gr := t.Element(l.divFeedback), t.Element(l.divGround)
		c.wire("out", outNode, pt{outX, nY})
		from, to := pt{outX, nY}, n
		if fb.From != "out" {
			from, to = to, from
		}
		lbF := label(l.divFeedback)
		c.element(o.ID, fb, lbF, from, to, func() {
			c.labels(lbF, pt{outX + 8, nY + 16}, "start")
		})
		g := pt{loopX, nY + 60}
		from, to = n, g
		if gr.From == "0" {
			from, to = to, from
		}
		lbG := label(l.divGround)
		c.element(o.ID, gr, lbG, from, to, func() {
			c.labels(lbG, pt{loopX + 12, nY + 40}, "start")
		})
		c.ground(g)
		c.junction(n)
		if o.Bias == nil {
			c.wire(minusNet, n, pt{loopX, lower.y}, lower)
		} else {
			at := pt{loopX, lower.y}
			e := synth.Element{Ref: "bias", Symbol: "Rbias", Kind: synth.Resistor, From: minusNet, To: "minus",
				Role: "bias-current compensation, divider to - input"}
			c.element(o.ID, e, *o.Bias, n, at, func() {
				c.labels(*o.Bias, pt{loopX - 8, (n.y + at.y) / 2}, "end")
			})
			minusNet = "minus"
			c.wire("minus", at, lower)
		}
	default:
		// Follower: the output loops back to the - input.
		if o.Bias == nil {
			c.wire("out", outNode, pt{outX, chainY + loopDrop}, pt{loopX, chainY + loopDrop},
				pt{loopX, minusPin.y}, minusPin)
		} else {
			// The loop's bottom run carries the resistor; its label sits to
			// the right of the output node's drop, clear of the shunt labels.
			from, to := pt{outX, chainY + loopDrop}, pt{loopX, chainY + loopDrop}
			c.wire("out", outNode, from)
			e := synth.Element{Ref: "bias", Symbol: "Rbias", Kind: synth.Resistor, From: "out", To: "minus",
				Role: "bias-current compensation, output to - input"}
			c.element(o.ID, e, *o.Bias, from, to, func() {
				c.labels(*o.Bias, pt{outX + 8, chainY + loopDrop + 16}, "start")
			})
			c.wire("minus", to, pt{loopX, minusPin.y}, minusPin)
			minusNet = "minus"
		}
	}
	c.opamp(o.ID, o.OpAmp, o.Pins, plusNet, minusNet, opampRole(t), plusPin, minusPin, outPin)
	c.wire("out", outPin, outTerm)
	c.junction(outNode)
	if len(railXs) > 0 {
		slices.Sort(railXs)
		for _, x := range railXs[1:] {
			c.junction(pt{x, railY})
		}
		c.wire("out", pt{railXs[0], railY}, pt{outX, railY}, outNode)
	}
	for _, n := range l.chain {
		// A dot where three or more conductors meet.
		if conductors[n] >= 3 {
			c.junction(pt{nodeX[n], chainY})
		}
	}
	c.terminal(o.ID, "in", o.In, pt{nodeX["in"], chainY}, true)
	c.terminal(o.ID, "out", o.Out, outTerm, false)

	// Frame: the extent plus room for the labels on the right and below.
	c.extend(pt{outTerm.x + estWidth(o.Out) + 14, chainY})
	c.extend(pt{0, chainY + groundDrop + 20})
	if len(railXs) > 0 {
		c.extend(pt{0, railY - 16})
	} else {
		c.extend(pt{0, chainY - 34})
	}
	return c.finish(o, t), nil
}

func (c *canvas) finish(o Options, t *synth.Topology) []byte {
	const pad = 6
	x, y := c.minX-pad, c.minY-pad
	w, h := c.maxX-c.minX+2*pad, c.maxY-c.minY+2*pad
	var out bytes.Buffer
	fmt.Fprintf(&out, `<svg xmlns="http://www.w3.org/2000/svg" id="%s" class="schematic" data-topology="%s" `+
		`viewBox="%s %s %s %s" width="%s" height="%s" role="img" aria-label="%s">`+"\n",
		esc(o.ID), esc(t.ID()), num(x), num(y), num(w), num(h), num(w), num(h), esc(o.Title))
	fmt.Fprintf(&out, "<title>%s</title>\n", esc(o.Title))
	fmt.Fprintf(&out, `<g fill="none" stroke="black" stroke-width="1.4" stroke-linecap="round" stroke-linejoin="round" `+
		`font-family="'Liberation Sans',Arial,Helvetica,sans-serif" font-size="%s">`+"\n", num(fontSize))
	out.Write(c.b.Bytes())
	out.WriteString("</g>\n</svg>\n")
	return out.Bytes()
}

// element draws one resistor or capacitor between pins from and to (the
// ends at the element's From and To nodes) and calls labels to place its
// text inside the element's group.
func (c *canvas) element(id string, e synth.Element, lb Label, from, to pt, labels func()) {
	kind := "resistor"
	if e.Kind == synth.Capacitor {
		kind = "capacitor"
	}
	c.printf(`<g id="%s-%s" class="element %s" data-ref="%s" data-symbol="%s" data-from="%s" data-to="%s" data-pin-from="%s" data-pin-to="%s">`+"\n",
		esc(id), esc(e.Ref), kind, esc(lb.Ref), esc(e.Symbol), esc(e.From), esc(e.To), from, to)
	c.printf("<title>%s</title>\n", esc(lb.Ref+" ("+e.Symbol+"): "+e.Role))
	c.extend(from)
	c.extend(to)
	mid := pt{(from.x + to.x) / 2, (from.y + to.y) / 2}
	dx, dy := to.x-from.x, to.y-from.y
	n := math.Hypot(dx, dy)
	ux, uy := dx/n, dy/n // along the element
	vx, vy := -uy, ux    // across it
	half := bodyLen / 2
	if e.Kind == synth.Capacitor {
		half = plateGap / 2
	}
	at := func(s, t float64) pt { return pt{mid.x + ux*s + vx*t, mid.y + uy*s + vy*t} }
	lead := func(a, b pt) {
		c.printf(`<line class="lead" x1="%s" y1="%s" x2="%s" y2="%s"/>`+"\n", num(a.x), num(a.y), num(b.x), num(b.y))
	}
	lead(from, at(-half, 0))
	lead(at(half, 0), to)
	if e.Kind == synth.Capacitor {
		for _, s := range []float64{-half, half} {
			a, b := at(s, -plateLen/2), at(s, plateLen/2)
			c.printf(`<line class="plate" x1="%s" y1="%s" x2="%s" y2="%s" stroke-width="2.2"/>`+"\n",
				num(a.x), num(a.y), num(b.x), num(b.y))
		}
	} else {
		a := at(-half, -bodyW/2)
		b := at(half, bodyW/2)
		c.printf(`<rect class="body" x="%s" y="%s" width="%s" height="%s" fill="white"/>`+"\n",
			num(math.Min(a.x, b.x)), num(math.Min(a.y, b.y)), num(math.Abs(b.x-a.x)), num(math.Abs(b.y-a.y)))
	}
	labels()
	c.printf("</g>\n")
}

// labels writes an element's designator and value, makeup and bins, one
// line each from the baseline at p, anchored "start" or "middle".
func (c *canvas) labels(lb Label, p pt, anchor string) {
	text := func(class, body string, y float64, width float64) {
		c.printf(`<text class="%s" x="%s" y="%s" text-anchor="%s" fill="black" stroke="none">%s</text>`+"\n",
			class, num(p.x), num(y), anchor, body)
		x0, x1 := p.x, p.x+width
		if anchor == "middle" {
			x0, x1 = p.x-width/2, p.x+width/2
		}
		c.extend(pt{x0, y - fontSize})
		c.extend(pt{x1, y + 3})
	}
	y := p.y
	head := `<tspan class="ref" font-weight="bold">` + esc(lb.Ref) + `</tspan>`
	headW := estWidth(lb.Ref)
	if lb.Value != "" {
		head += ` <tspan class="value">` + esc(lb.Value) + `</tspan>`
		headW += estWidth(" " + lb.Value)
	}
	text("label", head, y, headW)
	if lb.Makeup != "" {
		y += lineH
		text("makeup", esc(lb.Makeup), y, estWidth(lb.Makeup))
	}
	if len(lb.Bins) > 0 {
		y += lineH
		s := BinText(lb.Bins)
		text("bins", esc(s), y, estWidth(s))
	}
}

// BinText writes the bins of an element's parts for the drawing: "bin A3"
// for one part or several from one bin, "bins A3, B7" otherwise (repeats
// dropped, order kept).
func BinText(bins []string) string {
	var u []string
	for _, b := range bins {
		if !slices.Contains(u, b) {
			u = append(u, b)
		}
	}
	if len(u) == 1 {
		return "bin " + u[0]
	}
	return "bins " + strings.Join(u, ", ")
}

func (c *canvas) ground(p pt) {
	c.printf(`<g class="ground" data-pin="%s">`, p)
	for i, w := range []float64{18, 11, 4} {
		y := p.y + float64(i)*4
		c.printf(`<line x1="%s" y1="%s" x2="%s" y2="%s"/>`, num(p.x-w/2), num(y), num(p.x+w/2), num(y))
	}
	c.printf("</g>\n")
	c.extend(pt{p.x, p.y + 10})
}

// opampRole describes what the op-amp does in t, for its tooltip.
func opampRole(t *synth.Topology) string {
	switch {
	case t.Plus() == "0":
		return "inverting amplifier"
	case t.Minus() != "out" && t.Minus() != "":
		return "non-inverting amplifier, gain set by the divider"
	}
	return "unity-gain follower"
}

func (c *canvas) opamp(id, ref string, pins *Pins, plusNet, minusNet, role string, plus, minus, out pt) {
	hi, lo := plus, minus
	if lo.y < hi.y {
		hi, lo = lo, hi
	}
	top := pt{plus.x, hi.y - opHalfH + opMinusDY/2 - 2}
	bottom := pt{plus.x, lo.y + opHalfH - opMinusDY/2 + 2}
	c.printf(`<g id="%s-%s" class="opamp" data-ref="%s" data-pin-plus="%s" data-pin-minus="%s" data-pin-out="%s" data-net-plus="%s" data-net-minus="%s">`+"\n",
		esc(id), esc(ref), esc(ref), plus, minus, out, esc(plusNet), esc(minusNet))
	c.printf("<title>%s</title>\n", esc(ref+": "+role))
	c.printf(`<polygon class="body" points="%s %s %s" fill="white"/>`+"\n", top, out, bottom)
	c.printf(`<text class="pin-sign" x="%s" y="%s" fill="black" stroke="none">+</text>`+"\n", num(plus.x+4), num(plus.y+4))
	c.printf(`<text class="pin-sign" x="%s" y="%s" fill="black" stroke="none">&#8722;</text>`+"\n", num(minus.x+4), num(minus.y+4))
	c.printf(`<text class="label" x="%s" y="%s" fill="black" stroke="none"><tspan class="ref" font-weight="bold">%s</tspan></text>`+"\n",
		num(hi.x+14), num(top.y-4), esc(ref))
	pin := func(p pt, n string, dy float64) {
		if n != "" {
			c.printf(`<text class="pin" x="%s" y="%s" text-anchor="end" font-size="8" fill="black" stroke="none">%s</text>`+"\n",
				num(p.x-2), num(p.y+dy), esc(n))
		}
	}
	if pins != nil {
		pin(plus, pins.Plus, -3)
		pin(minus, pins.Minus, 10)
		if pins.Out != "" {
			c.printf(`<text class="pin" x="%s" y="%s" font-size="8" fill="black" stroke="none">%s</text>`+"\n",
				num(out.x+2), num(out.y-3), esc(pins.Out))
		}
	}
	c.printf("</g>\n")
	c.extend(top)
	c.extend(pt{top.x, top.y - 14})
	c.extend(bottom)
}

func (c *canvas) terminal(id, node, text string, p pt, leftSide bool) {
	c.printf(`<g id="%s-term-%s" class="terminal" data-node="%s" data-pin="%s">`, esc(id), node, node, p)
	c.printf(`<circle cx="%s" cy="%s" r="3.5" fill="white"/>`, num(p.x), num(p.y))
	x, anchor := p.x+8, "start"
	if leftSide {
		x, anchor = p.x-8, "end"
	}
	c.printf(`<text class="label" x="%s" y="%s" text-anchor="%s" fill="black" stroke="none">%s</text>`,
		num(x), num(p.y+4), anchor, esc(text))
	c.printf("</g>\n")
	w := estWidth(text) + 10
	if leftSide {
		c.extend(pt{p.x - w, p.y})
	} else {
		c.extend(pt{p.x + w, p.y})
	}
}
