# Functions to run a private PostgreSQL cluster for the tests: a fresh
# data directory and Unix socket in a temporary directory, no TCP, trust
# authentication for its one superuser. Source this file, then
#
#     pg_start            # exports DRAWERFIT_TEST_POSTGRES (a URL) and
#                         # stops the cluster when the shell exits
#
# The server refuses to run as root; as root the cluster runs as the
# system user "postgres" (Debian's package creates it).

PG_BIN=${PG_BIN:-/usr/lib/postgresql/15/bin}

pg_start() {
  PG_DIR=$(mktemp -d /tmp/drawerfit-pg.XXXXXX)
  local as=()
  if [ "$(id -u)" = 0 ]; then
    chown postgres: "$PG_DIR"
    as=(runuser -u postgres --)
  fi
  trap pg_stop EXIT
  "${as[@]}" "$PG_BIN/initdb" -D "$PG_DIR/data" -U postgres --auth=trust -E UTF8 --locale=C.UTF-8 >"$PG_DIR/initdb.log"
  "${as[@]}" "$PG_BIN/pg_ctl" -D "$PG_DIR/data" -l "$PG_DIR/server.log" -w \
    -o "-c listen_addresses='' -c unix_socket_directories=$PG_DIR -c fsync=off -c max_connections=200" start >/dev/null
  export DRAWERFIT_TEST_POSTGRES="postgres://postgres@/postgres?host=$PG_DIR&sslmode=disable"
  echo "PostgreSQL test cluster in $PG_DIR"
}

pg_stop() {
  [ -n "${PG_DIR:-}" ] || return 0
  local as=()
  [ "$(id -u)" = 0 ] && as=(runuser -u postgres --)
  "${as[@]}" "$PG_BIN/pg_ctl" -D "$PG_DIR/data" -m immediate stop >/dev/null 2>&1 || true
  rm -rf "$PG_DIR"
  PG_DIR=
}
