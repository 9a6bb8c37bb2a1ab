#!/bin/sh
# The plugin in real hosts: lv2file (Debian package lv2file) and the plumb
# command, on a take made here with a known truth.
#
#   sh tests/hosts/hosts.sh BUILD_DIR
#
# Checks, each against a source outside the plugin:
#   - lv2file at its default block (512) and at -b 64 and -b 4096: exit 0,
#     a log with the header docs/log-format.md documents (read from that
#     file), one row per generated note with its MIDI number and cents,
#     the same log at every block size, and out.wav equal to in.wav
#     sample for sample (docs/ports.md: out is a bit-exact copy of in);
#   - a log folder that cannot be made (it lies under a regular file):
#     lv2file still exits 0 with bit-exact audio, and the plugin says so in
#     one line (docs/log-format.md, "When the log cannot be written");
#   - plumb scan at --block 1, 64 and 4096: exit 0, the same rows, logs
#     byte-identical across block sizes (core/include/plumb.h: results do not
#     depend on the block size), and exactly the detuned note in the
#     flagged table (docs/command.md, "Output").
# The truth: the MIDI Tuning Standard's f = 440 * 2^((m - 69) / 12) and
# cents = 1200 * log2(f / target) (Ellis 1885), computed by numpy.
#
# Needs lv2file, and /usr/bin/python3 with numpy and scipy.

BUILD_DIR=${1:?usage: sh tests/hosts/hosts.sh BUILD_DIR}
ROOT=$(cd "$(dirname "$0")/../.." && pwd) || exit 2
. "$ROOT/tests/lib/checks.sh"
PYTHON=/usr/bin/python3
URI=urn:plumb:intonation

WORK=$(mktemp -d "${TMPDIR:-/tmp}/plumb-hosts.XXXXXX") || exit 2
trap 'rm -rf "$WORK"' EXIT
trap 'exit 130' INT TERM



# ------------------------------------------------------------ the take

# make_take WAV TRUTH [RATE_HZ]: 4 s, mono float at RATE_HZ (48 kHz by
# default); four harmonic tones of 0.6 s with 20 ms raised-cosine ramps,
# one of them 25 cents sharp.
# TRUTH gets one line a note: midi cents name flagged (flagged when more
# than the default tolerance, 10 cents, docs/command.md).
make_take() {
  "$PYTHON" - "$1" "$2" "${3:-48000}" <<'EOF'
import sys
import numpy as np
from scipy.io import wavfile

rate_hz = int(sys.argv[3])
notes = [(57, 0.0), (64, 25.0), (69, 0.0), (60, 0.0)]  # (MIDI, cents)
start_s, length_s, gap_s, ramp_s = 0.3, 0.6, 0.3, 0.02
names = ["C", "C#", "D", "D#", "E", "F", "F#", "G", "G#", "A", "A#", "B"]
take = np.zeros(4 * rate_hz)
n = int(length_s * rate_hz)
t_s = np.arange(n) / rate_hz
ramp_n = int(ramp_s * rate_hz)
ramp = 0.5 - 0.5 * np.cos(np.pi * np.arange(ramp_n) / ramp_n)
gain = np.ones(n)
gain[: len(ramp)] = ramp
gain[n - len(ramp):] = ramp[::-1]
with open(sys.argv[2], "w") as truth:
    for i, (midi, cents) in enumerate(notes):
        f0_hz = 440.0 * 2.0 ** ((midi - 69) / 12.0) * 2.0 ** (cents / 1200.0)
        tone = sum(np.sin(2 * np.pi * k * f0_hz * t_s) / k for k in range(1, 6))
        first = int((start_s + i * (length_s + gap_s)) * rate_hz)
        take[first:first + n] += 0.2 * tone * gain
        name = names[midi % 12] + str(midi // 12 - 1)
        truth.write("%d %.3f %s %d\n" % (midi, cents, name, abs(cents) > 10.0))
wavfile.write(sys.argv[1], rate_hz, take.astype(np.float32))
EOF
}

# ------------------------------------------------------------ helpers


# same_audio IN OUT: equal rate, length and every sample, bit for bit
# (both float: the plugin copies the samples, so nothing may round).
same_audio() {
  "$PYTHON" - "$1" "$2" <<'EOF'
import sys
import warnings
import numpy as np
from scipy.io import wavfile

warnings.simplefilter("ignore", wavfile.WavFileWarning)
rate_in, a = wavfile.read(sys.argv[1])
rate_out, b = wavfile.read(sys.argv[2])
if rate_in != rate_out or a.dtype != b.dtype or a.shape != b.shape:
    sys.exit("in: %d Hz %s %s; out: %d Hz %s %s" % (
        rate_in, a.dtype, a.shape, rate_out, b.dtype, b.shape))
if a.dtype.kind != "f":
    sys.exit("out is %s, not float: cannot compare bit for bit" % b.dtype)
if not np.array_equal(a.view(np.uint32), b.view(np.uint32)):
    differ = np.flatnonzero(a.view(np.uint32) != b.view(np.uint32))
    sys.exit("%d samples differ, the first at %d: %r != %r" % (
        len(differ), differ[0], a[differ[0]], b[differ[0]]))
EOF
}

# rows_match_truth LOG TRUTH: one row a generated note, in order, with its
# MIDI number and its cents within 1 of the truth (a margin of common
# practice, no source; the core's precision tests are far tighter).
rows_match_truth() {
  "$PYTHON" - "$1" "$2" <<'EOF'
import csv
import sys

with open(sys.argv[1], newline="") as log:
    rows = list(csv.DictReader(log))
truth = [line.split() for line in open(sys.argv[2])]
if len(rows) != len(truth):
    sys.exit("%d rows, %d notes generated" % (len(rows), len(truth)))
for row, (midi, cents, name, _) in zip(rows, truth):
    if row["midi"] != midi or row["note"] != name:
        sys.exit("row %s: %s (%s), generated %s (%s)" % (
            row["index"], row["note"], row["midi"], name, midi))
    if not abs(float(row["cents"]) - float(cents)) <= 1.0:
        sys.exit("row %s: %s cents, generated %s" % (
            row["index"], row["cents"], cents))
EOF
}

# has_documented_header LOG
has_documented_header() {
  wanted=$(documented_header)
  got=$(head -n 1 "$1")
  if [ -z "$wanted" ]; then
    echo "no columns found in $ROOT/docs/log-format.md"
    return 1
  fi
  if [ "$got" != "$wanted" ]; then
    echo "header:   $got"
    echo "expected: $wanted"
    return 1
  fi
}

# only_log FOLDER: the one *.notes.csv in FOLDER, or nothing.
only_log() {
  set -- "$1"/*.notes.csv
  if [ "$#" -eq 1 ] && [ -f "$1" ]; then
    echo "$1"
  fi
}

# identical FILE...: every file byte for byte like the first.
identical() {
  first=$1
  shift
  for other in "$@"; do
    cmp "$first" "$other" || return 1
  done
}

# flagged_table_shows STDOUT TRUTH: the rows under "Flagged notes" (up to
# the blank line) are exactly the generated notes beyond the tolerance,
# each with its name and verdict (sharp for positive cents).
flagged_table_shows() {
  awk '/^Flagged notes$/ { on = 1; getline; next } on && /^$/ { exit }
       on { print $3, $5 }' "$1" >"$WORK/flagged.got"
  awk '$4 == 1 { print $3, ($2 > 0 ? "sharp" : "flat") }' "$2" \
    >"$WORK/flagged.want"
  if ! grep -q '^Flagged notes$' "$1" ||
    ! cmp -s "$WORK/flagged.got" "$WORK/flagged.want"; then
    echo "flagged rows (note verdict) on stdout:"
    cat "$WORK/flagged.got"
    echo "expected:"
    cat "$WORK/flagged.want"
    return 1
  fi
}

# one_plumb_line STDERR FOLDER: exactly one line from the plugin, and it
# names the folder.
one_plumb_line() {
  lines=$(grep -c '^plumb: ' "$1")
  if [ "$lines" -ne 1 ] || ! grep '^plumb: ' "$1" | grep -qF "$2"; then
    echo "$lines lines starting 'plumb: ' (expected 1 naming $2):"
    cat "$1"
    return 1
  fi
}

# ------------------------------------------------------------ set-up

require_lv2file_hosts hosts "$BUILD_DIR"

link_bundle
TAKE=$WORK/take.wav
TRUTH=$WORK/truth.txt
if ! make_take "$TAKE" "$TRUTH"; then
  fail "hosts: could not make the test take with $PYTHON"
  finish
fi

# run_lv2file LOG_DIR OUT [lv2file options...]: sets $status; the host's
# stdout and stderr go to OUT.stdout and OUT.stderr.
run_lv2file() {
  log_dir=$1 out=$2
  shift 2
  LV2_PATH=$WORK/lv2 PLUMB_LOG_DIR=$log_dir \
    lv2file "$@" -i "$TAKE" -o "$out" "$URI" >"$out.stdout" 2>"$out.stderr"
  status=$?
}

# ------------------------------------------------------------ lv2file

for block in 512 64 4096; do
  name="lv2file -b $block"
  if [ "$block" = 512 ]; then
    set -- # lv2file's own default block
    name="lv2file (default block, 512)"
  else
    set -- -b "$block"
  fi
  logs=$WORK/lv2file-$block
  out=$WORK/lv2file-$block.wav
  run_lv2file "$logs" "$out" "$@"
  check "$name: exit status 0" exits_zero "$status" "$out.stderr"
  check "$name: out.wav equals in.wav sample for sample" \
    same_audio "$TAKE" "$out"
  log=$(only_log "$logs")
  if [ -z "$log" ]; then
    fail "$name: exactly one *.notes.csv in PLUMB_LOG_DIR"
    { ls -A "$logs" 2>&1; cat "$out.stderr"; } | sed 's/^/    # /'
    continue
  fi
  pass "$name: exactly one *.notes.csv in PLUMB_LOG_DIR"
  check "$name: the header of docs/log-format.md" has_documented_header "$log"
  check "$name: one row a generated note (MIDI, cents)" \
    rows_match_truth "$log" "$TRUTH"
  cp "$log" "$WORK/lv2file-$block.csv"
done
# Without time:Position, timeline_s is the time since activation, so the
# logs hold nothing that may differ between block sizes.
set -- "$WORK/lv2file-512.csv" "$WORK/lv2file-64.csv" "$WORK/lv2file-4096.csv"
if [ -f "$1" ] && [ -f "$2" ] && [ -f "$3" ]; then
  check "lv2file: the same log at blocks 512, 64 and 4096" identical "$@"
else
  fail "lv2file: the same log at blocks 512, 64 and 4096"
  echo "    # some runs left no log"
fi

# ------------------------------------------------------------ no log folder

# Root ignores permissions, so the folder is made impossible instead: it
# would have to be inside a regular file.
: >"$WORK/afile"
unwritable=$WORK/afile/sub
out=$WORK/lv2file-unwritable.wav
run_lv2file "$unwritable" "$out"
check "unwritable log folder: lv2file exit status 0" \
  exits_zero "$status" "$out.stderr"
check "unwritable log folder: out.wav still equals in.wav" \
  same_audio "$TAKE" "$out"
check "unwritable log folder: one 'plumb: ' line naming the folder" \
  one_plumb_line "$out.stderr" "$unwritable"

# ------------------------------------------------------------ plumb scan

for block in 1 64 4096; do
  name="plumb scan --block $block"
  logs=$WORK/scan-$block
  "$PLUMB" scan -o "$logs" --block "$block" "$TAKE" \
    >"$logs.stdout" 2>"$logs.stderr"
  status=$?
  check "$name: exit status 0" exits_zero "$status" "$logs.stderr"
  log=$logs/take.notes.csv
  if [ ! -f "$log" ]; then
    fail "$name: the log take.notes.csv (docs/command.md: named after the file)"
    sed 's/^/    # /' "$logs.stderr"
    continue
  fi
  pass "$name: the log take.notes.csv (docs/command.md: named after the file)"
  check "$name: the header of docs/log-format.md" has_documented_header "$log"
  check "$name: one row a generated note (MIDI, cents)" \
    rows_match_truth "$log" "$TRUTH"
  check "$name: the flagged table lists the detuned note, and only it" \
    flagged_table_shows "$logs.stdout" "$TRUTH"
done
set -- "$WORK/scan-1/take.notes.csv" "$WORK/scan-64/take.notes.csv" \
  "$WORK/scan-4096/take.notes.csv"
if [ -f "$1" ] && [ -f "$2" ] && [ -f "$3" ]; then
  check "plumb scan: logs byte-identical at --block 1, 64 and 4096" \
    identical "$@"
else
  fail "plumb scan: logs byte-identical at --block 1, 64 and 4096"
  echo "    # some runs left no log"
fi

# ------------------------------------------------------------ sample rates

# A host changes the sample rate by instantiating the plugin anew. One
# `plumb scan -j 1` over takes at four rates instantiates it four times in
# one process, one rate after the other; every log must still hold the
# generated notes at their cents.
rates="22050 44100 96000 192000"
set --
for rate in $rates; do
  make_take "$WORK/rate-$rate.wav" "$WORK/rate-$rate.txt" "$rate" || exit 2
  set -- "$@" "$WORK/rate-$rate.wav"
done
"$PLUMB" scan -j 1 -o "$WORK/rates" "$@" >"$WORK/rates.stdout" 2>"$WORK/rates.stderr"
check "plumb scan -j 1 over takes at $rates Hz: exit status 0" \
  exits_zero "$?" "$WORK/rates.stderr"
for rate in $rates; do
  log=$WORK/rates/rate-$rate.notes.csv
  if [ -f "$log" ]; then
    check "re-instantiated at $rate Hz: one row a generated note (MIDI, cents)" \
      rows_match_truth "$log" "$WORK/rate-$rate.txt"
  else
    fail "re-instantiated at $rate Hz: the log rate-$rate.notes.csv"
  fi
done

finish
