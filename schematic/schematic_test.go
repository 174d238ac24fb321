package schematic

import (
	"bytes"
	"encoding/xml"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"

	"drawerfit/synth"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata/")

// sampleLabels invents labels for every element of t: a value, a two-part
// makeup for the first element, and bins.
func sampleLabels(t *synth.Topology) []Label {
	ls := make([]Label, t.NumElements())
	for i, e := range t.Elements() {
		ref := fmt.Sprintf("%c%d", e.Ref[0], 10+i)
		unit := "kΩ"
		if e.Kind == synth.Capacitor {
			unit = "nF"
		}
		ls[i] = Label{Ref: ref, Value: fmt.Sprintf("%d %s", 10+i, unit), Bins: []string{fmt.Sprintf("D%d", i+1)}}
		if i == 0 {
			ls[i].Makeup = "12 " + unit + " + 3.3 " + unit + " series"
			ls[i].Bins = []string{"D1", "D9"}
		}
	}
	return ls
}

// node is a parsed SVG element.
type node struct {
	name  string
	attr  map[string]string
	text  string
	kids  []*node
	depth int
}

func parse(t *testing.T, svg []byte) *node {
	t.Helper()
	d := xml.NewDecoder(bytes.NewReader(svg))
	var stack []*node
	var root *node
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG is not well-formed XML: %v", err)
		}
		switch tk := tok.(type) {
		case xml.StartElement:
			n := &node{name: tk.Name.Local, attr: map[string]string{}, depth: len(stack)}
			for _, a := range tk.Attr {
				n.attr[a.Name.Local] = a.Value
			}
			if len(stack) > 0 {
				p := stack[len(stack)-1]
				p.kids = append(p.kids, n)
			} else {
				root = n
			}
			stack = append(stack, n)
		case xml.EndElement:
			stack = stack[:len(stack)-1]
		case xml.CharData:
			if len(stack) > 0 {
				stack[len(stack)-1].text += string(tk)
			}
		}
	}
	if root == nil {
		t.Fatal("empty SVG")
	}
	return root
}

func (n *node) walk(f func(*node)) {
	f(n)
	for _, k := range n.kids {
		k.walk(f)
	}
}

// allText returns the visible text under n (titles excluded), words
// separated by single spaces.
func (n *node) allText() string {
	var parts []string
	var visit func(m *node)
	visit = func(m *node) {
		if m.name == "title" {
			return
		}
		parts = append(parts, m.text)
		for _, k := range m.kids {
			visit(k)
		}
	}
	visit(n)
	return strings.Join(strings.Fields(strings.Join(parts, " ")), " ")
}

func (n *node) hasClass(c string) bool {
	for _, f := range strings.Fields(n.attr["class"]) {
		if f == c {
			return true
		}
	}
	return false
}

// outline writes the structure of the drawing without coordinates: tags,
// ids, classes, data attributes other than pin positions, and text.
func outline(root *node) string {
	var sb strings.Builder
	root.walk(func(n *node) {
		sb.WriteString(strings.Repeat("  ", n.depth) + n.name)
		var keys []string
		for k := range n.attr {
			if k == "id" || k == "class" || (strings.HasPrefix(k, "data-") && !strings.HasPrefix(k, "data-pin")) {
				keys = append(keys, k)
			}
		}
		sort.Strings(keys)
		for _, k := range keys {
			fmt.Fprintf(&sb, " %s=%q", k, n.attr[k])
		}
		if txt := strings.TrimSpace(n.text); txt != "" {
			fmt.Fprintf(&sb, " text=%q", txt)
		}
		sb.WriteByte('\n')
	})
	return sb.String()
}

func TestGolden(t *testing.T) {
	t.Parallel()
	for _, top := range synth.Topologies() {
		t.Run(top.ID(), func(t *testing.T) {
			svg, err := SVG(top, Options{ID: "s1", Labels: sampleLabels(top), OpAmp: "U3"})
			if err != nil {
				t.Fatal(err)
			}
			got := outline(parse(t, svg))
			path := filepath.Join("testdata", top.ID()+".outline")
			if *update {
				if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
					t.Fatal(err)
				}
				// The drawing itself, for people to look at; not compared.
				if err := os.WriteFile(filepath.Join("testdata", top.ID()+".svg"), svg, 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(path)
			if err != nil {
				t.Fatalf("%v (run go test -update to create it)", err)
			}
			if string(want) != got {
				t.Errorf("%s differs (run go test ./schematic -update after checking):\n--- got\n%s", path, got)
			}
		})
	}
}

func parsePt(t *testing.T, s string) [2]float64 {
	t.Helper()
	f := strings.Split(s, ",")
	if len(f) != 2 {
		t.Fatalf("bad point %q", s)
	}
	x, err1 := strconv.ParseFloat(f[0], 64)
	y, err2 := strconv.ParseFloat(f[1], 64)
	if err1 != nil || err2 != nil {
		t.Fatalf("bad point %q", s)
	}
	return [2]float64{x, y}
}

// onSegment reports whether p lies on the segment a-b (axis-parallel or
// not), within 0.01 units.
func onSegment(p, a, b [2]float64) bool {
	const eps = 0.01
	cross := (b[0]-a[0])*(p[1]-a[1]) - (b[1]-a[1])*(p[0]-a[0])
	l := math.Hypot(b[0]-a[0], b[1]-a[1])
	if l == 0 {
		return math.Hypot(p[0]-a[0], p[1]-a[1]) < eps
	}
	if math.Abs(cross)/l > eps {
		return false
	}
	dot := (p[0]-a[0])*(b[0]-a[0]) + (p[1]-a[1])*(b[1]-a[1])
	return dot >= -eps*l && dot <= l*l+eps*l
}

// TestConnectivity rebuilds the circuit from the drawing's geometry alone
// (wire polylines, pin coordinates of elements, terminals, grounds and the
// op-amp) and checks that it is exactly the topology's netlist: every pin on
// the net of its node, distinct nodes on distinct nets.
func TestConnectivity(t *testing.T) {
	t.Parallel()
	for _, top := range synth.Topologies() {
		for _, bias := range []bool{false, true} {
			name := top.ID()
			opt := Options{Labels: sampleLabels(top)}
			if bias {
				// A bias resistor splits the follower's loop: the - input
				// becomes a node of its own.
				name += "/bias-resistor"
				opt.Bias = &Label{Ref: "R9", Value: "21 kΩ"}
			}
			connectivity(t, name, top, opt)
		}
	}
}

// connectivity rebuilds the nets from the drawing's geometry and compares
// them with the topology (plus the bias resistor when drawn).
func connectivity(t *testing.T, name string, top *synth.Topology, opt Options) {
	{
		t.Run(name, func(t *testing.T) {
			svg, err := SVG(top, opt)
			if err != nil {
				t.Fatal(err)
			}
			root := parse(t, svg)
			type pin struct {
				p    [2]float64
				node string // the node the drawing claims (from the topology)
				what string
			}
			var pins []pin
			var segs [][2][2]float64
			var wireNets []string
			root.walk(func(n *node) {
				switch {
				case n.hasClass("element"):
					pins = append(pins,
						pin{parsePt(t, n.attr["data-pin-from"]), n.attr["data-from"], n.attr["id"] + " from"},
						pin{parsePt(t, n.attr["data-pin-to"]), n.attr["data-to"], n.attr["id"] + " to"})
				case n.hasClass("ground"):
					pins = append(pins, pin{parsePt(t, n.attr["data-pin"]), "0", "ground"})
				case n.hasClass("terminal"):
					pins = append(pins, pin{parsePt(t, n.attr["data-pin"]), n.attr["data-node"], "terminal " + n.attr["data-node"]})
				case n.hasClass("opamp"):
					pins = append(pins,
						pin{parsePt(t, n.attr["data-pin-plus"]), n.attr["data-net-plus"], "+ input"},
						pin{parsePt(t, n.attr["data-pin-minus"]), n.attr["data-net-minus"], "- input"},
						pin{parsePt(t, n.attr["data-pin-out"]), "out", "output"})
				case n.hasClass("wire"):
					pts := strings.Fields(n.attr["points"])
					for i := 1; i < len(pts); i++ {
						segs = append(segs, [2][2]float64{parsePt(t, pts[i-1]), parsePt(t, pts[i])})
						wireNets = append(wireNets, n.attr["data-net"])
					}
				}
			})
			// Union-find over pins (0..len(pins)-1) and segments after them.
			parent := make([]int, len(pins)+len(segs))
			for i := range parent {
				parent[i] = i
			}
			find := func(i int) int {
				for parent[i] != i {
					parent[i] = parent[parent[i]]
					i = parent[i]
				}
				return i
			}
			union := func(a, b int) { parent[find(a)] = find(b) }
			for i := range pins {
				for j := range pins[:i] {
					if math.Hypot(pins[i].p[0]-pins[j].p[0], pins[i].p[1]-pins[j].p[1]) < 0.01 {
						union(i, j)
					}
				}
				for k, s := range segs {
					if onSegment(pins[i].p, s[0], s[1]) {
						union(i, len(pins)+k)
					}
				}
			}
			for a, sa := range segs {
				for b, sb := range segs[:a] {
					if onSegment(sa[0], sb[0], sb[1]) || onSegment(sa[1], sb[0], sb[1]) ||
						onSegment(sb[0], sa[0], sa[1]) || onSegment(sb[1], sa[0], sa[1]) {
						union(len(pins)+a, len(pins)+b)
					}
				}
			}
			// Ground symbols are one net by definition.
			firstGround := -1
			for i, p := range pins {
				if p.what == "ground" {
					if firstGround >= 0 {
						union(i, firstGround)
					} else {
						firstGround = i
					}
				}
			}
			netOf := map[string]int{}
			for i, p := range pins {
				r := find(i)
				if prev, ok := netOf[p.node]; ok && prev != r {
					t.Errorf("%s is not connected to the rest of node %q", p.what, p.node)
				}
				netOf[p.node] = r
			}
			seen := map[int]string{}
			for n, r := range netOf {
				if other, ok := seen[r]; ok {
					t.Errorf("nodes %q and %q are shorted in the drawing", n, other)
				}
				seen[r] = n
			}
			// Every topology node is drawn, and every wire is labelled with
			// the net it is on.
			for _, e := range top.Elements() {
				for _, n := range []string{e.From, e.To} {
					if _, ok := netOf[n]; !ok {
						t.Errorf("node %q has no pin in the drawing", n)
					}
				}
			}
			for k := range segs {
				r := find(len(pins) + k)
				if seen[r] != wireNets[k] {
					t.Errorf("wire segment %v says net %q but joins %q", segs[k], wireNets[k], seen[r])
				}
			}
			// The drawing has one group per element with the right kind.
			groups := 0
			root.walk(func(n *node) {
				if n.hasClass("element") {
					groups++
					kind := "resistor"
					if strings.HasPrefix(n.attr["id"], "sch-C") {
						kind = "capacitor"
					}
					if !n.hasClass(kind) {
						t.Errorf("%s lacks class %s", n.attr["id"], kind)
					}
				}
			})
			want := top.NumElements()
			if opt.Bias != nil {
				want++
			}
			if groups != want {
				t.Errorf("%d element groups, want %d", groups, want)
			}
		})
	}
}

func TestLabels(t *testing.T) {
	t.Parallel()
	top := synth.SallenKeyLowPass()
	labels := sampleLabels(top)
	labels[2].Makeup = `<script>alert("x")</script> & co`
	labels[3].Bins = []string{"A1", "A1", "B2"}
	svg, err := SVG(top, Options{ID: "lp<1>", Labels: labels, In: "from U1", Out: "to ADC"})
	if err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(svg, []byte("<script")) {
		t.Fatal("caller text reached the SVG unescaped")
	}
	root := parse(t, svg)
	byRef := map[string]*node{}
	root.walk(func(n *node) {
		if n.hasClass("element") {
			byRef[n.attr["data-ref"]] = n
		}
	})
	cases := []struct {
		name, ref, want string
	}{
		{"value and makeup", "R10", "R10 10 kΩ 12 kΩ + 3.3 kΩ series bins D1, D9"},
		{"escaped text comes back as text", "C12", `C12 12 nF <script>alert("x")</script> & co bin D3`},
		{"repeated bins once", "C13", "C13 13 nF bins A1, B2"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			n := byRef[c.ref]
			if n == nil {
				t.Fatalf("no element %s", c.ref)
			}
			var texts []string
			for _, k := range n.kids {
				if k.name == "text" {
					texts = append(texts, k.allText())
				}
			}
			if got := strings.Join(texts, " "); got != c.want {
				t.Errorf("texts %q, want %q", got, c.want)
			}
		})
	}
	if got := root.attr["id"]; got != "lp<1>" {
		t.Errorf("svg id %q", got)
	}
	all := root.allText()
	for _, want := range []string{"from U1", "to ADC", "U1"} {
		if !strings.Contains(all, want) {
			t.Errorf("drawing lacks %q", want)
		}
	}
}

func TestUnlabelled(t *testing.T) {
	t.Parallel()
	svg, err := SVG(synth.FirstOrderHighPass(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	root := parse(t, svg)
	if root.attr["id"] != "sch" || root.attr["data-topology"] != "rc-highpass" {
		t.Errorf("svg attributes %v", root.attr)
	}
	if got := root.allText(); got != "C1 R1 + − U1 in out" {
		t.Errorf("text %q", got)
	}
}

// custom returns a topology with the given elements, for the layout's
// error cases.
func custom(plus string, els ...synth.Element) *synth.Topology {
	return synth.Sketch("test", "test", plus, "out", els)
}

func TestUndrawable(t *testing.T) {
	t.Parallel()
	r := func(ref, a, b string) synth.Element {
		return synth.Element{Ref: ref, Kind: synth.Resistor, From: a, To: b}
	}
	cases := []struct {
		name string
		top  *synth.Topology
		want string
	}{
		{"ground to output", custom("p", r("R1", "in", "p"), r("R2", "out", "0")), "ground and the output"},
		{"loop on one node", custom("p", r("R1", "in", "p"), r("R2", "p", "p")), "both ends"},
		{"branching chain", custom("p", r("R1", "in", "a"), r("R2", "a", "p"), r("R3", "a", "b")), "branches"},
		{"no path", custom("p", r("R1", "in", "a"), r("R2", "b", "p")), "no series path"},
		{"stray element", custom("p", r("R1", "in", "p"), r("R2", "x", "y")), "not on the series chain"},
		{"shunt off the chain", custom("p", r("R1", "in", "p"), r("R2", "x", "0")), "not on the chain"},
		{"no plus node", custom("", r("R1", "in", "p")), "no + input"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := SVG(c.top, Options{})
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %v, want one saying %q", err, c.want)
			}
		})
	}
}

// TestReversedElement draws a chain element whose From is the node nearer
// the op-amp and a shunt written ground-first: the pins must still land on
// the right nodes.
func TestReversedElement(t *testing.T) {
	t.Parallel()
	top := custom("p",
		synth.Element{Ref: "R1", Kind: synth.Resistor, From: "a", To: "in"},
		synth.Element{Ref: "R2", Kind: synth.Resistor, From: "a", To: "p"},
		synth.Element{Ref: "C1", Kind: synth.Capacitor, From: "0", To: "p"},
		synth.Element{Ref: "C2", Kind: synth.Capacitor, From: "0", To: "p"},
	)
	svg, err := SVG(top, Options{})
	if err != nil {
		t.Fatal(err)
	}
	root := parse(t, svg)
	pins := map[string][2][2]float64{}
	root.walk(func(n *node) {
		if n.hasClass("element") {
			pins[n.attr["data-ref"]] = [2][2]float64{parsePt(t, n.attr["data-pin-from"]), parsePt(t, n.attr["data-pin-to"])}
		}
	})
	// R1's From (node a) is right of its To (the input).
	if pins["R1"][0][0] <= pins["R1"][1][0] {
		t.Errorf("R1 pins %v: node a should be right of the input", pins["R1"])
	}
	// C1's From is ground, below its To on the chain.
	if pins["C1"][0][1] <= pins["C1"][1][1] {
		t.Errorf("C1 pins %v: ground should be below the chain", pins["C1"])
	}
	// The second shunt on p sits to the right of the first.
	if pins["C2"][1][0] <= pins["C1"][1][0] {
		t.Errorf("C2 at %v not right of C1 at %v", pins["C2"], pins["C1"])
	}
}

func TestPins(t *testing.T) {
	t.Parallel()
	// Pin numbers of channel A of the common dual op-amp pinout (out 1,
	// - input 2, + input 3; from memory): drawn as given, and no "see data
	// sheet" remark.
	svg, err := SVG(synth.FirstOrderLowPass(), Options{OpAmp: "U1A", Pins: &Pins{Plus: "3", Minus: "2", Out: "1"}})
	if err != nil {
		t.Fatal(err)
	}
	got := parse(t, svg).allText()
	if !strings.Contains(got, "3 2 1") || strings.Contains(got, "data sheet") {
		t.Errorf("text %q", got)
	}
}
