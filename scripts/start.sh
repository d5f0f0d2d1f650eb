#!/usr/bin/env bash
# npm start: installs what is missing, starts a private MariaDB (unless DATABASE_URL is given) and the
# mail catcher, applies migrations, loads demo data, builds and serves the app. Ctrl-C stops it all.
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$PWD
# shellcheck source=scripts/lib.sh
. scripts/lib.sh

START_T0=$(now_s)
PORT=${PORT:-3000}
HOST=${HOST:-127.0.0.1}
ORIGIN=${ORIGIN:-http://127.0.0.1:$PORT}
DB_PORT=${DB_PORT:-3307}
DB_PASSWORD=${DB_PASSWORD:-shellgate-local}
SMTP_PORT=${SMTP_PORT:-2525}
DATA_DIR=$ROOT/.data
MAILBOX_DIR=${MAILBOX_DIR:-$DATA_DIR/mailbox}

DB_PID=
SMTP_PID=
APP_PID=
cleanup() {
	trap '' INT TERM
	trap - EXIT
	echo
	log "stopping"
	# adapter-node exits once its event loop drains; an app holding timers gets 10 s.
	stop_pid "$APP_PID" app 10
	stop_pid "$SMTP_PID" "mail catcher"
	db_stop
}
trap cleanup EXIT
trap 'exit 130' INT
trap 'exit 143' TERM

ensure_npm_packages

mkdir -p "$DATA_DIR" "$MAILBOX_DIR"
if [ -n "${DATABASE_URL:-}" ]; then
	log "using the database at DATABASE_URL as is (no private MariaDB)"
else
	ensure_mariadb
	DB_DIR=$DATA_DIR/mariadb
	DB_SOCK=$(short_socket_path "$DATA_DIR/mariadb.sock")
	db_init "$DB_DIR"
	db_start "$DB_DIR" "$DB_SOCK" "$DB_PORT"
	db_create "$DB_SOCK" shellgate shellgate "$DB_PASSWORD"
	DATABASE_URL="mysql://shellgate:$(url_encode "$DB_PASSWORD")@127.0.0.1:$DB_PORT/shellgate"
fi

export DATABASE_URL SMTP_PORT MAILBOX_DIR
export SMTP_HOST=127.0.0.1
export SHELLGATE_DATA_DIR=$DATA_DIR
export SHELLGATE_DEV_MAILBOX=${SHELLGATE_DEV_MAILBOX:-1}

port_open "$SMTP_PORT" && die "port $SMTP_PORT is already in use; set SMTP_PORT to a free port"
node --import tsx scripts/fake-smtp.ts </dev/null &
SMTP_PID=$!
wait_port "$SMTP_PORT" "$SMTP_PID" "mail catcher" || die "the mail catcher did not start"

run_ts scripts/migrate.ts
if [ -f scripts/seed.ts ]; then
	run_ts scripts/seed.ts
else
	log "scripts/seed.ts not there yet; no demo data loaded"
fi

# Rebuild unless build/ is newer than every input of the build.
if [ -f build/handler.js ] && [ -z "$(find src static package-lock.json svelte.config.js vite.config.ts -newer build/handler.js -print -quit 2>/dev/null)" ]; then
	log "build/ is up to date"
else
	BUILD_T0=$(now_s)
	log "building the app (vite build)"
	vite_build --logLevel error
	log "build took $(since "$BUILD_T0") s"
fi

port_open "$PORT" && die "port $PORT is already in use; set PORT to a free port"
# The app enforces its own upload limit (UPLOAD_LIMIT_MB) while it streams; adapter-node's own cap is lifted.
BODY_SIZE_LIMIT=${BODY_SIZE_LIMIT:-Infinity} PORT=$PORT HOST=$HOST ORIGIN=$ORIGIN node build </dev/null &
APP_PID=$!
wait_port "$PORT" "$APP_PID" app 60 || die "the app did not start"

cat <<EOF

  Shellgate is running at $ORIGIN   (ready in $(since "$START_T0") s)

  Demo sign-ins, password shellgate-demo:
    engineer@example.test   CFD pre-processing engineer
    designer@example.test   designer
    reviewer@example.test   reviewer
    admin@example.test      administrator

  Mail the app sends is caught in $MAILBOX_DIR and shown at $ORIGIN/dev/mailbox
  Press Ctrl-C to stop the app, the mail catcher and the database.

EOF

# Runs until the app exits or a signal arrives (the traps then stop everything). npm passes a
# SIGTERM only to its `sh -c`, not to this script, so a vanished parent also means stop.
PARENT_PID=$PPID
while kill -0 "$APP_PID" 2>/dev/null; do
	kill -0 "$PARENT_PID" 2>/dev/null || { warn "the parent process is gone"; exit 143; }
	sleep 1 &
	wait $! || true
done
set +e
wait "$APP_PID"
rc=$?
set -e
APP_PID=
warn "the app exited with status $rc"
exit "$rc"
