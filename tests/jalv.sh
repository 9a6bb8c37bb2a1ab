#!/bin/sh
# jalv on jackd2's dummy driver (shared/HOSTS.md): the plugin loads in a
# real-time host, answers `controls` and `monitors`, and writes its log.
# Run as: sh tests/jalv.sh BUILD_DIR. Prints "ok - ..." / "not ok - ...",
# then "N passed, N failed".
build=$(cd "$1" && pwd) || exit 2
passed=0
failed=0
check() { # check NAME COMMAND...
  name=$1
  shift
  if "$@"; then passed=$((passed + 1)); echo "ok - $name"
  else failed=$((failed + 1)); echo "not ok - $name"; fi
}

work=$(mktemp -d "${TMPDIR:-/tmp}/plumb-jalv.XXXXXX") || exit 2
jackd_pid=""
cleanup() {
  [ -n "$jackd_pid" ] && kill "$jackd_pid" 2>/dev/null
  rm -rf "$work"
}
trap cleanup EXIT
trap 'exit 130' INT TERM

# A server of our own, so a JACK server that is already running is left alone.
JACK_DEFAULT_SERVER="plumb-test-$$"
export JACK_DEFAULT_SERVER
mkdir -p "$work/lv2" "$work/logs"
ln -s "$build/plumb.lv2" "$work/lv2/plumb.lv2"

jackd --no-realtime -d dummy -r 48000 -p 1024 >"$work/jackd.log" 2>&1 &
jackd_pid=$!
tries=0
until jack_lsp >/dev/null 2>&1 || [ "$tries" -ge 50 ]; do
  sleep 0.1
  tries=$((tries + 1))
done
jack_running() { jack_lsp >/dev/null 2>&1; }
check "jackd's dummy driver starts" jack_running

# jalv reads commands on stdin, which must stay open while it runs.
(sleep 3; echo controls; sleep 1; echo monitors; sleep 1) |
  LV2_PATH="$work/lv2" PLUMB_LOG_DIR="$work/logs" timeout 20 \
    jalv urn:plumb:intonation >"$work/jalv.out" 2>&1
status=$?
check "jalv runs the plugin and exits cleanly (status $status)" [ "$status" -eq 0 ]
check "jalv reports the plugin at 48 kHz" grep -q "Sample rate: *48000" "$work/jalv.out"
# docs/ports.md: the defaults of the control inputs
check "controls: reference = 440" grep -q "^> *reference = 440\.0*\|^reference = 440\.0*" "$work/jalv.out"
check "controls: tolerance = 10" grep -q "tolerance = 10\.0*" "$work/jalv.out"
check "monitors: latency = 0 (audio is not delayed)" grep -q "latency = 0\.0*" "$work/jalv.out"
check "monitors: log_ok = 1" grep -q "log_ok = 1\.0*" "$work/jalv.out"

log=$(ls "$work"/logs/*.notes.csv 2>/dev/null | head -n 1)
check "the log is written through \$PLUMB_LOG_DIR" [ -n "$log" ]
# The notes.csv columns as docs/log-format.md lists them, comma-joined.
documented=$(sed -n '/^## notes\.csv/,/^### /s/^| `\([a-z0-9_]*\)` |.*/\1/p' \
  "$(dirname "$0")/../docs/log-format.md" | paste -s -d , -)
header=$(head -n 1 "$log" 2>/dev/null)
documented_header() { [ -n "$documented" ] && [ "$header" = "$documented" ]; }
check "the log starts with the documented header" documented_header
check "run.json is written beside it" [ -f "${log%.notes.csv}.run.json" ]

if [ "$failed" -ne 0 ]; then
  echo "--- jalv said:"; cat "$work/jalv.out"
  echo "--- jackd said:"; cat "$work/jackd.log"
fi
echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
