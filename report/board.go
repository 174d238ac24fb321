package report

import (
	"bytes"
	"fmt"
	"html/template"
	"io"
	"strings"
	"time"
)

// Board is a build sheet for a board that carries several filters: a
// board header with the batch's combined pick list, then each filter's
// sheet, each starting on a new page when printed.
type Board struct {
	Title    string
	Boards   int
	Date     time.Time
	StockDB  string
	DesignID string
	// Labels name the filters, in the order of Sheets.
	Labels []string
	// Sheets are the filters' sheets (their own pick lists cover one
	// filter; the board's is Picks).
	Sheets []*Sheet
	// Picks is the pick list of the whole board for the batch, with the
	// designators prefixed by the filter (F2.R3).
	Picks []PickLine
}

const boardSource = `<header id="board">
<h1>{{.Title}}</h1>
<p class="job"><span class="boards">{{.Boards}} {{if eq .Boards 1}}board{{else}}boards{{end}}</span>{{if .Date}}<span class="date">{{.Date}}</span>{{end}}{{if .StockDB}}<span class="stockdb">stock: {{.StockDB}}</span>{{end}}{{if .DesignID}}<span class="design-id">design {{.DesignID}}</span>{{end}}</p>
<ol class="board-filters">{{range $i, $l := .Labels}}<li><a href="#filter-{{inc $i}}">{{$l}}</a></li>{{end}}</ol>
<section id="board-picks"><h2>Pick list for the board</h2>
<p>Designators are prefixed by the filter: F2.R3 is R3 of filter 2. Quantities are for the whole batch.</p>
<table class="picks"><thead><tr><th class="check">✓</th><th>bin</th><th>part</th><th class="num">qty</th><th>fills (one board)</th><th class="num">row</th></tr></thead><tbody>
{{range .Picks}}<tr><td class="check"></td><td class="location">{{.Location}}</td><td class="nowrap">{{.Value}}</td><td class="num">{{.Quantity}}</td><td>{{join .Refs}}</td><td class="num">{{.StockID}}</td></tr>
{{end}}</tbody></table></section>
</header>
`

var boardTmpl = template.Must(template.New("board").Funcs(template.FuncMap{
	"inc":  func(i int) int { return i + 1 },
	"join": func(s []string) string { return strings.Join(s, " ") },
}).Parse(boardSource))

// BoardHTML renders a board's sheet as one self-contained HTML document.
func BoardHTML(b *Board) ([]byte, error) {
	if len(b.Sheets) == 0 {
		return nil, fmt.Errorf("report: a board sheet needs at least one filter")
	}
	var style string
	var bodies []string
	for i, s := range b.Sheets {
		// Every filter's element ids get their own prefix, so that ids
		// stay unique on the board's page.
		sc := *s
		sc.idPrefix = fmt.Sprintf("f%d-", i+1)
		page, err := HTML(&sc)
		if err != nil {
			return nil, fmt.Errorf("filter %d: %w", i+1, err)
		}
		doc := string(page)
		if i == 0 {
			a, z := strings.Index(doc, "<style>"), strings.Index(doc, "</style>")
			if a < 0 || z < a {
				return nil, fmt.Errorf("report: the sheet has no style block")
			}
			style = doc[a : z+len("</style>")]
		}
		a, z := strings.Index(doc, "<body>"), strings.LastIndex(doc, "</body>")
		if a < 0 || z < a {
			return nil, fmt.Errorf("report: the sheet has no body")
		}
		bodies = append(bodies, doc[a+len("<body>"):z])
	}
	date := ""
	if !b.Date.IsZero() {
		date = b.Date.Format("2006-01-02")
	}
	boards := b.Boards
	if boards < 1 {
		boards = 1
	}
	var head bytes.Buffer
	if err := boardTmpl.Execute(&head, struct {
		*Board
		Boards int
		Date   string
	}{b, boards, date}); err != nil {
		return nil, err
	}
	var out bytes.Buffer
	title := template.HTMLEscapeString(b.Title)
	fmt.Fprintf(&out, "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>%s</title>\n%s\n<style>\n.filter-sheet { break-before: page; page-break-before: always; }\nol.board-filters { margin: 2mm 0 4mm; }\n</style>\n</head>\n<body>\n", title, style)
	out.Write(head.Bytes())
	for i, body := range bodies {
		fmt.Fprintf(&out, "<section class=\"filter-sheet\" id=\"filter-%d\">\n%s\n</section>\n", i+1, body)
	}
	out.WriteString("</body>\n</html>\n")
	return out.Bytes(), nil
}

// WriteBoard writes BoardHTML to w.
func WriteBoard(w io.Writer, b *Board) error {
	page, err := BoardHTML(b)
	if err != nil {
		return err
	}
	_, err = w.Write(page)
	return err
}
