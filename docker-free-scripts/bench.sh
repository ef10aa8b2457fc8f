#!/usr/bin/env bash
# bench.sh NAME — runs tests/bench/NAME.bench.ts after the same set-up as the test command
# (PostgreSQL and the fakes on loopback, migrations). Benchmarks use databases of their own.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
cd "$ROOT"
name="${1:?usage: bench.sh NAME}"
shift || true
export PG_FAST="${PG_FAST:-0}"
common_setup >/dev/null
export PGBIN="$(pg_bindir)"
exec node --import tsx "tests/bench/$name.bench.ts" "$@"
