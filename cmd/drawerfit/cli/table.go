package cli

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"sort"
	"strconv"
	"strings"

	"github.com/jedib0t/go-pretty/v6/table"
	"github.com/jedib0t/go-pretty/v6/text"
)

// grid is a table of already formatted cells. On a terminal it is drawn with
// go-pretty and made to fit the terminal's width; piped, it is
// tab-separated with a header line and every column, so that scripts can
// cut and sort it.
//
// Fitting a narrow terminal, in this order, until the table fits:
//  1. headers with a short form (abbrev) use it;
//  2. columns marked wrap break their text over lines, down to their
//     narrowest width;
//  3. columns with a priority (optional) are left out, the highest
//     priority number first (ties: the rightmost first); a line under the
//     table names them;
//  4. if the columns that remain still do not fit, every row is printed as
//     a block of "header: value" lines (the narrow layout).
//
// A command that adds a column says how it may give way: g.addColumn(
// header, right, prio) or g.optional(prio, col) and g.abbrev(col, short).
// Columns without a priority are never left out.
type grid struct {
	title   string
	header  []string
	rows    [][]string
	footer  []string
	rightAt map[int]bool   // columns aligned right (numbers)
	prio    map[int]int    // column → priority for leaving it out (0: never)
	short   map[int]string // column → shorter header
	wrapMin map[int]int    // column → narrowest width its text may wrap to
}

// Column priorities on a narrow terminal: the higher the number, the
// sooner the column is left out. Columns without one always stay.
const (
	dropLast  = 1 // read at a glance; left out only when nothing else helps
	dropLater = 2 // useful detail
	dropFirst = 3 // detail that the piped output and --json keep
)

// defaultTermWidth is assumed for a terminal whose width cannot be read.
const defaultTermWidth = 80

func newGrid(header ...string) *grid {
	return &grid{header: header, rightAt: map[int]bool{}, prio: map[int]int{}, short: map[int]string{}, wrapMin: map[int]int{}}
}

func (g *grid) right(cols ...int) *grid {
	for _, c := range cols {
		g.rightAt[c] = true
	}
	return g
}

// optional lets columns be left out on a narrow terminal, with priority p
// (dropFirst, dropLater, dropLast).
func (g *grid) optional(p int, cols ...int) *grid {
	for _, c := range cols {
		g.prio[c] = p
	}
	return g
}

// abbrev gives column c a shorter header for a narrow terminal.
func (g *grid) abbrev(c int, short string) *grid {
	g.short[c] = short
	return g
}

// wrap lets the text of columns break over lines on a narrow terminal,
// down to min characters wide.
func (g *grid) wrap(low int, cols ...int) *grid {
	for _, c := range cols {
		g.wrapMin[c] = low
	}
	return g
}

// addColumn appends a column (header, right-aligned or not, priority p,
// 0 for never left out) and returns its index; the caller appends its
// cells to every row.
func (g *grid) addColumn(header string, right bool, p int) int {
	g.header = append(g.header, header)
	c := len(g.header) - 1
	if right {
		g.rightAt[c] = true
	}
	if p > 0 {
		g.prio[c] = p
	}
	return c
}

func (g *grid) add(cells ...string) { g.rows = append(g.rows, cells) }

// termWidth returns the width of the terminal w writes to, 0 when w is not
// a terminal: Env.TermWidth when set; else $COLUMNS when it is a positive
// number; else the terminal's own size; else 80.
func (e *Env) termWidth(w io.Writer) int {
	if e.TermWidth != nil {
		return e.TermWidth(w)
	}
	if !isTerminal(w) {
		return 0
	}
	if n, err := strconv.Atoi(strings.TrimSpace(e.Getenv("COLUMNS"))); err == nil && n > 0 {
		return n
	}
	if f, ok := w.(*os.File); ok {
		if n := terminalColumns(f); n > 0 {
			return n
		}
	}
	return defaultTermWidth
}

// render writes the grid to w: tab-separated when w is not a terminal,
// else drawn to fit the terminal's width.
func (g *grid) render(e *Env, w io.Writer) {
	width := e.termWidth(w)
	if width <= 0 {
		fmt.Fprintln(w, strings.Join(g.header, "\t"))
		for _, r := range g.rows {
			fmt.Fprintln(w, strings.Join(r, "\t"))
		}
		return
	}
	io.WriteString(w, g.layout(width, e.useColor(w)))
}

// layout draws the grid for a terminal of the given width (see grid).
func (g *grid) layout(width int, color bool) string {
	cols := make([]int, len(g.header))
	for i := range cols {
		cols[i] = i
	}
	out := g.draw(cols, false, nil, color)
	if fits(out, width) {
		return out
	}
	// Drop order: highest priority first, the rightmost first among equals.
	var droppable []int
	for c, p := range g.prio {
		if p > 0 && c < len(g.header) {
			droppable = append(droppable, c)
		}
	}
	sort.Slice(droppable, func(a, b int) bool {
		pa, pb := g.prio[droppable[a]], g.prio[droppable[b]]
		if pa != pb {
			return pa > pb
		}
		return droppable[a] > droppable[b]
	})
	var dropped []string
	for {
		if out, ok := g.squeeze(cols, width, color); ok {
			if len(dropped) > 0 {
				out += wrapText(fmt.Sprintf("(%s left out to fit %d columns: widen the terminal, or pipe the output or use --json for every column)",
					strings.Join(dropped, ", "), width), width) + "\n"
			}
			return out
		}
		if len(droppable) == 0 {
			break
		}
		c := droppable[0]
		droppable = droppable[1:]
		dropped = append(dropped, g.header[c])
		cols = remove(cols, c)
	}
	return g.records(width)
}

// squeeze tries the columns cols with short headers and, where allowed,
// wrapped text; it reports whether the result fits.
func (g *grid) squeeze(cols []int, width int, color bool) (string, bool) {
	out := g.draw(cols, true, nil, color)
	if fits(out, width) {
		return out, true
	}
	over := longest(out) - width
	limits := map[int]int{}
	for _, c := range cols {
		low, ok := g.wrapMin[c]
		if !ok {
			continue
		}
		natural := g.natural(c)
		if natural <= low {
			continue
		}
		cut := min(natural-low, over)
		limits[c] = natural - cut
		over -= cut
		if over <= 0 {
			break
		}
	}
	if len(limits) == 0 {
		return out, false
	}
	out = g.draw(cols, true, limits, color)
	return out, fits(out, width)
}

// natural is the width of column c's widest cell.
func (g *grid) natural(c int) int {
	n := 0
	for _, r := range g.rows {
		if c < len(r) {
			n = max(n, text.StringWidthWithoutEscSequences(r[c]))
		}
	}
	return n
}

// draw renders columns cols with go-pretty, short headers when asked and
// the given column width limits (text wraps at word boundaries).
func (g *grid) draw(cols []int, short bool, limits map[int]int, color bool) string {
	var buf bytes.Buffer
	t := table.NewWriter()
	t.SetOutputMirror(&buf)
	style := table.StyleLight
	if !color {
		style.Color = table.ColorOptions{}
	} else {
		style.Color.Header = text.Colors{text.Bold}
	}
	style.Format.Header = text.FormatDefault
	style.Format.Footer = text.FormatDefault
	t.SetStyle(style)
	if g.title != "" {
		t.SetTitle(g.title)
	}
	pick := func(cells []string) table.Row {
		row := table.Row{}
		for _, c := range cols {
			v := ""
			if c < len(cells) {
				v = cells[c]
			}
			row = append(row, v)
		}
		return row
	}
	hdr := append([]string(nil), g.header...)
	if short {
		for c, s := range g.short {
			if c < len(hdr) {
				hdr[c] = s
			}
		}
	}
	t.AppendHeader(pick(hdr))
	for _, r := range g.rows {
		t.AppendRow(pick(r))
	}
	if len(g.footer) > 0 {
		t.AppendFooter(pick(g.footer))
	}
	var cfg []table.ColumnConfig
	for i, c := range cols {
		cc := table.ColumnConfig{Number: i + 1}
		if g.rightAt[c] {
			cc.Align, cc.AlignHeader = text.AlignRight, text.AlignRight
		}
		if n, ok := limits[c]; ok {
			cc.WidthMax, cc.WidthMaxEnforcer = n, text.WrapSoft
		}
		cfg = append(cfg, cc)
	}
	t.SetColumnConfigs(cfg)
	// A title wider than the table would widen it: wrap it instead.
	t.Style().Title.Align = text.AlignLeft
	t.Render()
	return buf.String()
}

// records writes every row as a block of "header: value" lines, values
// wrapped to the width: the layout for a terminal too narrow for the
// table.
func (g *grid) records(width int) string {
	var b strings.Builder
	if g.title != "" {
		b.WriteString(wrapText(g.title, width) + "\n")
	}
	keyW := 0
	for _, h := range g.header {
		keyW = max(keyW, text.StringWidthWithoutEscSequences(h))
	}
	valW := max(width-keyW-4, 8)
	block := func(cells []string) {
		for c, h := range g.header {
			v := ""
			if c < len(cells) {
				v = cells[c]
			}
			lines := strings.Split(wrapText(v, valW), "\n")
			for i, l := range lines {
				k := ""
				if i == 0 {
					k = h + ":"
				}
				fmt.Fprintf(&b, "  %-*s %s\n", keyW+1, k, l)
			}
		}
	}
	for i, r := range g.rows {
		if i > 0 {
			b.WriteString("\n")
		}
		block(r)
	}
	if len(g.footer) > 0 {
		b.WriteString("\n")
		block(g.footer)
	}
	return b.String()
}

// wrapText breaks s at word boundaries to lines of at most width columns.
func wrapText(s string, width int) string {
	lines := strings.Split(text.WrapSoft(s, width), "\n")
	for i, l := range lines {
		lines[i] = strings.TrimRight(l, " ")
	}
	return strings.Join(lines, "\n")
}

func fits(s string, width int) bool { return longest(s) <= width }

// longest is the width of the widest line of s, escape sequences aside.
func longest(s string) int {
	n := 0
	for _, l := range strings.Split(s, "\n") {
		n = max(n, text.StringWidthWithoutEscSequences(l))
	}
	return n
}

func remove(cols []int, c int) []int {
	out := make([]int, 0, len(cols))
	for _, x := range cols {
		if x != c {
			out = append(out, x)
		}
	}
	return out
}

// insertColumn puts a column at index at, with cells[i] in row i (missing
// cells are empty); the columns after it keep their alignment, priority,
// short header and wrapping.
func (g *grid) insertColumn(at int, header string, cells []string) {
	g.header = append(g.header[:at:at], append([]string{header}, g.header[at:]...)...)
	for i := range g.rows {
		v := ""
		if i < len(cells) {
			v = cells[i]
		}
		r := g.rows[i]
		if at > len(r) {
			continue
		}
		g.rows[i] = append(r[:at:at], append([]string{v}, r[at:]...)...)
	}
	if len(g.footer) >= at {
		g.footer = append(g.footer[:at:at], append([]string{""}, g.footer[at:]...)...)
	}
	g.rightAt = shiftKeys(g.rightAt, at)
	g.prio = shiftKeys(g.prio, at)
	g.short = shiftKeys(g.short, at)
	g.wrapMin = shiftKeys(g.wrapMin, at)
}

func shiftKeys[V any](m map[int]V, at int) map[int]V {
	out := make(map[int]V, len(m))
	for c, v := range m {
		if c >= at {
			c++
		}
		out[c] = v
	}
	return out
}
