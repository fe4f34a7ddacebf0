# Shared by scripts/start.sh and scripts/test.sh. Source it; do not run it.
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$ROOT"
say() { echo "[loopwarden] $*"; }

# Install dependencies when node_modules is missing or older than the lock file.
ensure_deps() {
	if [ ! -d node_modules ] || [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
		say "installing dependencies (npm ci)"
		npm ci --no-audit --no-fund --loglevel=error
	fi
}

# AUTH_SECRET: from the environment, or generated once into .data/ (never committed).
ensure_secret() {
	mkdir -p .data
	if [ -z "${AUTH_SECRET:-}" ]; then
		if [ ! -s .data/auth-secret ]; then
			(umask 077; head -c 32 /dev/urandom | base64 >.data/auth-secret)
			say "generated AUTH_SECRET into .data/auth-secret"
		fi
		AUTH_SECRET="$(cat .data/auth-secret)"
		export AUTH_SECRET
	fi
}

# wait_port HOST PORT SECONDS
wait_port() {
	local host=$1 port=$2 secs=${3:-30} i
	for ((i = 0; i < secs * 10; i++)); do
		(exec 3<>"/dev/tcp/$host/$port") 2>/dev/null && return 0
		sleep 0.1
	done
	return 1
}

# kill_pidfile FILE: stop a process we started earlier, if it still runs.
kill_pidfile() {
	local f=$1 pid
	[ -f "$f" ] || return 0
	pid="$(cat "$f" 2>/dev/null || true)"
	if [ -n "$pid" ] && kill -0 "$pid" 2>/dev/null; then
		kill -TERM -- "-$pid" 2>/dev/null || kill -TERM "$pid" 2>/dev/null || true
		for _ in $(seq 1 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
		kill -KILL "$pid" 2>/dev/null || true
	fi
	rm -f "$f"
}

# start_fakes PIDFILE LOGFILE: the local mail and object-storage stand-ins, in the background.
start_fakes() {
	local pidfile=$1 log=$2
	kill_pidfile "$pidfile"
	# From a subshell: stopping it later prints no job-control notice.
	(setsid node_modules/.bin/tsx fakes/run.ts >"$log" 2>&1 & echo $! >"$pidfile")
	# Up to 30 s: with the identity provider's packages a start takes 4-6 s on a loaded machine.
	for _ in $(seq 1 300); do
		grep -q '\[fakes\] ready' "$log" 2>/dev/null && return 0
		kill -0 "$(cat "$pidfile")" 2>/dev/null || break
		sleep 0.1
	done
	cat "$log" >&2
	say "the local stand-ins did not start"
	return 1
}

# load_local_env: npm start's defaults from scripts/local.env (the file the commands beside it read
# through scripts/lib/local-env.ts); a variable already set wins.
load_local_env() {
	local k v
	while IFS='=' read -r k v; do
		case "$k" in '' | \#*) continue ;; esac
		[ -n "${!k+x}" ] || export "$k=$v"
	done <"$ROOT/scripts/local.env"
}
