#!/usr/bin/env bash
# The README's test command. Does the same set-up as start.sh (installs what is missing, starts
# PostgreSQL and the fakes on 127.0.0.1, migrates), installs Debian's chromium for the browser
# tests when missing, then typechecks, builds and runs every test: unit, integration against the
# real PostgreSQL, and browser journeys. Exits non-zero on any failure.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
cd "$ROOT"
started=$(date +%s)

# Test data needs no durability: when this script starts the cluster, it runs without fsync.
export PG_FAST=1
command -v chromium >/dev/null 2>&1 || apt_install chromium
common_setup

log "typecheck"
npx react-router typegen
npx tsc
log "build"
npx react-router build > "$DATA_DIR/build.log" 2>&1 || { tail -30 "$DATA_DIR/build.log"; die "build failed"; }

log "unit and integration tests"
npx vitest run --project unit --project integration
log "browser tests (chromium)"
npx vitest run --project e2e

log "all tests passed in $(( $(date +%s) - started )) s"
