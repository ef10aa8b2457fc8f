#!/usr/bin/env bash
# Stops the fakes and PostgreSQL started by start.sh / test.sh.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
if [ -f "$DATA_DIR/fakes.pid" ]; then kill "$(cat "$DATA_DIR/fakes.pid")" 2>/dev/null || true; rm -f "$DATA_DIR/fakes.pid"; fi
"$ROOT/docker-free-scripts/postgres.sh" stop
log "stopped"
