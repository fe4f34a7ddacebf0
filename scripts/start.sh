#!/usr/bin/env bash
# npm start: everything a fresh clone needs, then the app on http://127.0.0.1:4173 (PORT overrides).
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
t0=$(date +%s)

ensure_deps
ensure_secret

export PORT="${PORT:-4173}"
export HOST="${HOST:-127.0.0.1}"
export ORIGIN="${ORIGIN:-http://$HOST:$PORT}"
export AUTH_TRUST_HOST="${AUTH_TRUST_HOST:-true}"
# PG_PORT, PG_NAME, FAKE_SMTP_PORT, FAKE_S3_PORT, FAKE_OIDC_PORT, S3_BUCKET, DEMO_MODE (scripts/local.env).
load_local_env
export FAKE_DIR="${FAKE_DIR:-$ROOT/.data/fakes}"
# Evidence uploads are streamed and limited by the app itself (EVIDENCE_MAX_BYTES, default 200 MiB).
export BODY_SIZE_LIMIT="${BODY_SIZE_LIMIT:-Infinity}"

if (exec 3<>"/dev/tcp/$HOST/$PORT") 2>/dev/null; then
	say "something already listens on $HOST:$PORT (another npm start?); stop it or choose PORT=..."
	exit 1
fi

bash scripts/db.sh start
export DATABASE_URL="${DATABASE_URL:-$(bash scripts/db.sh url)}"

if [ -z "${SMTP_URL:-}" ]; then
	start_fakes .data/fakes.pid .data/fakes.log
	export SMTP_URL="smtp://127.0.0.1:$FAKE_SMTP_PORT"
	export MAIL_FAKE_DIR="$FAKE_DIR/mail"
	export S3_ENDPOINT="${S3_ENDPOINT:-http://127.0.0.1:$FAKE_S3_PORT}"
	export S3_ACCESS_KEY_ID="${S3_ACCESS_KEY_ID:-S3RVER}" S3_SECRET_ACCESS_KEY="${S3_SECRET_ACCESS_KEY:-S3RVER}"
	# Single sign-on through the identity-provider stand-in, unless a real provider is configured.
	if [ -z "${OIDC_ISSUER:-}" ]; then
		export OIDC_ISSUER="http://127.0.0.1:$FAKE_OIDC_PORT" OIDC_CLIENT_ID=loopwarden
		export OIDC_CLIENT_SECRET=loopwarden-demo-client-secret OIDC_NAME="${OIDC_NAME:-Demo identity provider}"
	fi
fi

say "migrating"
npm run --silent migrate
if [ "$DEMO_MODE" = true ]; then npm run --silent seed; fi

say "building"
node_modules/.bin/vite build --logLevel error >.data/build.log 2>&1 || { cat .data/build.log; exit 1; }

cleanup() {
	trap - EXIT INT TERM
	say "stopping"
	# The app first (it finishes its requests and closes its pool), then what it depends on.
	if [ -n "${app:-}" ] && kill -0 "$app" 2>/dev/null; then
		kill -TERM "$app" 2>/dev/null || true
		for _ in $(seq 1 100); do kill -0 "$app" 2>/dev/null || break; sleep 0.1; done
	fi
	kill_pidfile .data/worker.pid
	kill_pidfile .data/fakes.pid
	bash scripts/db.sh stop || true
}
trap cleanup EXIT INT TERM

if [ -f scripts/worker.ts ]; then
	kill_pidfile .data/worker.pid
	# Restarted with backoff whenever it exits (scripts/keep-running.sh); the health check says when runs
	# wait with no live worker.
	setsid bash scripts/keep-running.sh worker node --import tsx scripts/worker.ts >>.data/worker.log 2>&1 &
	echo $! >.data/worker.pid
fi

rm -f .data/serve.ready
SERVE_READY_FILE="$ROOT/.data/serve.ready" node scripts/serve.js &
app=$!
wait_port "$HOST" "$PORT" 30 && kill -0 "$app" 2>/dev/null || { say "the app did not start"; exit 1; }
# Every server process is listening (serve.js printed its one "Listening on" line) before the banner.
for _ in $(seq 1 100); do [ -f .data/serve.ready ] || [ "${WEB_CONCURRENCY:-}" = 1 ] && break; sleep 0.1; done
cat <<TXT

  Loopwarden is running at $ORIGIN   (ready in $(($(date +%s) - t0)) s; Ctrl-C stops it)

  Demo sign-ins (password: loopwarden-demo), project VX7:
    admin@demo.loopwarden.test       site administrator
    engineer@demo.loopwarden.test    engineer  (writes requirements)
    analyst@demo.loopwarden.test     analyst   (models and analyses)
    certifier@demo.loopwarden.test   certifier (reviews evidence, baselines, exports)
    manager@demo.loopwarden.test     viewer    (reads; coverage)

  Mail sent by the app lands in the local stand-in: Administration › Mail (demo mode).

  Single sign-on: "Continue with $OIDC_NAME" on the sign-in page. At the identity-provider
  stand-in (password: loopwarden-demo; groups vx7-* map to roles in VX7):
    rhea.ostrander@idp.demo.loopwarden.test   group vx7-engineering   -> engineer
    tomas.kell@idp.demo.loopwarden.test       group vx7-analysis       -> analyst
    ines.varga@idp.demo.loopwarden.test       group vx7-certification  -> certifier
    noor.blake@idp.demo.loopwarden.test       group vx7-readers        -> viewer
    pavel.ruud@idp.demo.loopwarden.test       no mapped group          -> an account without a project

TXT
wait $app
