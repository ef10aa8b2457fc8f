#!/usr/bin/env bash
# The README's start command. On a fresh Debian machine: installs what is missing (PostgreSQL from
# apt, npm packages), starts PostgreSQL and the S3/SMTP fakes on 127.0.0.1, migrates, seeds the
# demo, builds and serves Ripplemark with its background worker. Ctrl-C stops the app and worker.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
cd "$ROOT"

common_setup
log "seeding the demo scenario"
node --import tsx db/seed.ts | sed 's/^/    /'
log "building the app"
npx react-router build > "$DATA_DIR/build.log" 2>&1 || { tail -30 "$DATA_DIR/build.log"; die "build failed"; }

export NODE_ENV=production
# Over plain http on loopback the cookie cannot be Secure; production behind TLS sets an https APP_ORIGIN.
pids=()
cleanup() { for p in "${pids[@]}"; do kill "$p" 2>/dev/null || true; done; }
trap cleanup EXIT INT TERM

if [ -f app/worker.ts ]; then
  # The same flags as the tests and benchmarks (tests/support/worker-flags.ts, WORKER_NODE_FLAGS).
  node --max-old-space-size=1024 --import tsx app/worker.ts > "$DATA_DIR/worker.log" 2>&1 &
  pids+=($!)
fi
# The production server (app/serve.ts): one request process per CPU core, on loopback.
HOST=127.0.0.1 PORT="$APP_PORT" node --import tsx app/serve.ts ./build/server/index.js > "$DATA_DIR/app.log" 2>&1 &
pids+=($!)
wait_port "$APP_PORT" "Ripplemark"

cat <<MSG

  Ripplemark is running at  $APP_ORIGIN
  (app log: $DATA_DIR/app.log · fakes: $DATA_DIR/fakes.log · mailbox API: $MAILBOX_URL/messages)

  Demo sign-in (Marrowby Water Cooperative, invented):
$(node --import tsx -e 'import("./db/demo/scenario.ts").then(m => { for (const p of m.DEMO_PEOPLE) console.log(`    ${p.role.padEnd(11)} ${p.email.padEnd(36)} ${p.password}`) })')

  Press Ctrl-C to stop the app (PostgreSQL and the fakes keep running; docker-free-scripts/stop.sh stops them).
MSG
wait -n "${pids[@]}"
