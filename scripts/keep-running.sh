#!/usr/bin/env bash
# keep-running.sh NAME COMMAND...: run COMMAND and start it again whenever it exits (a crash, kill -9, the
# out-of-memory killer), after a backoff that doubles from LW_RESTART_MIN_SECONDS (1) up to
# LW_RESTART_MAX_SECONDS (30) and starts over once a run lasted LW_RESTART_RESET_SECONDS (60). TERM or
# INT to this script stops COMMAND and ends the loop (npm start's cleanup does that). Used by
# scripts/start.sh for the analysis worker; in a deployment the process manager does this job.
set -uo pipefail
name=$1
shift
min=${LW_RESTART_MIN_SECONDS:-1}
max=${LW_RESTART_MAX_SECONDS:-30}
reset=${LW_RESTART_RESET_SECONDS:-60}
delay=$min
child=""
stopping=0
stop() {
	stopping=1
	if [ -n "$child" ] && kill -0 "$child" 2>/dev/null; then
		kill -TERM "$child" 2>/dev/null || true
		wait "$child" 2>/dev/null || true
	fi
	exit 0
}
trap stop TERM INT
while :; do
	started=$(date +%s)
	"$@" &
	child=$!
	echo "[keep-running] $name started (pid $child)"
	wait "$child"
	rc=$?
	[ "$stopping" = 1 ] && exit 0
	ran=$(($(date +%s) - started))
	if [ "$ran" -ge "$reset" ]; then delay=$min; fi
	echo "[keep-running] $name exited with code $rc after ${ran} s; starting it again in ${delay} s"
	sleep "$delay" &
	wait $! 2>/dev/null || true
	[ "$stopping" = 1 ] && exit 0
	delay=$((delay * 2))
	if [ "$delay" -gt "$max" ]; then delay=$max; fi
done
