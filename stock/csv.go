package stock

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode/utf8"

	"drawerfit/fault"
)

// CSV columns, in the order WriteCSV writes them. kind, value and quantity
// are required in a file; the others may be left out. channels, gbw,
// dc-gain, slew and supply are for amplifier rows only.
var (
	CSVColumns = []string{"kind", "value", "tolerance", "quantity", "package", "dielectric", "location", "note",
		"voltage", "price", "min", "pack", "supplier-ref", "channels", "gbw", "dc-gain", "slew", "supply"}
	requiredColumns = []string{"kind", "value", "quantity"}
)

// MaxCSVProblems is how many problems a CSVError lists before it only
// counts the rest: enough to fix a file in one pass, short enough to read
// (common practice, no source).
const MaxCSVProblems = 20

// CSVProblem is one thing wrong in a CSV file.
type CSVProblem struct {
	// Line is the line number in the file, counting from 1 (the header).
	Line int
	// Column is the column's name, or "" when the problem is the whole row.
	Column string
	// Reason says what is wrong.
	Reason string
}

// String writes the problem as "line 4, value: reason".
func (p CSVProblem) String() string {
	if p.Column == "" {
		return fmt.Sprintf("line %d: %s", p.Line, p.Reason)
	}
	return fmt.Sprintf("line %d, %s: %s", p.Line, p.Column, p.Reason)
}

// CSVError lists the problems of a CSV file that ReadCSV refused. It is
// returned wrapped in a fault.Invalid error; get it with errors.As.
type CSVError struct {
	// Problems are the first MaxCSVProblems problems, in file order.
	Problems []CSVProblem
	// More counts the problems found beyond those listed.
	More int
	// Unknown are the header's columns that are not CSVColumns and were
	// not to be ignored (as written, trimmed, cut to an excerpt), so that
	// a caller can offer to ignore them.
	Unknown []string
}

// Error lists the problems, one per line after a summary line.
func (e *CSVError) Error() string {
	var b strings.Builder
	n := len(e.Problems) + e.More
	if n == 1 {
		b.WriteString("the CSV file has 1 problem:")
	} else {
		fmt.Fprintf(&b, "the CSV file has %d problems:", n)
	}
	for _, p := range e.Problems {
		b.WriteString("\n  ")
		b.WriteString(p.String())
	}
	if e.More > 0 {
		fmt.Fprintf(&b, "\n  ... and %d more", e.More)
	}
	return b.String()
}

// maxReason is the longest problem text kept (in runes): a reason quotes
// the bad cell, and a cell can be megabytes long (common practice, no
// source).
const maxReason = 200

func (e *CSVError) add(line int, col, reason string) {
	if r := []rune(reason); len(r) > maxReason {
		reason = string(r[:maxReason]) + "... (cut)"
	}
	if len(e.Problems) < MaxCSVProblems {
		e.Problems = append(e.Problems, CSVProblem{line, col, reason})
	} else {
		e.More++
	}
}

func (e *CSVError) fault() error {
	return &fault.Error{Kind: fault.Invalid, Msg: e.Error(), Err: e}
}

// formulaStart are the characters that make a spreadsheet read a cell as a
// formula (the commonly cited CSV-injection set: = + - @, and tab and
// carriage return; common practice, no source).
const formulaStart = "=+-@\t\r"

// neutralise prefixes a text cell that a spreadsheet would run as a formula
// with an apostrophe, and also a cell that already starts with one, so
// that restore can undo exactly what neutralise did.
func neutralise(s string) string {
	if s != "" && (strings.ContainsRune(formulaStart, rune(s[0])) || s[0] == '\'') {
		return "'" + s
	}
	return s
}

// restore undoes neutralise: an apostrophe followed by a formula character
// or another apostrophe is dropped. Any other leading apostrophe is text.
func restore(s string) string {
	if len(s) >= 2 && s[0] == '\'' && (strings.ContainsRune(formulaStart, rune(s[1])) || s[1] == '\'') {
		return s[1:]
	}
	return s
}

// bom is the UTF-8 byte order mark some spreadsheets write first.
var bom = []byte{0xEF, 0xBB, 0xBF}

// ReadCSV reads stock rows from a CSV file. The first record is the header:
// column names from CSVColumns in any order and letter case; kind, value
// and quantity are required, an unknown or repeated column is an error that
// names it. The file is UTF-8, with or without a byte order mark, with LF or
// CRLF line ends and fields quoted as RFC 4180 describes. Records whose
// fields are all empty are skipped.
//
// Cells are read as the rest of the package reads them: kind by ParseKind,
// value by ParseValue, tolerance by ParseToleranceFor (empty: not stated),
// quantity, min and pack as whole numbers >= 0 (empty min or pack: none),
// voltage by ParseVoltage and price by ParsePrice (empty: not rated, not
// known; a price is read exactly as decimal text, with a point, never a
// comma), dielectric normalised. Text cells
// neutralised against spreadsheet formulas by WriteCSV are restored.
//
// It returns every row or none: if anything is wrong the error is a
// fault.Invalid wrapping a *CSVError that lists each problem with its line,
// column and reason (the first MaxCSVProblems of them). Rows are returned
// in file order, ID 0, duplicates not merged.
func ReadCSV(r io.Reader) ([]Item, error) {
	items, _, err := ReadCSVWith(r, CSVOptions{})
	return items, err
}

// CSVOptions relax ReadCSV.
type CSVOptions struct {
	// IgnoreUnknown ignores every column that is not one of CSVColumns.
	IgnoreUnknown bool
	// Ignore names columns to ignore (any letter case); a name that is
	// also a known column ignores that column (unless it is required).
	Ignore []string
}

// CSVInfo says how ReadCSVWith read a file.
type CSVInfo struct {
	// Ignored are the header's columns that were not read, as written.
	Ignored []string
}

// Excerpt returns s for a message: at most n runes of it, with control
// characters and invalid UTF-8 escaped as in a Go string literal, quoted,
// and "..." after the quote when it was cut.
func Excerpt(s string, n int) string {
	cut := false
	if r := []rune(s); len(r) > n {
		s, cut = string(r[:n]), true
	}
	q := strconv.Quote(s)
	if cut {
		q += "..."
	}
	return q
}

// excerptLen is how much of a bad cell or column name a message quotes
// (common practice, no source).
const excerptLen = 40

// utf16BOMs are the byte order marks of UTF-16 (little and big endian).
var utf16BOMs = [][]byte{{0xFF, 0xFE}, {0xFE, 0xFF}}

// ReadCSVWith is ReadCSV with options: columns to ignore instead of
// refusing them. Its CSVInfo lists the columns it ignored.
func ReadCSVWith(r io.Reader, opts CSVOptions) ([]Item, CSVInfo, error) {
	var info CSVInfo
	br := bufio.NewReader(r)
	if b, err := br.Peek(len(bom)); err == nil && bytes.Equal(b, bom) {
		br.Discard(len(bom))
	}
	if b, err := br.Peek(2); err == nil {
		for _, m := range utf16BOMs {
			if bytes.Equal(b, m) {
				p := &CSVError{}
				p.add(1, "", "the file is UTF-16 text (it starts with a UTF-16 byte order mark); save it as UTF-8 (most spreadsheets call it \"CSV UTF-8\") and import that")
				return nil, info, p.fault()
			}
		}
	}
	if b, _ := br.Peek(64); bytes.IndexByte(b, 0) >= 0 {
		p := &CSVError{}
		p.add(1, "", "the file holds zero bytes, as UTF-16 text without a byte order mark does; save it as UTF-8 (\"CSV UTF-8\") and import that")
		return nil, info, p.fault()
	}
	ignore := map[string]bool{}
	for _, n := range opts.Ignore {
		ignore[strings.ToLower(strings.TrimSpace(n))] = true
	}
	cr := csv.NewReader(br)
	cr.FieldsPerRecord = -1    // checked below, with a better message
	cr.TrimLeadingSpace = true // "kind, value" and `, "quoted"` are common by hand
	problems := &CSVError{}

	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		problems.add(1, "", "the file is empty; it needs a header line such as "+strings.Join(CSVColumns, ","))
		return nil, info, problems.fault()
	}
	if err != nil {
		problems.add(csvErrLine(err, 1), "", csvErrReason(err))
		return nil, info, problems.fault()
	}
	headerLine, _ := cr.FieldPos(0)
	cols := map[string]int{}
	names := make([]string, len(header))
	var unknown []string
	for i, h := range header {
		name := strings.ToLower(strings.TrimSpace(h))
		names[i] = name
		switch {
		case !utf8.ValidString(h):
			problems.add(headerLine, "", fmt.Sprintf("column %d's name is not valid UTF-8", i+1))
		case name == "":
			problems.add(headerLine, "", fmt.Sprintf("column %d has no name", i+1))
		case ignore[name] && !isRequired(name):
			info.Ignored = append(info.Ignored, strings.TrimSpace(h))
		case !isCSVColumn(name) && opts.IgnoreUnknown:
			info.Ignored = append(info.Ignored, strings.TrimSpace(h))
		case !isCSVColumn(name):
			unknown = append(unknown, Excerpt(strings.TrimSpace(h), excerptLen))
			problems.Unknown = append(problems.Unknown, strings.TrimSpace(h))
		default:
			if _, dup := cols[name]; dup {
				problems.add(headerLine, "", fmt.Sprintf("column %q appears twice", name))
			}
			cols[name] = i
		}
	}
	if len(unknown) > 0 {
		word := "column"
		if len(unknown) > 1 {
			word = "columns"
		}
		problems.add(headerLine, "", fmt.Sprintf("unknown %s %s (known: %s)", word, strings.Join(unknown, ", "), strings.Join(CSVColumns, ", ")))
	}
	for _, req := range requiredColumns {
		if _, ok := cols[req]; !ok {
			problems.add(headerLine, "", fmt.Sprintf("required column %q is missing", req))
		}
	}
	if len(problems.Problems) > 0 {
		return nil, info, problems.fault()
	}

	var items []Item
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			// The reader cannot resynchronise after a quoting error.
			problems.add(csvErrLine(err, 0), "", csvErrReason(err)+" (reading stopped here)")
			break
		}
		line, _ := cr.FieldPos(0)
		if allBlank(rec) {
			continue
		}
		if len(rec) != len(header) {
			problems.add(line, "", fmt.Sprintf("has %d fields, the header has %d", len(rec), len(header)))
			continue
		}
		it, ok := readRow(rec, cols, func(col string, reason string) {
			l, _ := cr.FieldPos(cols[col])
			problems.add(l, col, reason)
		})
		if ok {
			items = append(items, it)
		}
	}
	if len(problems.Problems) > 0 {
		return nil, info, problems.fault()
	}
	return items, info, nil
}

func isRequired(name string) bool {
	for _, c := range requiredColumns {
		if c == name {
			return true
		}
	}
	return false
}

func isCSVColumn(name string) bool {
	for _, c := range CSVColumns {
		if c == name {
			return true
		}
	}
	return false
}

func allBlank(rec []string) bool {
	for _, f := range rec {
		if strings.TrimSpace(f) != "" {
			return false
		}
	}
	return true
}

func csvErrLine(err error, def int) int {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return pe.Line
	}
	return def
}

func csvErrReason(err error) string {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return fmt.Sprintf("malformed CSV at column %d: %v", pe.Column, pe.Err)
	}
	return err.Error()
}

// reasonOf is the problem text for a cell error; the package's parse
// errors already quote the cell.
func reasonOf(err error) string { return err.Error() }

// readRow converts one record; it reports each bad cell through bad and
// returns ok false if there was any.
func readRow(rec []string, cols map[string]int, bad func(col, reason string)) (Item, bool) {
	ok := true
	fail := func(col, reason string) {
		ok = false
		bad(col, reason)
	}
	cell := func(col string) string {
		if i, has := cols[col]; has {
			return rec[i]
		}
		return ""
	}
	var it Item
	if !utf8.ValidString(strings.Join(rec, "")) {
		for _, c := range CSVColumns {
			if _, has := cols[c]; has && !utf8.ValidString(cell(c)) {
				fail(c, "not valid UTF-8")
			}
		}
		return it, false
	}

	kind, err := ParseKind(cell("kind"))
	kindOK := err == nil
	if !kindOK {
		fail("kind", reasonOf(err))
	}
	it.Kind = kind
	if kindOK && kind == OpAmp {
		it.Name = restore(strings.TrimSpace(cell("value")))
		readAmpCells(&it, cell, fail)
	} else if kindOK {
		for _, c := range []string{"channels", "gbw", "dc-gain", "slew", "supply"} {
			if strings.TrimSpace(cell(c)) != "" {
				fail(c, "only amplifier rows have "+c+" (this row is a "+kind.String()+")")
			}
		}
		if v, err := ParseValue(cell("value"), kind); err != nil {
			fail("value", reasonOf(err))
		} else {
			it.Value = v
		}
	}
	if t := strings.TrimSpace(cell("tolerance")); t != "" && kind == OpAmp {
		fail("tolerance", "an amplifier has no tolerance")
	} else if t != "" {
		if f, err := ParseToleranceFor(t, kind, it.Value); err != nil {
			fail("tolerance", reasonOf(err))
		} else {
			it.Tolerance = f
		}
	}
	if q, err := parseQuantity(cell("quantity")); err != nil {
		fail("quantity", err.Error())
	} else {
		it.Quantity = q
	}
	if v, err := ParseVoltage(cell("voltage")); err != nil {
		fail("voltage", reasonOf(err))
	} else {
		it.Voltage = v
	}
	if p, err := ParsePrice(cell("price")); err != nil {
		fail("price", reasonOf(err))
	} else {
		it.Price = p
	}
	for _, c := range []struct {
		col string
		dst *int
	}{{"min", &it.Min}, {"pack", &it.Pack}} {
		if t := strings.TrimSpace(cell(c.col)); t != "" {
			n, err := parseCount(c.col, t)
			if err != nil {
				fail(c.col, err.Error())
			} else {
				*c.dst = n
			}
		}
	}
	it.SupplierRef = restore(strings.TrimSpace(cell("supplier-ref")))
	it.Package = restore(strings.TrimSpace(cell("package")))
	it.Dielectric = restore(strings.TrimSpace(cell("dielectric")))
	it.Location = restore(strings.TrimSpace(cell("location")))
	it.Note = restore(strings.TrimSpace(cell("note")))
	it = it.Normalize()
	if kindOK {
		for _, p := range it.Problems() {
			switch p.Field {
			case "tolerance", "quantity", "voltage", "price", "min", "pack", "channels", "gbw", "dc-gain", "slew":
				// Reported above from the text, with the text quoted.
			case "value":
				if kind == OpAmp { // a label: nothing was parsed above
					fail(p.Field, p.Reason)
				}
			default:
				fail(p.Field, p.Reason)
			}
		}
	}
	return it, ok
}

// readAmpCells reads an amplifier row's own columns into it.
func readAmpCells(it *Item, cell func(string) string, fail func(col, reason string)) {
	var err error
	if it.Channels, err = ParseChannels(cell("channels")); err != nil {
		fail("channels", reasonOf(err))
	}
	if it.GBW, err = ParseGBW(cell("gbw")); err != nil {
		fail("gbw", reasonOf(err))
	}
	if it.DCGain, err = ParseDCGain(cell("dc-gain")); err != nil {
		fail("dc-gain", reasonOf(err))
	}
	if it.Slew, err = ParseSlew(cell("slew")); err != nil {
		fail("slew", reasonOf(err))
	}
	it.Supply = restore(strings.TrimSpace(cell("supply")))
}

// parseQuantity reads a whole number of parts: digits only, 0 to
// MaxQuantity.
func parseQuantity(s string) (int, error) { return parseCount("quantity", s) }

// parseCount reads a whole number of parts named what (quantity, min,
// pack): digits only, 0 to MaxQuantity.
func parseCount(what, s string) (int, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, fmt.Errorf("%s is empty", what)
	}
	for _, r := range t {
		if r < '0' || r > '9' {
			if r == '-' {
				return 0, fmt.Errorf("%s %q is negative", what, s)
			}
			return 0, fmt.Errorf("%s %q is not a whole number", what, s)
		}
	}
	if len(t) > 10 {
		return 0, fmt.Errorf("%s %q is above %d", what, s, MaxQuantity)
	}
	n, err := strconv.Atoi(t)
	if err != nil || n > MaxQuantity {
		return 0, fmt.Errorf("%s %q is above %d", what, s, MaxQuantity)
	}
	return n, nil
}

// ParseCount reads a minimum or pack size named what as ReadCSV does: a
// whole number from 0 to MaxQuantity. Errors are fault.Invalid and quote
// the text.
func ParseCount(what, s string) (int, error) {
	n, err := parseCount(what, s)
	if err != nil {
		return 0, fault.Invalidf("%v", err)
	}
	return n, nil
}

// ParseQuantity reads a quantity as ReadCSV does: a whole number from 0 to
// MaxQuantity, digits only. Errors are fault.Invalid and quote the text.
func ParseQuantity(s string) (int, error) {
	n, err := parseQuantity(s)
	if err != nil {
		return 0, fault.Invalidf("%v", err)
	}
	return n, nil
}

// countCell writes a minimum or pack size; 0 (none) is an empty cell.
func countCell(n int) string {
	if n == 0 {
		return ""
	}
	return strconv.Itoa(n)
}

// GuardCell is the one guard of every text cell drawerfit writes to a CSV
// file that a spreadsheet may open: a cell that would run as a formula
// (starting with =, +, -, @, a tab or a carriage return) or that starts
// with an apostrophe gets a leading apostrophe. ReadCSV removes exactly
// what it added.
func GuardCell(s string) string { return neutralise(s) }

// WriteCSV writes items in the format ReadCSV reads: a header with all of
// CSVColumns, then one row per item, LF line ends. Values and tolerances
// are written exactly (4.7k, 2.2nF, 1%), so reading the file back gives
// the identical numbers; text cells that a spreadsheet would run as a
// formula are neutralised with a leading apostrophe, which ReadCSV
// removes. IDs are not written. An invalid item is a fault.Invalid error
// and nothing after it is written.
func WriteCSV(w io.Writer, items []Item) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(CSVColumns); err != nil {
		return fmt.Errorf("write CSV: %w", err)
	}
	for i, it := range items {
		if p := it.Problems(); len(p) > 0 {
			cw.Flush()
			return fault.Invalidf("item %d (%s): %s: %s", i+1, it.Label(), p[0].Field, p[0].Reason)
		}
		rec := []string{
			it.Kind.String(),
			"",
			FormatTolerance(it.Tolerance),
			strconv.Itoa(it.Quantity),
			neutralise(it.Package),
			neutralise(it.Dielectric),
			neutralise(it.Location),
			neutralise(it.Note),
			compactVoltage(it.Voltage),
			it.Price.String(),
			countCell(it.Min),
			countCell(it.Pack),
			neutralise(it.SupplierRef),
			"", "", "", "", "",
		}
		if it.Kind == OpAmp {
			rec[1] = neutralise(it.Name)
			copy(rec[13:], []string{strconv.Itoa(it.Channels), compactGBW(it.GBW), compactFigure(it.DCGain),
				compactFigure(it.Slew), neutralise(it.Supply)})
		} else {
			rec[1] = compactValue(it.Value, it.Kind)
		}
		if err := cw.Write(rec); err != nil {
			return fmt.Errorf("write CSV: %w", err)
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("write CSV: %w", err)
	}
	return nil
}
