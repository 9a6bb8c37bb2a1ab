#!/bin/sh
# The command and the plugin refuse what would lose or hide the user's
# data, with one clear line:
#   - a tuning file holding an offset beyond +-600 cents (601, 1e308) is a
#     usage error: exit status 2, one line naming the offset and the
#     limit, and no take runs (docs/command.md, docs/tuning.md);
#   - a symbolic link planted at a log file's name is never followed: the
#     file it points to stays byte for byte, and the take is logged under
#     STEM-2 (docs/log-format.md, "File names");
#   - run.json names the take's source file (absolute) and channel
#     (1-based), so two takes called x from two folders can be told apart.
#
#   sh tests/hosts/cli_guard.sh BUILD_DIR

BUILD_DIR=${1:?usage: sh tests/hosts/cli_guard.sh BUILD_DIR}
ROOT=$(cd "$(dirname "$0")/../.." && pwd) || exit 2
. "$ROOT/tests/lib/checks.sh"
PLUMB=$(cd "$BUILD_DIR" && pwd)/plumb
PYTHON=/usr/bin/python3

WORK=$(mktemp -d "${TMPDIR:-/tmp}/plumb-cli-guard.XXXXXX") || exit 2
trap 'rm -rf "$WORK"' EXIT INT TERM

if [ ! -x "$PLUMB" ]; then
  fail "cli_guard: no executable $PLUMB (run make all first)"
  finish
fi

# tone FILE CHANNELS: 1 s of a 440 Hz sine at -12 dBFS on every channel
# (an exact synthetic signal), 48 kHz float WAV.
tone() {
  "$PYTHON" - "$1" "$2" <<'EOF'
import sys
import numpy as np
from scipy.io import wavfile
rate_hz = 48000
t_s = np.arange(rate_hz) / rate_hz
x = (10.0 ** (-12.0 / 20.0) * np.sin(2.0 * np.pi * 440.0 * t_s)).astype(np.float32)
channels = int(sys.argv[2])
wavfile.write(sys.argv[1], rate_hz, x if channels == 1 else np.stack([x] * channels, axis=1))
EOF
}
if ! tone "$WORK/take.wav" 1; then
  fail "cli_guard: could not make the test tone with $PYTHON (numpy, scipy)"
  finish
fi

# one_line_usage NAME PATTERN ARGS...: exit status 2, one line on stderr
# holding PATTERN, and no log folder made.
one_line_usage() {
  name=$1 pattern=$2
  shift 2
  rm -rf "$WORK/usage-logs"
  "$PLUMB" scan -o "$WORK/usage-logs" "$@" "$WORK/take.wav" >"$WORK/out" 2>"$WORK/err"
  status=$?
  lines=$(wc -l <"$WORK/err")
  if [ "$status" -ne 2 ]; then
    fail "$name: exit status $status, expected 2"
  elif [ "$lines" -ne 1 ] || ! grep -qF -- "$pattern" "$WORK/err"; then
    fail "$name: stderr is not one line holding '$pattern':"
    sed 's/^/    # /' "$WORK/err"
  elif [ -e "$WORK/usage-logs" ]; then
    fail "$name: a log folder was made although the command stopped"
  else
    pass "$name"
  fi
}

# ------------------------------------------------------------ tuning files
printf '0 0 0 0 0 0 0 0 0 0 0 601\n' >"$WORK/601.tuning"
printf '# huge\n1e308 0 0 0 0 0 0 0 0 0 0 0\n' >"$WORK/huge.tuning"
printf '0 0 0 0 0 -600.5 0 0 0 0 0 0\n' >"$WORK/low.tuning"
printf '600 -600 0 0 0 0 0 0 0 0 0 0\n' >"$WORK/edge.tuning"
one_line_usage "tuning offset 601" "offset 601 cents" --temperament "$WORK/601.tuning"
one_line_usage "tuning offset limit named" "+-600 cents" --temperament "$WORK/601.tuning"
one_line_usage "tuning offset 1e308" "offset 1e+308 cents" --temperament "$WORK/huge.tuning"
one_line_usage "tuning offset -600.5" "offset -600.5 cents" --temperament "$WORK/low.tuning"

edge_ok() {
  "$PLUMB" scan -o "$WORK/edge" --temperament "$WORK/edge.tuning" "$WORK/take.wav" ||
    return 1
  grep -q '"temperament": "custom"' "$WORK/edge/take.run.json" &&
    grep -q '"custom_offsets_cents": \[600.00, -600.00, 0.00' "$WORK/edge/take.run.json"
}
check "tuning offsets of exactly +-600 cents are used" edge_ok

# ------------------------------------------------------------ symbolic links
link_safe() {
  mkdir "$WORK/linked" && printf 'precious\nbytes\001\n' >"$WORK/victim.txt" &&
    cp "$WORK/victim.txt" "$WORK/victim.orig" &&
    ln -s ../victim.txt "$WORK/linked/take.notes.csv" || return 1
  "$PLUMB" scan -o "$WORK/linked" "$WORK/take.wav" >"$WORK/out" 2>"$WORK/err"
  cmp "$WORK/victim.txt" "$WORK/victim.orig" || { echo "victim changed"; return 1; }
  [ -L "$WORK/linked/take.notes.csv" ] || { echo "the link was replaced"; return 1; }
  grep -q '^0,' "$WORK/linked/take-2.notes.csv" || { echo "no take-2 rows"; return 1; }
  grep -q 'take.notes.csv is not a regular file' "$WORK/err" ||
    { echo "no line about the link:"; cat "$WORK/err"; return 1; }
}
check "a link at the log's name is not followed" link_safe

# ------------------------------------------------------------ the source
source_named() {
  mkdir -p "$WORK/a" "$WORK/b" && tone "$WORK/a/x.wav" 1 && tone "$WORK/b/x.wav" 2 ||
    return 1
  (cd "$WORK" && "$PLUMB" scan -o "$WORK/src" a/x.wav b/x.wav) >/dev/null || return 1
  a_dir=$(cd "$WORK/a" && pwd -P) b_dir=$(cd "$WORK/b" && pwd -P)
  grep -qF "\"source_file\": \"$a_dir/x.wav\"," "$WORK/src/x.run.json" &&
    grep -qF '"source_channel": 1,' "$WORK/src/x.run.json" &&
    grep -qF "\"source_file\": \"$b_dir/x.wav\"," "$WORK/src/x-ch2.run.json" &&
    grep -qF '"source_channel": 2,' "$WORK/src/x-ch2.run.json" &&
    grep -q '"run_id": "[0-9]\{8\}T[0-9]\{6\}\.[0-9]\{6\}Z-[0-9]*-[0-9]*",' \
      "$WORK/src/x.run.json" || { ls "$WORK/src"; cat "$WORK/src/"*.run.json; return 1; }
}
check "run.json names the source file and channel" source_named

finish
