package cli

import (
	"encoding/json"
	"io"
	"os"

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
