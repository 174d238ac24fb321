// Package migrations holds drawerfit's database schema as numbered SQL
// files, embedded into the binary: one set per SQL dialect, sqlite/ and
// postgres/, with the same numbers and file names, each leaving the same
// tables and constraints at each number. It is its own package because an
// embed directive cannot reach files outside the package directory.
//
// Each file is named NNNN_words.sql, numbered from 0001 without gaps, and
// is applied once, in order, inside a transaction by package drawerfit/store,
// which records it (by number and file name) in the schema_version table.
// A shipped file is never edited; a schema change is a new file with the
// next number in both sets.
package migrations

import (
	"embed"
	"fmt"
	"io/fs"
	"sort"
	"strconv"
	"strings"
)

//go:embed sqlite/*.sql postgres/*.sql
var files embed.FS

// Migration is one schema step.
type Migration struct {
	// Version is the file's number; version N leaves the schema at N.
	Version int
	// Name is the file name, such as "0001_init.sql".
	Name string
	// SQL is the file's content: one or more statements.
	SQL string
}

var (
	all      = mustLoad(mustSub(files, "sqlite"))
	postgres = mustLoad(mustSub(files, "postgres"))
)

// All returns every SQLite migration in version order, 1 to Latest(). The
// slice is a copy.
func All() []Migration { return append([]Migration(nil), all...) }

// Postgres returns every PostgreSQL migration in version order, 1 to
// Latest(): the same numbers and file names as All. The slice is a copy.
func Postgres() []Migration { return append([]Migration(nil), postgres...) }

// Latest returns the schema version this binary knows: the highest number.
func Latest() int { return len(all) }

func mustSub(fsys fs.FS, dir string) fs.FS {
	sub, err := fs.Sub(fsys, dir)
	if err != nil {
		panic("migrations: " + err.Error())
	}
	return sub
}

// mustLoad reads and checks the embedded files; a misnamed or misnumbered
// file is a build mistake, so it panics (the package test catches it).
func mustLoad(fsys fs.FS) []Migration {
	ms, err := load(fsys)
	if err != nil {
		panic("migrations: " + err.Error())
	}
	return ms
}

func load(fsys fs.FS) ([]Migration, error) {
	names, err := fs.Glob(fsys, "*.sql")
	if err != nil {
		return nil, err
	}
	sort.Strings(names)
	var out []Migration
	for i, name := range names {
		num, rest, ok := strings.Cut(name, "_")
		if !ok || len(num) != 4 || rest == ".sql" {
			return nil, fmt.Errorf("file %s is not named NNNN_words.sql", name)
		}
		v, err := strconv.Atoi(num)
		if err != nil {
			return nil, fmt.Errorf("file %s is not named NNNN_words.sql", name)
		}
		if v != i+1 {
			return nil, fmt.Errorf("file %s: expected number %04d (numbers start at 0001 and have no gaps or repeats)", name, i+1)
		}
		b, err := fs.ReadFile(fsys, name)
		if err != nil {
			return nil, err
		}
		if strings.TrimSpace(string(b)) == "" {
			return nil, fmt.Errorf("file %s is empty", name)
		}
		out = append(out, Migration{Version: v, Name: name, SQL: string(b)})
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("no migration files")
	}
	return out, nil
}
