#!/usr/bin/env bash
# npm test: installs what is missing, starts a private PostgreSQL, the local stand-ins and the built
# app (all separate from npm start's), runs the static checks and every test (unit, integration,
# end-to-end in Chromium), stops what it started and ends with one line "N passed, M failed".
#   npm test -- tests/unit/stability          run only some test files (vitest filters)
#   LW_TEST_SLOT=2 npm test                   a second, independent set of ports and folders
#   LW_SKIP_STATIC=1 npm test                 skip svelte-check, eslint and prettier
set -uo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
t0=$(date +%s)

SLOT="${LW_TEST_SLOT:-0}"
TEST_DATA="$ROOT/.data/test-$SLOT"
mkdir -p "$TEST_DATA"
export TMPDIR="$TEST_DATA/tmp"
mkdir -p "$TMPDIR"

ensure_deps || { echo "0 passed, 1 failed"; exit 1; }

# Chromium for the end-to-end tests (Debian's package; never a downloaded browser).
if [ ! -x /usr/bin/chromium ]; then
	if [ "$(id -u)" = 0 ]; then
		say "installing Debian's chromium for the browser tests"
		DEBIAN_FRONTEND=noninteractive apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium >/dev/null
	else
		say "chromium is missing and this is not root: install Debian's chromium package"
	fi
fi

# Debian's poppler-utils (pdftotext, pdftoppm) and unzip for the data package tests (tests/integration/packages).
if ! command -v pdftotext >/dev/null || ! command -v pdftoppm >/dev/null || ! command -v unzip >/dev/null; then
	if [ "$(id -u)" = 0 ]; then
		say "installing Debian's poppler-utils and unzip for the data package tests"
		DEBIAN_FRONTEND=noninteractive apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq poppler-utils unzip >/dev/null
	else
		say "poppler-utils or unzip is missing and this is not root: install Debian's packages (the data package tests fail without them)"
	fi
fi

# xmllint (Debian's libxml2-utils) validates ReqIF exports against the vendored schema (tests/reqif).
if ! command -v xmllint >/dev/null 2>&1; then
	if [ "$(id -u)" = 0 ]; then
		say "installing Debian's libxml2-utils (xmllint) for the ReqIF schema checks"
		DEBIAN_FRONTEND=noninteractive apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq libxml2-utils >/dev/null
	else
		say "xmllint is missing and this is not root: install Debian's libxml2-utils (the ReqIF tests fail without it)"
	fi
fi

# Debian's Python libraries for the exact reference run (tests/reference): sympy, mpmath, scipy, and gmpy2,
# which sympy uses for faster big-number arithmetic (same answers). Debian's /usr/bin/python3, never pip.
if ! /usr/bin/python3 -c 'import sympy, mpmath, scipy, gmpy2' 2>/dev/null; then
	if [ "$(id -u)" = 0 ]; then
		say "installing Debian's python3-sympy, python3-mpmath, python3-scipy, python3-gmpy2 for the reference run"
		DEBIAN_FRONTEND=noninteractive apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq python3 python3-sympy python3-mpmath python3-scipy python3-gmpy2 >/dev/null
	else
		say "python3-sympy, python3-mpmath, python3-scipy or python3-gmpy2 is missing and this is not root: install Debian's packages (the reference test fails without the first three)"
	fi
fi

export PG_NAME="pg-test-$SLOT" PG_PORT=$((54339 + SLOT * 10)) PG_DB=loopwarden_test
export PG_EXTRA_OPTS="-c fsync=off -c synchronous_commit=off -c full_page_writes=off"
export PORT=$((4174 + SLOT * 10)) HOST=127.0.0.1
export ORIGIN="http://127.0.0.1:$PORT" LW_BASE_URL="http://127.0.0.1:$PORT"
export FAKE_DIR="$TEST_DATA/fakes" FAKE_SMTP_PORT=$((2526 + SLOT * 10)) FAKE_S3_PORT=$((4570 + SLOT * 10))
export S3_BUCKET=loopwarden-test S3_ENDPOINT="http://127.0.0.1:$FAKE_S3_PORT" S3_ACCESS_KEY_ID=S3RVER S3_SECRET_ACCESS_KEY=S3RVER
export SMTP_URL="smtp://127.0.0.1:$FAKE_SMTP_PORT" MAIL_FAKE_DIR="$FAKE_DIR/mail"
# Single sign-on through the identity-provider stand-in (fakes/oidc.ts), as npm start configures it.
export FAKE_OIDC_PORT=$((4601 + SLOT * 10))
export OIDC_ISSUER="http://127.0.0.1:$FAKE_OIDC_PORT" OIDC_CLIENT_ID=loopwarden OIDC_CLIENT_SECRET=loopwarden-demo-client-secret
export OIDC_NAME="Demo identity provider"
# Evidence uploads are streamed and limited by the app (EVIDENCE_MAX_BYTES), not by the adapter's 512 KiB
# default. Tests run with a 12 MiB limit so the over-size case stays quick; the 200 MiB default is checked
# by tests/unit/evidence/config.test.ts and exercised by npm run bench.
export BODY_SIZE_LIMIT=Infinity EVIDENCE_MAX_BYTES=12582912
# Requirement imports are held in memory; 4 MiB in tests keeps the over-size case quick (default 64 MiB).
export IMPORT_MAX_BYTES=4194304
export AUTH_SECRET="test-secret-$(head -c 16 /dev/urandom | base64 | tr -dc A-Za-z0-9)" AUTH_TRUST_HOST=true
export DEMO_MODE=true
# Loose limits in tests that are not about them; the rate-limit test sets its own addresses.
export SIGNIN_MAX_FAILURES=5
# tests/factories createRun inserts runs without a queue job (a worker never takes them), and the suite runs
# longer than the health check's 5 minutes: the stalled-queue threshold is an hour here.
export LW_QUEUE_STALE_SECONDS=3600
# Workers beat every second here, so the watched-worker test sees a killed one die within seconds.
export LW_WORKER_HEARTBEAT_SECONDS=1
export BUILD_DIR="$TEST_DATA/build"
export LW_TEST_DATA="$TEST_DATA"

pids_file="$TEST_DATA/pids"
cleanup() {
	trap - EXIT INT TERM
	kill_pidfile "$TEST_DATA/app.pid"
	kill_pidfile "$TEST_DATA/worker.pid"
	kill_pidfile "$TEST_DATA/fakes.pid"
	bash scripts/db.sh stop >/dev/null 2>&1 || true
}
trap cleanup EXIT INT TERM

fail_setup() { say "set-up failed: $*"; echo "0 passed, 1 failed"; exit 1; }

bash scripts/db.sh start || fail_setup "PostgreSQL"
export DATABASE_URL="$(bash scripts/db.sh url)"
# A clean database every run: tests never see demo data or an earlier run's rows.
node_modules/.bin/tsx scripts/reset-db.ts || fail_setup "database reset"
npm run --silent migrate >/dev/null || fail_setup "migrations"

rm -rf "$FAKE_DIR"
start_fakes "$TEST_DATA/fakes.pid" "$TEST_DATA/fakes.log" || fail_setup "local stand-ins"

say "building the app"
node_modules/.bin/svelte-kit sync >/dev/null
LW_KIT_OUT_DIR="$TEST_DATA/kit" node_modules/.bin/vite build --logLevel error >"$TEST_DATA/build.log" 2>&1 || { cat "$TEST_DATA/build.log"; fail_setup "build"; }
# Started from a subshell, so that stopping them later prints no job-control notice.
(setsid node scripts/serve.js >"$TEST_DATA/app.log" 2>&1 & echo $! >"$TEST_DATA/app.pid")
wait_port 127.0.0.1 "$PORT" 30 || { cat "$TEST_DATA/app.log"; fail_setup "app server"; }
# The analysis worker beside the app, as npm start runs it.
(setsid node_modules/.bin/tsx scripts/worker.ts >"$TEST_DATA/worker.log" 2>&1 & echo $! >"$TEST_DATA/worker.pid")

static_pass=0
static_fail=0
if [ "${LW_SKIP_STATIC:-0}" != 1 ] && [ $# -eq 0 ]; then
	say "static checks"
	if npm run --silent check >"$TEST_DATA/check.log" 2>&1; then static_pass=$((static_pass + 1)); else
		static_fail=$((static_fail + 1)); tail -n 40 "$TEST_DATA/check.log"; say "FAILED: npm run check"; fi
	if npm run --silent lint >"$TEST_DATA/lint.log" 2>&1; then static_pass=$((static_pass + 1)); else
		static_fail=$((static_fail + 1)); tail -n 40 "$TEST_DATA/lint.log"; say "FAILED: npm run lint"; fi
fi

say "running tests"
report="$TEST_DATA/vitest.json"
rm -f "$report"
node_modules/.bin/vitest run --reporter=default --reporter=json --outputFile.json="$report" "$@"
vitest_rc=$?

read -r vp vf < <(node -e '
	const fs = require("fs");
	try { const r = JSON.parse(fs.readFileSync(process.argv[1], "utf8"));
	  // Files that failed to load count as failures too.
	  const broken = (r.testResults || []).filter((f) => f.status === "failed" && (!f.assertionResults || f.assertionResults.length === 0)).length;
	  console.log(r.numPassedTests, r.numFailedTests + broken);
	} catch { console.log(0, 1); }' "$report")
[ "$vitest_rc" != 0 ] && [ "$vf" = 0 ] && vf=1

passed=$((vp + static_pass))
failed=$((vf + static_fail))
cleanup
say "done in $(($(date +%s) - t0)) s"
# The summary is the last line of the run.
echo "$passed passed, $failed failed"
[ "$failed" = 0 ]
