package store

import (
	"context"
	"database/sql"
	"fmt"
	"math/rand/v2"
	"net/url"
	"os"
	"testing"
	"time"

	_ "github.com/jackc/pgx/v5/stdlib" // the "pgx" driver, for the test server's admin connection
)

// The store's tests run against both dialects: each test that needs a
// database takes an opener and runs once per entry of openers. The
// PostgreSQL side needs a server: DRAWERFIT_TEST_POSTGRES is the URL of a
// database on it whose user may create databases (.ci/run starts a private
// cluster and sets it); each test gets a new database of its own, dropped
// afterwards. Without the variable those runs skip with a message.

// opener makes a fresh, empty stock database for one test.
type opener func(t *testing.T) *DB

// postgresEnv names the test server's URL.
const postgresEnv = "DRAWERFIT_TEST_POSTGRES"

var openers = []struct {
	name string
	open opener
}{
	{"sqlite", openTest},
	{"postgres", openTestPostgres},
}

// eachDialect runs test once per dialect, as subtests named after them.
func eachDialect(t *testing.T, test func(t *testing.T, open opener)) {
	for _, o := range openers {
		t.Run(o.name, func(t *testing.T) { test(t, o.open) })
	}
}

// newPostgresDatabase creates an empty database on the test server and
// returns its URL; it is dropped when the test ends.
func newPostgresDatabase(t *testing.T) string {
	t.Helper()
	admin := os.Getenv(postgresEnv)
	if admin == "" {
		t.Skip("no PostgreSQL server: set " + postgresEnv + " to a URL (see DEVELOPERS.md; .ci/run does)")
	}
	sdb, err := sql.Open("pgx", admin)
	if err != nil {
		t.Fatal(err)
	}
	defer sdb.Close()
	name := fmt.Sprintf("drawerfit_test_%d_%08x", os.Getpid(), rand.Uint32())
	if _, err := sdb.Exec(`CREATE DATABASE ` + name); err != nil {
		t.Fatalf("create test database: %v", err)
	}
	t.Cleanup(func() {
		sdb, err := sql.Open("pgx", admin)
		if err == nil {
			sdb.Exec(`DROP DATABASE IF EXISTS ` + name + ` WITH (FORCE)`)
			sdb.Close()
		}
	})
	u, err := url.Parse(admin)
	if err != nil {
		t.Fatal(err)
	}
	u.Path = "/" + name
	return u.String()
}

// openTestPostgres is openTest on a new database of the test server.
func openTestPostgres(t *testing.T) *DB {
	t.Helper()
	db, err := OpenMode(context.Background(), newPostgresDatabase(t), Create)
	if err != nil {
		t.Fatal(err)
	}
	c := &clock{t: time.Date(2030, 1, 1, 0, 0, 0, 0, time.UTC)}
	db.Now = c.now
	t.Cleanup(func() { db.Close() })
	return db
}
