package cli

import (
	"encoding/json"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/jedib0t/go-pretty/v6/table"
	"github.com/jedib0t/go-pretty/v6/text"
	"github.com/mattn/go-isatty"
)

// isTerminal reports whether w is a terminal.
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	return isatty.IsTerminal(f.Fd()) || isatty.IsCygwinTerminal(f.Fd())
}

// useColor reports whether coloured output is wanted on w: a terminal, and
// NO_COLOR unset.
func (e *Env) useColor(w io.Writer) bool {
	return isTerminal(w) && e.Getenv("NO_COLOR") == ""
}

// writeJSON prints v as indented JSON with a trailing newline.
func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(v)
}

// grid is a table of already formatted cells. On a terminal it is drawn with
// go-pretty; piped, it is tab-separated with a header line so that scripts can
// cut and sort it.
type grid struct {
	title   string
	header  []string
	rows    [][]string
	footer  []string
	rightAt map[int]bool // columns aligned right (numbers)
}

func newGrid(header ...string) *grid { return &grid{header: header, rightAt: map[int]bool{}} }

func (g *grid) right(cols ...int) *grid {
	for _, c := range cols {
		g.rightAt[c] = true
	}
	return g
}

func (g *grid) add(cells ...string) { g.rows = append(g.rows, cells) }

// render writes the grid to w, as a drawn table when w is a terminal.
func (g *grid) render(e *Env, w io.Writer) {
	if !isTerminal(w) {
		fmt.Fprintln(w, strings.Join(g.header, "\t"))
		for _, r := range g.rows {
			fmt.Fprintln(w, strings.Join(r, "\t"))
		}
		return
	}
	t := table.NewWriter()
	t.SetOutputMirror(w)
	style := table.StyleLight
	if !e.useColor(w) {
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
	hr := table.Row{}
	for _, h := range g.header {
		hr = append(hr, h)
	}
	t.AppendHeader(hr)
	for _, r := range g.rows {
		row := table.Row{}
		for _, c := range r {
			row = append(row, c)
		}
		t.AppendRow(row)
	}
	if len(g.footer) > 0 {
		fr := table.Row{}
		for _, c := range g.footer {
			fr = append(fr, c)
		}
		t.AppendFooter(fr)
	}
	var cfg []table.ColumnConfig
	for c := range g.rightAt {
		cfg = append(cfg, table.ColumnConfig{Number: c + 1, Align: text.AlignRight, AlignHeader: text.AlignRight})
	}
	t.SetColumnConfigs(cfg)
	t.Render()
}
