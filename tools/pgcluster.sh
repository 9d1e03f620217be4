#!/bin/sh
# pgcluster.sh: a throw-away PostgreSQL cluster (Debian's server) for the tests and benchmarks.
# Usage: tools/pgcluster.sh start DIR   creates DIR, initdb, starts the server; prints DIR/env
#        tools/pgcluster.sh stop DIR    stops the server (pg_ctl stop -m fast) and removes DIR
#        tools/pgcluster.sh restart DIR pg_ctl restart -m fast (the same socket and port)
# The server listens on a Unix socket in DIR and on 127.0.0.1 at a free port. pg_hba: local
# connections are trusted; TCP from 127.0.0.1 needs a password (scram-sha-256).
# DIR/env is shell-sourceable: PGC_URI (superuser, Unix socket), PGC_HOST (the socket directory),
# PGC_PORT, PGC_TCP_URI (127.0.0.1, no password: for roles made with a password), PGC_BIN, PGC_DIR.
# Both commands are idempotent: start on a running cluster only prints its env; stop on a missing
# one does nothing. Root cannot run the server: it runs as the 'postgres' OS user (runuser).
# PGC_VERSION chooses the server version (default: the newest in /usr/lib/postgresql).
set -u
cmd=${1:-}
dir=${2:-}
case $cmd in start|stop|restart) ;; *) echo "usage: $0 start|stop|restart DIR" >&2; exit 64 ;; esac
[ -n "$dir" ] || { echo "usage: $0 $cmd DIR" >&2; exit 64; }
case $dir in /*) ;; *) dir="$PWD/$dir" ;; esac

if [ -n "${PGC_VERSION:-}" ]; then
    bin=/usr/lib/postgresql/$PGC_VERSION/bin
else
    bin=$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1)
fi
if [ -z "$bin" ] || [ ! -x "$bin/initdb" ] || [ ! -x "$bin/pg_ctl" ]; then
    echo "pgcluster: PostgreSQL server not installed (apt-get install postgresql)" >&2
    exit 69
fi

# as_pg CMD...: runs a command as the cluster's owner (the postgres OS user when we are root).
as_pg() {
    if [ "$(id -u)" = 0 ]; then runuser -u postgres -- "$@"; else "$@"; fi
}

pidfile() { head -n 1 "$dir/data/postmaster.pid" 2>/dev/null; }
running() {
    [ -f "$dir/data/postmaster.pid" ] && as_pg "$bin/pg_ctl" -D "$dir/data" status >/dev/null 2>&1
}

case $cmd in
stop)
    if [ -d "$dir/data" ] && [ -f "$dir/data/postmaster.pid" ]; then
        as_pg "$bin/pg_ctl" -D "$dir/data" -m fast -w -t 60 stop >/dev/null 2>&1 ||
            as_pg "$bin/pg_ctl" -D "$dir/data" -m immediate -w -t 30 stop >/dev/null 2>&1
    fi
    # only a directory this script made (it has our marker) is removed
    if [ -f "$dir/.pgcluster" ]; then rm -rf "$dir"; fi
    exit 0 ;;
restart)
    running || { echo "pgcluster: no cluster running in $dir" >&2; exit 66; }
    as_pg "$bin/pg_ctl" -D "$dir/data" -l "$dir/server.log" -m fast -w -t 60 restart >/dev/null || exit 75
    exit 0 ;;
esac

# start
if running; then cat "$dir/env"; exit 0; fi
if [ -e "$dir" ] && [ ! -f "$dir/.pgcluster" ] && [ -n "$(ls -A "$dir" 2>/dev/null)" ]; then
    echo "pgcluster: $dir exists and is not a cluster made by this script" >&2; exit 73
fi
mkdir -p "$dir" || exit 73
touch "$dir/.pgcluster"
if [ "$(id -u)" = 0 ]; then
    chown postgres: "$dir" || exit 73
    # the postgres user must be able to reach DIR: every parent needs the search bit for others
    p=$(dirname "$dir")
    while [ "$p" != / ]; do
        if ! runuser -u postgres -- test -x "$p"; then chmod o+x "$p" || exit 73; fi
        p=$(dirname "$p")
    done
fi
if [ ! -f "$dir/data/PG_VERSION" ]; then
    rm -rf "$dir/data"
    as_pg "$bin/initdb" -D "$dir/data" -U postgres -A trust -E UTF8 --locale=C.UTF-8 \
        --no-sync >"$dir/initdb.log" 2>&1 || { cat "$dir/initdb.log" >&2; exit 70; }
fi
# a free TCP port on 127.0.0.1: the kernel picks one
port=$(/usr/bin/python3 -c 'import socket; s=socket.socket(); s.bind(("127.0.0.1", 0)); print(s.getsockname()[1])')
as_pg sh -c "cat >'$dir/data/pg_hba.conf'" <<EOF
# TYPE  DATABASE  USER  ADDRESS        METHOD
local   all       all                  trust
host    all       all   127.0.0.1/32   scram-sha-256
EOF
as_pg sh -c "cat >'$dir/data/postgresql.auto.conf'" <<EOF
listen_addresses = '127.0.0.1'
port = $port
unix_socket_directories = '$dir'
password_encryption = 'scram-sha-256'
max_connections = 100
fsync = off
synchronous_commit = off
full_page_writes = off
shared_buffers = 64MB
max_locks_per_transaction = 256
log_min_messages = warning
EOF
if ! as_pg "$bin/pg_ctl" -D "$dir/data" -l "$dir/server.log" -w -t 60 start >/dev/null; then
    echo "pgcluster: the server did not start; its log:" >&2
    tail -n 20 "$dir/server.log" >&2
    exit 75
fi
cat >"$dir/env" <<EOF
PGC_DIR='$dir'
PGC_BIN='$bin'
PGC_HOST='$dir'
PGC_PORT=$port
PGC_URI='postgresql:///postgres?host=$dir&port=$port&user=postgres'
PGC_TCP_URI='postgresql://127.0.0.1:$port/postgres'
EOF
cat "$dir/env"
