package store

import (
	"context"
	"database/sql"
	"strconv"
	"strings"
)

// The store speaks two SQL dialects: SQLite (a file, the default) and
// PostgreSQL (a server shared by several benches). The statements are
// written once, with ? placeholders; pool and Tx rewrite them to $1, $2,
// ... for PostgreSQL, and the few places where the dialects differ ask
// the DB which one it is.

// pool is the connection pool with the dialect's placeholders.
type pool struct {
	*sql.DB
	pg bool
}

// ExecContext runs q with its placeholders in the pool's dialect.
func (p *pool) ExecContext(ctx context.Context, q string, args ...any) (sql.Result, error) {
	return p.DB.ExecContext(ctx, rebind(p.pg, q), args...)
}

// QueryContext runs q with its placeholders in the pool's dialect.
func (p *pool) QueryContext(ctx context.Context, q string, args ...any) (*sql.Rows, error) {
	return p.DB.QueryContext(ctx, rebind(p.pg, q), args...)
}

// QueryRowContext runs q with its placeholders in the pool's dialect.
func (p *pool) QueryRowContext(ctx context.Context, q string, args ...any) *sql.Row {
	return p.DB.QueryRowContext(ctx, rebind(p.pg, q), args...)
}

// ExecContext runs q in the transaction, with its placeholders in the
// database's dialect.
func (tx *Tx) ExecContext(ctx context.Context, q string, args ...any) (sql.Result, error) {
	return tx.Tx.ExecContext(ctx, rebind(tx.pg, q), args...)
}

// QueryContext runs q in the transaction, with its placeholders in the
// database's dialect.
func (tx *Tx) QueryContext(ctx context.Context, q string, args ...any) (*sql.Rows, error) {
	return tx.Tx.QueryContext(ctx, rebind(tx.pg, q), args...)
}

// QueryRowContext runs q in the transaction, with its placeholders in the
// database's dialect.
func (tx *Tx) QueryRowContext(ctx context.Context, q string, args ...any) *sql.Row {
	return tx.Tx.QueryRowContext(ctx, rebind(tx.pg, q), args...)
}

func (p *pool) isPG() bool { return p.pg }
func (tx *Tx) isPG() bool  { return tx.pg }

// rebind turns ? placeholders into PostgreSQL's $1, $2, ... (outside
// quoted text); SQLite statements are returned as they are.
func rebind(pg bool, q string) string {
	if !pg || !strings.Contains(q, "?") {
		return q
	}
	var b strings.Builder
	n := 0
	quoted := false
	for i := 0; i < len(q); i++ {
		c := q[i]
		switch {
		case c == '\'':
			quoted = !quoted
		case c == '?' && !quoted:
			n++
			b.WriteByte('$')
			b.WriteString(strconv.Itoa(n))
			continue
		}
		b.WriteByte(c)
	}
	return b.String()
}

// asciiFold is PostgreSQL's expression for col with A-Z folded to a-z and
// nothing else, which is what SQLite's NOCASE collation compares: the
// identity of a row compares the same on both.
func asciiFold(col string) string {
	return "translate(" + col + ", 'ABCDEFGHIJKLMNOPQRSTUVWXYZ', 'abcdefghijklmnopqrstuvwxyz')"
}

// nocaseOrder is col as an ORDER BY term without regard to ASCII letter
// case, in byte order otherwise (SQLite's NOCASE; "C" collation on
// PostgreSQL, whatever the database's locale).
func nocaseOrder(pg bool, col string) string {
	if pg {
		return asciiFold(col) + ` COLLATE "C"`
	}
	return col + " COLLATE NOCASE"
}

// nocaseEq is "col equals the next placeholder without regard to ASCII
// letter case".
func nocaseEq(pg bool, col string) string {
	if pg {
		return asciiFold(col) + " = " + asciiFold("?")
	}
	return col + " = ? COLLATE NOCASE"
}
