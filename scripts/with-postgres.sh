#!/usr/bin/env bash
# Runs a command against a private, throw-away PostgreSQL server on loopback.
# Installs PostgreSQL from Debian when it is missing (needs root), starts a cluster in a
# temporary directory, exports TEST_DATABASE_URL, runs "$@", and stops the server after.
set -euo pipefail

bindir=$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1 || true)
if [ -z "$bindir" ] || [ ! -x "$bindir/initdb" ]; then
  if [ "$(id -u)" = 0 ]; then
    echo "with-postgres: installing PostgreSQL from Debian" >&2
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -qq >/dev/null
    apt-get install -y -qq postgresql >/dev/null
    bindir=$(ls -d /usr/lib/postgresql/*/bin | sort -V | tail -n 1)
  else
    echo "with-postgres: PostgreSQL is not installed; run 'apt-get install postgresql' as root" >&2
    exit 1
  fi
fi

port=${PGTEST_PORT:-55432}
dir=$(mktemp -d /tmp/stillpoint-pg.XXXXXX)
as_pg=()
if [ "$(id -u)" = 0 ]; then
  id postgres >/dev/null 2>&1 || useradd --system --home "$dir" postgres
  chown postgres "$dir"
  as_pg=(runuser -u postgres --)
fi
cleanup() {
  "${as_pg[@]}" "$bindir/pg_ctl" -D "$dir/data" -m immediate stop >/dev/null 2>&1 || true
  rm -rf "$dir"
}
trap cleanup EXIT
"${as_pg[@]}" "$bindir/initdb" -D "$dir/data" -U postgres --auth=trust -E UTF8 >/dev/null
"${as_pg[@]}" "$bindir/pg_ctl" -D "$dir/data" -l "$dir/log" -w \
  -o "-p $port -k $dir -c listen_addresses=127.0.0.1 -c fsync=off -c max_connections=200" start >/dev/null
export TEST_DATABASE_URL="postgres://postgres@127.0.0.1:$port/postgres"
echo "with-postgres: PostgreSQL $("$bindir/postgres" --version | awk '{print $3}') on 127.0.0.1:$port" >&2
"$@"
