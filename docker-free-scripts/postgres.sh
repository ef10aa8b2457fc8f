#!/usr/bin/env bash
# postgres.sh start|stop|status — a project-local PostgreSQL cluster on 127.0.0.1:$PG_PORT.
# Installs PostgreSQL from Debian's packages when missing. Works as root: initdb/pg_ctl run as the
# `postgres` OS user, and the cluster lives where that user can reach it.
# PG_FAST=1 (tests and benchmarks only) turns off fsync and synchronous commit.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"

cmd="${1:-start}"

if ! PGBIN="$(pg_bindir)"; then
  apt_install postgresql
  PGBIN="$(pg_bindir)" || die "PostgreSQL was installed but initdb was not found"
fi
export PATH="$PGBIN:$PATH"

# Where the cluster lives: .pg in the project, unless the postgres user cannot reach the project
# folder (e.g. a clone under a mode-700 /root): then a folder of its own under /var/tmp.
RUN_AS=()
if [ "$(id -u)" -eq 0 ]; then RUN_AS=(runuser -u postgres --); fi
PGHOME="$ROOT/.pg"
if [ "$(id -u)" -eq 0 ] && ! runuser -u postgres -- test -x "$ROOT" 2>/dev/null; then
  PGHOME="/var/tmp/ripplemark-pg-$(echo "$ROOT" | md5sum | cut -c1-8)-$PG_PORT"
fi
PGDATA="$PGHOME/data"

is_up() { "$PGBIN/pg_isready" -q -h 127.0.0.1 -p "$PG_PORT" >/dev/null 2>&1; }

case "$cmd" in
  start)
    if is_up; then log "PostgreSQL already running on 127.0.0.1:$PG_PORT"; exit 0; fi
    if [ ! -f "$PGDATA/PG_VERSION" ]; then
      log "creating PostgreSQL cluster in $PGDATA"
      mkdir -p "$PGDATA"
      pwfile="$PGHOME/pwfile"; printf '%s\n' "$PG_PASSWORD" > "$pwfile"
      if [ "$(id -u)" -eq 0 ]; then chown -R postgres: "$PGHOME"; fi
      chmod 700 "$PGDATA"
      "${RUN_AS[@]}" "$PGBIN/initdb" -D "$PGDATA" -U "$PG_USER" --pwfile="$pwfile" \
        --auth-host=scram-sha-256 --auth-local=scram-sha-256 -E UTF8 --locale=C.UTF-8 >/dev/null
      rm -f "$pwfile"
      {
        echo "listen_addresses = '127.0.0.1'"
        echo "port = $PG_PORT"
        echo "unix_socket_directories = ''"
        echo "max_connections = 200"
        echo "shared_buffers = 256MB"
        echo "work_mem = 32MB"
        echo "maintenance_work_mem = 256MB"
        echo "max_wal_size = 2GB"
      } >> "$PGDATA/postgresql.conf"
    fi
    opts=""
    if [ "${PG_FAST:-0}" = "1" ]; then opts="-c fsync=off -c synchronous_commit=off -c full_page_writes=off"; fi
    log "starting PostgreSQL on 127.0.0.1:$PG_PORT"
    "${RUN_AS[@]}" "$PGBIN/pg_ctl" -D "$PGDATA" -l "$PGHOME/postgres.log" -o "$opts" -w -t 60 start >/dev/null \
      || { tail -20 "$PGHOME/postgres.log" >&2; die "PostgreSQL did not start"; }
    # Create the application database when it is missing.
    if ! PGPASSWORD="$PG_PASSWORD" "$PGBIN/psql" -h 127.0.0.1 -p "$PG_PORT" -U "$PG_USER" -d postgres -tAc \
        "select 1 from pg_database where datname = '$PG_DB'" | grep -q 1; then
      PGPASSWORD="$PG_PASSWORD" "$PGBIN/createdb" -h 127.0.0.1 -p "$PG_PORT" -U "$PG_USER" "$PG_DB"
    fi
    ;;
  stop)
    if [ -f "$PGDATA/PG_VERSION" ]; then "${RUN_AS[@]}" "$PGBIN/pg_ctl" -D "$PGDATA" -m fast -w stop >/dev/null || true; fi
    ;;
  restart)
    "$0" stop; "$0" start
    ;;
  status)
    if is_up; then echo "up"; else echo "down"; exit 1; fi
    ;;
  psql)
    shift; PGPASSWORD="$PG_PASSWORD" exec "$PGBIN/psql" -h 127.0.0.1 -p "$PG_PORT" -U "$PG_USER" -d "$PG_DB" "$@"
    ;;
  *) die "usage: postgres.sh start|stop|restart|status|psql" ;;
esac
