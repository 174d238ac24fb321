// Package fault defines the few kinds of error that drawerfit shows to a
// user: invalid input, something not found, a conflict with what is stored,
// and a request that no design can satisfy. Domain packages return these for
// anything caused by data or the user; the CLI prints only the message and
// maps the kind to an exit status.
package fault

import (
	"errors"
	"fmt"
)

// Kind classifies a user-facing error.
type Kind int

const (
	// Internal is any error that is not one of the kinds below.
	Internal Kind = iota
	// Invalid means the user's input or data was malformed or out of range.
	Invalid
	// NotFound means a named thing (stock row, design, build) does not exist.
	NotFound
	// Conflict means the request clashes with stored state (a duplicate
	// identity, a second undo, a shortfall of stock).
	Conflict
	// Infeasible means the request is well formed but nothing can satisfy it.
	Infeasible
)

func (k Kind) String() string {
	switch k {
	case Invalid:
		return "invalid input"
	case NotFound:
		return "not found"
	case Conflict:
		return "conflict"
	case Infeasible:
		return "infeasible"
	}
	return "internal error"
}

// Error is an error with a Kind and a message meant for a person.
type Error struct {
	Kind Kind
	Msg  string
	Err  error // optional cause
	// Field is the option the error is about, if any (see InvalidFieldf).
	Field Field
}

func (e *Error) Error() string {
	if e.Err != nil && e.Msg == "" {
		return e.Err.Error()
	}
	return e.Msg
}

func (e *Error) Unwrap() error { return e.Err }

func newf(k Kind, format string, args ...any) error {
	err := fmt.Errorf(format, args...)
	return &Error{Kind: k, Msg: err.Error(), Err: errors.Unwrap(err)}
}

// Invalidf returns an Invalid error with a formatted message.
func Invalidf(format string, args ...any) error { return newf(Invalid, format, args...) }

// NotFoundf returns a NotFound error with a formatted message.
func NotFoundf(format string, args ...any) error { return newf(NotFound, format, args...) }

// Conflictf returns a Conflict error with a formatted message.
func Conflictf(format string, args ...any) error { return newf(Conflict, format, args...) }

// Infeasiblef returns an Infeasible error with a formatted message.
func Infeasiblef(format string, args ...any) error { return newf(Infeasible, format, args...) }

// KindOf reports the Kind of the first *Error in err's chain, or Internal.
func KindOf(err error) Kind {
	var e *Error
	if errors.As(err, &e) {
		return e.Kind
	}
	return Internal
}

// Is reports whether err carries the given kind.
func Is(err error, k Kind) bool { return err != nil && KindOf(err) == k }

// Field names, in the domain's words, the option or value an Invalid error
// is about: the name of the options struct field ("Combine", "Boards").
// The message speaks of the quantity, never of a command-line flag; the
// CLI maps a field to its flag when it prints the error.
type Field string

// InvalidFieldf returns an Invalid error about field f with a formatted
// message.
func InvalidFieldf(f Field, format string, args ...any) error {
	e := newf(Invalid, format, args...).(*Error)
	e.Field = f
	return e
}

// FieldOf returns the field of the first *Error in err's chain that names
// one ("" when there is none).
func FieldOf(err error) Field {
	for err != nil {
		var e *Error
		if !errors.As(err, &e) {
			return ""
		}
		if e.Field != "" {
			return e.Field
		}
		err = e.Err
	}
	return ""
}
