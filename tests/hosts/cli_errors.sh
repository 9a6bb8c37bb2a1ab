#!/bin/sh
# The error paths of the plumb command: every bad input gets one clear line
# on stderr and the documented exit status, usage errors stop the command
# before any take runs, and a bad take does not stop the good ones.
#
#   sh tests/hosts/cli_errors.sh BUILD_DIR
#
# Needs BUILD_DIR/plumb beside BUILD_DIR/plumb.lv2, and /usr/bin/python3
# with numpy and scipy for the test tone.

BUILD_DIR=${1:?usage: sh tests/hosts/cli_errors.sh BUILD_DIR}
PLUMB=$BUILD_DIR/plumb
PYTHON=/usr/bin/python3

passed=0
failed=0
WORK=$(mktemp -d "${TMPDIR:-/tmp}/plumb-cli-errors.XXXXXX") || exit 1
trap 'rm -rf "$WORK"' EXIT INT TERM

pass() { passed=$((passed + 1)); echo "ok   - $1"; }
fail() { failed=$((failed + 1)); echo "FAIL - $1"; }

# run ARGS...: runs plumb with stdout and stderr captured, sets $status.
run() {
  "$PLUMB" "$@" >"$WORK/stdout" 2>"$WORK/stderr"
  status=$?
}

# expect NAME STATUS PATTERN ARGS...: plumb ARGS... exits with STATUS and
# writes exactly one line on stderr, starting "plumb: " and holding PATTERN
# (a fixed string).
expect() {
  name=$1 wanted=$2 pattern=$3
  shift 3
  run "$@"
  lines=$(wc -l <"$WORK/stderr")
  if [ "$status" -ne "$wanted" ]; then
    fail "$name: exit status $status, expected $wanted"
  elif [ "$lines" -ne 1 ]; then
    fail "$name: $lines lines on stderr, expected 1:"
    sed 's/^/       /' "$WORK/stderr"
  elif ! grep -q '^plumb: ' "$WORK/stderr"; then
    fail "$name: stderr does not start with 'plumb: ': $(cat "$WORK/stderr")"
  elif ! grep -qF -- "$pattern" "$WORK/stderr"; then
    fail "$name: stderr does not mention '$pattern': $(cat "$WORK/stderr")"
  else
    pass "$name"
  fi
}

# A 1 s, 440 Hz tone at -12 dBFS, 48 kHz mono float WAV.
make_tone() {
  "$PYTHON" - "$1" <<'EOF'
import sys
import numpy as np
from scipy.io import wavfile
rate_hz = 48000
t_s = np.arange(rate_hz) / rate_hz
amplitude = 10.0 ** (-12.0 / 20.0)
tone = (amplitude * np.sin(2.0 * np.pi * 440.0 * t_s)).astype(np.float32)
wavfile.write(sys.argv[1], rate_hz, tone)
EOF
}

if [ ! -x "$PLUMB" ]; then
  echo "cli_errors: no executable $PLUMB (run make all first)"
  echo "0 passed, 1 failed"
  exit 1
fi
if ! make_tone "$WORK/good.wav"; then
  echo "cli_errors: could not make the test tone with $PYTHON (numpy, scipy)"
  echo "0 passed, 1 failed"
  exit 1
fi
echo "this is not audio" >"$WORK/x.wav"
printf '0 1 2 3 4 5 6 7 8 9 10\n' >"$WORK/eleven.tuning"
LOGS=$WORK/logs

# ------------------------------------------------------------ input files
expect "missing file" 3 "missing.wav" scan -o "$LOGS" "$WORK/missing.wav"
expect "file that is not audio" 3 "x.wav" scan -o "$LOGS" "$WORK/x.wav"
expect "folder given as a take" 3 "$WORK" scan -o "$LOGS" "$WORK"

# ------------------------------------------------------------ usage errors
# Each comes with the good take, which must not run: no log may appear.
usage() {
  name=$1 pattern=$2
  shift 2
  rm -rf "$WORK/usage-logs"
  expect "$name" 2 "$pattern" scan -o "$WORK/usage-logs" "$@" "$WORK/good.wav"
  if [ -e "$WORK/usage-logs" ]; then
    fail "$name: the log folder was made although the command stopped"
  fi
}
usage "unknown option" "--frobnicate" --frobnicate
usage "unknown short option" "-q" -q
usage "tolerance 0" "outside 1..50" --tolerance 0
usage "tolerance 51" "outside 1..50" -t 51
usage "tolerance not a number" "'ten'" --tolerance ten
usage "tolerance with trailing text" "'10x'" --tolerance 10x
usage "tolerance nan" "'nan'" --tolerance nan
usage "tolerance in exponent form" "'1e1'" --tolerance 1e1
usage "tolerance with a decimal comma" "'10,5'" --tolerance 10,5
usage "block 0" "outside 1..8192" --block 0
usage "block 8193" "outside 1..8192" --block 8193
usage "block not whole" "'512.5'" --block 512.5
usage "block empty" "--block" --block ""
usage "jobs 0" "--jobs" -j 0
usage "reference 379.9" "outside 380..480" -r 379.9
usage "unknown temperament" "'equalish'" --temperament equalish
usage "tuning file with 11 offsets" "eleven.tuning" --temperament "$WORK/eleven.tuning"
usage "unknown tonic" "'H'" --tonic H
usage "lowest not a note" "'E#x'" --lowest E#x
usage "lowest below A0" "outside 21..108" --lowest C0
usage "empty range" "above" --lowest C5 --highest C4
usage "min-note 10" "outside 20..1000" --min-note 10
expect "option without its value" 2 "--tolerance needs a value" \
  scan -o "$WORK/usage-logs" "$WORK/good.wav" --tolerance
expect "no FILE" 2 "FILE" scan -o "$WORK/usage-logs"
expect "unknown command" 2 "'frobnicate'" frobnicate

# ------------------------------------------------------------ log folder
expect "log folder under a file" 3 "--out" scan -o "$WORK/x.wav/logs" "$WORK/good.wav"

# ------------------------------------------------------------ report
expect "report of a missing folder" 3 "nowhere" report "$WORK/nowhere"
mkdir "$WORK/no-logs"
expect "report of a folder without logs" 3 "no-logs" report "$WORK/no-logs"

# ------------------------------------------------------------ one bad take
expect "good take and missing take" 3 "missing.wav" \
  scan -o "$LOGS" "$WORK/good.wav" "$WORK/missing.wav"
log=$LOGS/good.notes.csv
if [ -f "$log" ] && head -n 1 "$log" | grep -q '^index,start_s,end_s,' &&
  [ "$(wc -l <"$log")" -ge 2 ]; then
  pass "the good take's log is written, with its notes"
else
  fail "the good take's log $log is missing, or has no header or no notes"
fi
if grep -q '^good ' "$WORK/stdout"; then
  pass "the summary lists the good take"
else
  fail "the summary does not list the good take"
fi

# ------------------------------------------------------------ help, version
run --help
if [ "$status" -eq 0 ] && grep -q 'plumb scan' "$WORK/stdout" && [ ! -s "$WORK/stderr" ]; then
  pass "--help"
else
  fail "--help: status $status, or no usage on stdout, or text on stderr"
fi
run --version
if [ "$status" -eq 0 ] && grep -q '^plumb [0-9]' "$WORK/stdout"; then
  pass "--version"
else
  fail "--version: status $status, stdout '$(cat "$WORK/stdout")'"
fi

echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
