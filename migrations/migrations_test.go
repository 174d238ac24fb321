package migrations

import (
	"os"
	"strings"
	"testing"
	"testing/fstest"
)

func TestEmbeddedSetIsNumberedWithoutGaps(t *testing.T) {
	t.Parallel()
	ms := All()
	if len(ms) == 0 || Latest() != len(ms) {
		t.Fatalf("Latest() = %d with %d migrations", Latest(), len(ms))
	}
	for i, m := range ms {
		if m.Version != i+1 {
			t.Errorf("migration %d has version %d", i, m.Version)
		}
		if !strings.HasSuffix(m.Name, ".sql") || m.SQL == "" {
			t.Errorf("migration %d: name %q, %d bytes", i, m.Name, len(m.SQL))
		}
	}
}

// TestNoFilesOutsideTheDialectSets: a migration file put in this folder
// itself would be embedded by neither set and never applied.
func TestNoFilesOutsideTheDialectSets(t *testing.T) {
	t.Parallel()
	entries, err := os.ReadDir(".")
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if strings.HasSuffix(e.Name(), ".sql") {
			t.Errorf("%s is outside sqlite/ and postgres/: a new migration goes into both, with the same number and name", e.Name())
		}
	}
}

// TestDialectsMatch: the PostgreSQL set has the same numbers and file
// names as the SQLite set, so that the runner recognises a database of
// either by the names it recorded.
func TestDialectsMatch(t *testing.T) {
	t.Parallel()
	s, p := All(), Postgres()
	if len(s) != len(p) {
		t.Fatalf("%d SQLite migrations, %d PostgreSQL", len(s), len(p))
	}
	for i := range s {
		if s[i].Name != p[i].Name || s[i].Version != p[i].Version {
			t.Errorf("migration %d: %s (SQLite) and %s (PostgreSQL)", i+1, s[i].Name, p[i].Name)
		}
	}
}

func TestLoadRejectsBadSets(t *testing.T) {
	t.Parallel()
	sql := &fstest.MapFile{Data: []byte("CREATE TABLE t (x);")}
	cases := []struct {
		name  string
		files fstest.MapFS
		want  string
	}{
		{"gap", fstest.MapFS{"0001_a.sql": sql, "0003_c.sql": sql}, "expected number 0002"},
		{"repeat", fstest.MapFS{"0001_a.sql": sql, "0001_b.sql": sql}, "expected number 0002"},
		{"starts at two", fstest.MapFS{"0002_a.sql": sql}, "expected number 0001"},
		{"no underscore", fstest.MapFS{"0001.sql": sql}, "not named"},
		{"short number", fstest.MapFS{"001_a.sql": sql}, "not named"},
		{"empty file", fstest.MapFS{"0001_a.sql": &fstest.MapFile{Data: []byte(" \n")}}, "empty"},
		{"none", fstest.MapFS{}, "no migration"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := load(c.files)
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Fatalf("load: %v, want an error containing %q", err, c.want)
			}
		})
	}
	if ms, err := load(fstest.MapFS{"0001_a.sql": sql, "0002_b.sql": sql}); err != nil || len(ms) != 2 {
		t.Fatalf("good set: %v, %d migrations", err, len(ms))
	}
}
