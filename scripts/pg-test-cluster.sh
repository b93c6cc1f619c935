#!/usr/bin/env bash
# A throwaway PostgreSQL server for the integration tests (Debian's `postgresql` package):
#
#   scripts/pg-test-cluster.sh start [DIR]   prints postgres://postgres@127.0.0.1:<port>/postgres
#   scripts/pg-test-cluster.sh stop DIR      stops the server and deletes DIR
#
#   DIR=$(mktemp -d) && URL=$(scripts/pg-test-cluster.sh start "$DIR")
#   DATABASE_URL=$URL npx vitest run tests/integration
#   scripts/pg-test-cluster.sh stop "$DIR"
#
# The cluster lives in DIR (a new temporary folder when none is given), listens on 127.0.0.1
# only, on a free port, with its socket in DIR, and trusts loopback connections: it is for tests
# on this machine and nothing else. Durability is switched off (fsync, synchronous_commit), since
# the data is thrown away. Its time zone is far from UTC, with daylight saving: PGlite runs on
# UTC, and SQL that leans on the session's zone should fail here, not on an operator's server.
# initdb refuses to run as root, so root runs it as the `postgres` user.
set -euo pipefail

usage() {
	sed -n '2,9p' "$0" | sed 's/^# \{0,1\}//' >&2
	exit 2
}

# Debian keeps the server programs out of PATH, under /usr/lib/postgresql/<major>/bin.
bindir() {
	local dir
	dir=$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1 || true)
	if [ -n "$dir" ] && [ -x "$dir/initdb" ]; then
		echo "$dir"
	elif command -v initdb >/dev/null; then
		dirname "$(command -v initdb)"
	else
		echo "PostgreSQL's server is not installed: run \"apt-get install -y --no-install-recommends postgresql\" (as root) and try again." >&2
		exit 1
	fi
}

# Runs a command as the owner of the cluster: `postgres` when we are root, else ourselves.
as_owner() {
	if [ "$(id -u)" = 0 ]; then
		runuser -u postgres -- "$@"
	else
		"$@"
	fi
}

free_port() {
	node -e "const s = require('node:net').createServer().listen(0, '127.0.0.1', () => { console.log(s.address().port); s.close(); });"
}

start() {
	local dir=${1:-} bin port attempt
	bin=$(bindir)
	if [ -z "$dir" ]; then
		dir=$(mktemp -d "${TMPDIR:-/tmp}/tideward-pg.XXXXXX")
	fi
	mkdir -p "$dir"
	if [ -e "$dir/data" ]; then
		echo "$dir already holds a cluster: stop it first (scripts/pg-test-cluster.sh stop $dir)." >&2
		exit 1
	fi
	if [ "$(id -u)" = 0 ]; then chown postgres: "$dir"; fi
	chmod 700 "$dir"

	as_owner "$bin/initdb" --pgdata="$dir/data" --username=postgres --auth=trust \
		--encoding=UTF8 --locale=C --no-sync >"$dir/initdb.log" 2>&1 || {
		cat "$dir/initdb.log" >&2
		exit 1
	}

	# Another process may take the port between our look and the server's start: try again.
	for attempt in 1 2 3 4 5; do
		port=$(free_port)
		if as_owner "$bin/pg_ctl" --pgdata="$dir/data" --log="$dir/server.log" --wait --silent \
			--options="-c listen_addresses=127.0.0.1 -c port=$port -c unix_socket_directories='$dir' -c max_connections=200 -c timezone=Pacific/Auckland -c fsync=off -c synchronous_commit=off -c full_page_writes=off" \
			start >/dev/null; then
			echo "$port" >"$dir/port"
			echo "PostgreSQL test cluster in $dir; stop it with: scripts/pg-test-cluster.sh stop $dir" >&2
			echo "postgres://postgres@127.0.0.1:$port/postgres"
			return
		fi
		echo "Starting on port $port failed (attempt $attempt); see $dir/server.log" >&2
	done
	cat "$dir/server.log" >&2
	exit 1
}

stop() {
	local dir=${1:-}
	[ -n "$dir" ] || usage
	[ -d "$dir" ] || return 0
	if [ -f "$dir/data/postmaster.pid" ]; then
		as_owner "$(bindir)/pg_ctl" --pgdata="$dir/data" --mode=fast --wait --silent stop ||
			as_owner "$(bindir)/pg_ctl" --pgdata="$dir/data" --mode=immediate --wait --silent stop || {
			echo "Stopping the cluster in $dir failed; see $dir/server.log (left in place)" >&2
			exit 1
		}
	fi
	rm -rf "$dir"
}

case "${1:-}" in
start) start "${2:-}" ;;
stop) stop "${2:-}" ;;
*) usage ;;
esac
