package store

// A stock database that the user may only read, tested as a user who may
// only read it. CI runs the tests as root, whom file modes do not stop, so
// the test starts this test binary again as the unprivileged user "nobody"
// (uid and gid 65534, set through syscall.SysProcAttr.Credential) on a
// file and folder owned by root with modes 0644 and 0755. Run as another
// user, the test makes the file 0444 and its folder 0555 and runs the
// helper as that same user.

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"drawerfit/stock"
)

// nobody is the conventional unprivileged user and group on Debian
// (common practice, no source).
const nobody = 65534

// unprivilegedRole runs the read-only helper roles; it reports whether
// role was one of them.
func unprivilegedRole(ctx context.Context, role string, arg func(int) string) bool {
	switch role {
	case "ro-list":
		db, err := OpenMode(ctx, arg(0), ReadOnly)
		if err != nil {
			fmt.Println("error:", err)
			return true
		}
		items, err := db.List(ctx, stock.Filter{})
		db.Close()
		if err != nil {
			fmt.Println("error:", err)
			return true
		}
		fmt.Println("rows:", len(items))
	case "rw-add":
		db, err := OpenMode(ctx, arg(0), ReadWrite)
		if err == nil {
			_, _, err = db.Add(ctx, stock.Item{Kind: stock.Resistor, Value: 100, Quantity: 1}, "")
			db.Close()
		}
		fmt.Println("error:", err)
	case "create":
		db, err := OpenMode(ctx, arg(0), Create)
		if err == nil {
			db.Close()
		}
		fmt.Println("error:", err)
	default:
		return false
	}
	return true
}

func TestReadOnlyDatabaseAsUnprivilegedUser(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("starts subprocesses")
	}
	ctx := context.Background()
	root := os.Geteuid() == 0
	base := t.TempDir()
	dir := filepath.Join(base, "shop")
	if err := os.Mkdir(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "stock.db")
	db, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	for _, v := range []float64{4700, 10000} {
		if _, _, err := db.Add(ctx, stock.Item{Kind: stock.Resistor, Value: v, Quantity: 3}, ""); err != nil {
			t.Fatal(err)
		}
	}
	db.Close()
	before := fileHash(t, path)
	bin := os.Args[0]
	if root {
		// The helper must reach the folder and run a copy of this binary.
		for _, d := range []string{filepath.Dir(base), base} {
			if err := os.Chmod(d, 0o755); err != nil {
				t.Fatal(err)
			}
		}
		b, err := os.ReadFile(os.Args[0])
		if err != nil {
			t.Fatal(err)
		}
		bin = filepath.Join(base, "store.test")
		if err := os.WriteFile(bin, b, 0o755); err != nil {
			t.Fatal(err)
		}
	} else {
		os.Chmod(path, 0o444)
		os.Chmod(dir, 0o555)
		t.Cleanup(func() { os.Chmod(dir, 0o755); os.Chmod(path, 0o644) })
	}
	run := func(role, arg string) string {
		t.Helper()
		cmd := exec.Command(bin, "-test.run=^TestHelperProcess$")
		cmd.Env = append(os.Environ(), helperEnv+"="+role, "DRAWERFIT_HELPER_ARG0="+arg)
		if root {
			cmd.SysProcAttr = &syscall.SysProcAttr{Credential: &syscall.Credential{Uid: nobody, Gid: nobody}}
		}
		cmd.Stderr = io.Discard
		out, err := cmd.Output()
		if err != nil {
			t.Fatalf("helper %s: %v\n%s", role, err, out)
		}
		return strings.TrimSpace(string(out))
	}
	if got := run("ro-list", path); got != "rows: 2" {
		t.Errorf("reading a read-only database: %q", got)
	}
	if got := run("rw-add", path); !strings.Contains(got, "is read-only") || strings.Contains(got, "1544") {
		t.Errorf("writing a read-only database: %q", got)
	}
	newPath := filepath.Join(dir, "new.db")
	if got := run("create", newPath); !strings.Contains(got, "read-only for this user") || strings.Contains(got, "(14)") {
		t.Errorf("creating in a read-only folder: %q", got)
	}
	if after := fileHash(t, path); after != before {
		t.Error("the read-only database changed")
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		var names []string
		for _, e := range entries {
			names = append(names, e.Name())
		}
		t.Errorf("the read-only folder holds %v, want only stock.db", names)
	}
}
