package cli

import (
	"fmt"
	"strings"

	"github.com/spf13/pflag"
)

// choice is one value of an enumerated flag and what it means (empty: the
// name says it).
type choice struct {
	name string
	help string
}

// enumValue is a string flag restricted to a list of choices. The one list
// gives the help text, the shell completion and the check of the value, so
// the three cannot disagree.
type enumValue struct {
	p       *string
	what    string // what the value is, in the error: "response", "ranking"
	choices []choice
	aliases map[string]string // other spellings accepted, lower case → choice
}

// enumFlag binds --name to p with default def. what names the value in an
// error ("unknown response \"x\": use butterworth, chebyshev or bessel");
// usage says what the flag does and is followed by the choices. aliases
// (may be nil) maps other accepted spellings, in lower case, to a choice.
// The value is stored in its canonical, lower-case spelling.
func enumFlag(f interface {
	Var(pflag.Value, string, string)
}, p *string, name, def, what, usage string, aliases map[string]string, choices ...choice) {
	*p = def
	e := &enumValue{p: p, what: what, choices: choices, aliases: aliases}
	f.Var(e, name, usage+": "+e.describe())
}

// describe lists the choices for the help text: "a (meaning), b or c".
func (e *enumValue) describe() string {
	parts := make([]string, len(e.choices))
	for i, c := range e.choices {
		parts[i] = c.name
		if c.help != "" {
			parts[i] += " (" + c.help + ")"
		}
	}
	return joinOr(parts)
}

// names lists the choices' names: "a, b or c".
func (e *enumValue) names() string {
	names := make([]string, len(e.choices))
	for i, c := range e.choices {
		names[i] = c.name
	}
	return joinOr(names)
}

func joinOr(parts []string) string {
	switch len(parts) {
	case 0:
		return ""
	case 1:
		return parts[0]
	}
	return strings.Join(parts[:len(parts)-1], ", ") + " or " + parts[len(parts)-1]
}

func (e *enumValue) String() string { return *e.p }

// Type names the choices in the usage line: --response butterworth|chebyshev|bessel.
func (e *enumValue) Type() string {
	names := make([]string, len(e.choices))
	for i, c := range e.choices {
		names[i] = c.name
	}
	return strings.Join(names, "|")
}

// Set accepts a choice or an alias, ignoring case and surrounding space.
func (e *enumValue) Set(s string) error {
	k := strings.ToLower(strings.TrimSpace(s))
	if a, ok := e.aliases[k]; ok {
		k = a
	}
	for _, c := range e.choices {
		if c.name == k {
			*e.p = k
			return nil
		}
	}
	return fmt.Errorf("unknown %s %q: use %s", e.what, s, e.names())
}

// completions are the choices with their meaning, as cobra's dynamic
// completion takes them ("name\tmeaning").
func (e *enumValue) completions() []string {
	out := make([]string, len(e.choices))
	for i, c := range e.choices {
		out[i] = c.name
		if c.help != "" {
			out[i] += "\t" + c.help
		}
	}
	return out
}
