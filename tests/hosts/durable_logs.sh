#!/bin/sh
# The session log survives what a workstation does to it.
#
#   sh tests/hosts/durable_logs.sh BUILD_DIR
#
# Checks, each against docs/log-format.md (read at test time where it
# lists something) or against a complete run of the same take:
#   1. kill -9 in the middle of a take (plumb scan --block 1 on a 120 s
#      take, killed once the log has 20 rows): the log has the documented
#      header, only whole rows (the header's field count, each ending in
#      a newline), indexes 0, 1, 2 ... with no gap, parses with Python's
#      csv module, and its rows are the first rows of a complete run;
#      run.json parses and says the take did not complete ("Crash
#      guarantee");
#   2. two plumb scan processes at once, on two takes of the same file
#      name in different folders, into one -o folder: two files, STEM and
#      STEM-2 ("File names"), each byte for byte the log of one take, each
#      run.json naming its own files and counting its own rows, and each
#      command's summary counting its own take;
#   3. odd file names (spaces, quotes, "..", a leading dot, a tab and a
#      newline, UTF-8, more than 100 characters): logs named by the
#      sanitising rule of "File names" (computed here from the rule), only
#      [A-Za-z0-9._-] and no leading '.', nothing written outside the -o
#      folder, run.json keeping the label as given; plumb scan reads those
#      logs back; and lv2file with PLUMB_LOG_DIR and no label gets the
#      automatic take-YYYYmmdd-HHMMSS-PID-N name;
#   4. a log folder that cannot be made (under a regular file), and a full
#      disk (a 64 KiB tmpfs with 12 KiB left, when mount is allowed): the
#      host exits 0, out.wav is in.wav bit for bit, the plugin says why in
#      a 'plumb: ' line, and on the full disk the log keeps whole rows up
#      to the failure (a half row only at the very end, "When the log
#      cannot be written");
#   5. after a complete scan, run.json's totals (notes, rows, flagged)
#      match the CSV's rows and its sharp/flat/unsteady verdicts;
#   and the log and totals checkers themselves reject damaged copies
#   (a half row, a missing row, a changed header, a wrong total), so the
#   checks above can fail.
#
# Needs BUILD_DIR/plumb and BUILD_DIR/plumb.lv2 (make all), lv2file, and
# /usr/bin/python3 with numpy and scipy. Runs as root for the tmpfs check;
# without mount permission that check is skipped with an "ok - skipped"
# line.

BUILD_DIR=${1:?usage: sh tests/hosts/durable_logs.sh BUILD_DIR}
ROOT=$(cd "$(dirname "$0")/../.." && pwd) || exit 2
. "$ROOT/tests/lib/checks.sh"
PYTHON=/usr/bin/python3
URI=urn:plumb:intonation

WORK=$(mktemp -d "${TMPDIR:-/tmp}/plumb-durable.XXXXXX") || exit 2
MOUNTED=""  # the tmpfs mount point, while mounted
RUNNING=""  # background processes started here and not yet waited for

cleanup() {
  for pid in $RUNNING; do
    kill -9 "$pid" 2>/dev/null
    wait "$pid" 2>/dev/null
  done
  if [ -n "$MOUNTED" ]; then
    umount "$MOUNTED" 2>/dev/null || umount -l "$MOUNTED" 2>/dev/null
  fi
  # Never into a mount that would not come off.
  rm -rf --one-file-system "$WORK"
}
trap cleanup EXIT
trap 'exit 130' INT TERM

# rejects COMMAND...: succeeds when COMMAND fails (a checker shown a
# damaged file must reject it).
rejects() {
  if "$@" >/dev/null 2>&1; then
    echo "accepted: $*"
    return 1
  fi
}

# ------------------------------------------------------------ set-up

require_lv2file_hosts "durable logs" "$BUILD_DIR"
PLUMB_REAL=$(readlink -f "$PLUMB")

link_bundle

HEADER=$(documented_header)
if [ -z "$HEADER" ]; then
  fail "durable logs: no columns found in $ROOT/docs/log-format.md"
  finish
fi

# ------------------------------------------------------------ the takes

# Harmonic tones (five partials, 1/k) at a -12 dBFS peak with 10 ms
# raised-cosine ramps, 48 kHz mono float:
#   long.wav        120 s of 0.4 s tones and 0.1 s gaps (240 notes), every
#                   fifth note 30 cents sharp and every seventh 30 flat;
#   a/take.wav      20 s of 0.4 s tones, 0.1 s gaps, C D E F G (40 notes);
#   b/take.wav      20 s of 0.5 s tones, 0.15 s gaps, A B C D (30 notes);
#   short.wav       3 s of 0.4 s tones, 0.1 s gaps (6 notes).
mkdir "$WORK/a" "$WORK/b" || exit 2
if ! "$PYTHON" - "$WORK" <<'EOF'; then
import os
import sys
import numpy as np
from scipy.io import wavfile

rate_hz = 48000
peak = 10.0 ** (-12.0 / 20.0)

def take(path, length_s, tone_s, gap_s, midis, detune=lambda i: 0.0):
    audio = np.zeros(int(length_s * rate_hz))
    n = int(tone_s * rate_hz)
    t_s = np.arange(n) / rate_hz
    ramp_n = int(0.01 * rate_hz)
    ramp = 0.5 - 0.5 * np.cos(np.pi * np.arange(ramp_n) / ramp_n)
    gain = np.ones(n)
    gain[:ramp_n] = ramp
    gain[n - ramp_n:] = ramp[::-1]
    i = 0
    while True:
        first = int(round(i * (tone_s + gap_s) * rate_hz))
        if first + n > len(audio):
            break
        midi = midis[i % len(midis)]
        f0_hz = 440.0 * 2.0 ** ((midi - 69) / 12.0) * 2.0 ** (detune(i) / 1200.0)
        tone = sum(np.sin(2 * np.pi * k * f0_hz * t_s) / k for k in range(1, 6))
        # += onto zeros: 0.0 + -0.0 is 0.0, so the take holds no -0.0
        # (lv2file writes -0.0 as 0.0 whatever the plugin does; the
        # plugin's own copy is a memcpy).
        audio[first:first + n] += peak * gain * tone / np.max(np.abs(tone))
        i += 1
    wavfile.write(path, rate_hz, audio.astype(np.float32))

work = sys.argv[1]
take(os.path.join(work, "long.wav"), 120.0, 0.4, 0.1, [57, 60, 64, 67, 69, 72],
     lambda i: 30.0 if i % 5 == 2 else -30.0 if i % 7 == 3 else 0.0)
take(os.path.join(work, "a", "take.wav"), 20.0, 0.4, 0.1, [60, 62, 64, 65, 67])
take(os.path.join(work, "b", "take.wav"), 20.0, 0.5, 0.15, [69, 71, 72, 74])
take(os.path.join(work, "short.wav"), 3.0, 0.4, 0.1, [60, 64, 67])
EOF
  fail "durable logs: could not make the test takes with $PYTHON"
  finish
fi

# ------------------------------------------------------------ checkers

# check_log LOG [whole|partial-end] [prefix-of FULL] [same-rows N]
#   The log's first line is the documented header; every other line is a
#   whole row (the header's field count, a newline at its end) - with
#   "partial-end", the very last line may instead be the start of a row
#   with no newline after it; indexes run 0, 1, 2 ... with no gap;
#   Python's csv reader (strict) reads the same rows; with "prefix-of",
#   the rows are the first rows of FULL, byte for byte.
cat >"$WORK/check_log.py" <<'EOF'
import csv
import io
import sys

log, header = sys.argv[1], sys.argv[2]
options = sys.argv[3:]
problems = []
data = open(log, "rb").read()
try:
    text = data.decode("ascii")
except UnicodeDecodeError as error:
    sys.exit("not plain ASCII: %s" % error)
lines = text.split("\n")
tail = lines.pop()  # "" when the file ends in a newline
columns = len(header.split(","))
if tail:
    if "partial-end" not in options:
        problems.append("the last line has no newline (a half-written row?): %r"
                        % tail[-60:])
    elif len(tail.split(",")) > columns:
        problems.append("the unfinished last line has too many fields: %r"
                        % tail[-60:])
if not lines or lines[0] != header:
    problems.append("first line %r\n  is not the header %r"
                    % (lines[0] if lines else "", header))
for number, line in enumerate(lines[1:], 2):
    if len(line.split(",")) != columns:
        problems.append("line %d has %d fields, the header %d: %r"
                        % (number, len(line.split(",")), columns, line[:80]))
indexes = [line.split(",")[0] for line in lines[1:]]
expected = [str(i) for i in range(len(indexes))]
if indexes != expected:
    gap = next(i for i, (a, b) in enumerate(zip(indexes + [None], expected + [None]))
               if a != b)
    problems.append("index column breaks at row %d: %r, expected %r"
                    % (gap, indexes[gap] if gap < len(indexes) else None,
                       expected[gap] if gap < len(expected) else None))
try:
    rows = list(csv.reader(io.StringIO("\n".join(lines) + "\n"), strict=True))
    if len(rows) != len(lines) or any(len(row) != columns for row in rows):
        problems.append("the csv module reads %d records (of %d lines), field "
                        "counts %s" % (len(rows), len(lines),
                                       sorted(set(len(row) for row in rows))))
except csv.Error as error:
    problems.append("the csv module cannot read it: %s" % error)
if "prefix-of" in options:
    full = open(options[options.index("prefix-of") + 1]).read().split("\n")
    for number, (mine, theirs) in enumerate(zip(lines, full), 1):
        if mine != theirs:
            problems.append("line %d differs from the complete run's:\n  %r\n  %r"
                            % (number, mine[:80], theirs[:80]))
            break
    if len(lines) > len(full) - 1:
        problems.append("more lines than the complete run")
    elif tail and not full[len(lines)].startswith(tail):
        problems.append("the unfinished last line is not the start of the "
                        "complete run's row: %r" % tail[-60:])
if problems:
    sys.exit("\n".join(problems))
print("%d rows" % (len(lines) - 1))
EOF
check_log() {
  log=$1
  shift
  "$PYTHON" "$WORK/check_log.py" "$log" "$HEADER" "$@"
}

# check_totals RUN_JSON LOG: run.json parses, is complete, and its
# totals.notes and totals.rows are the log's rows, totals.flagged the rows
# whose verdict is sharp, flat or unsteady (docs/log-format.md, run.json);
# at least one note is flagged, so flagged is a real count.
cat >"$WORK/check_totals.py" <<'EOF'
import csv
import json
import sys

run = json.load(open(sys.argv[1]))
rows = list(csv.DictReader(open(sys.argv[2], newline="")))
flagged = sum(row["verdict"] in ("sharp", "flat", "unsteady") for row in rows)
totals = run.get("totals") or {}
problems = []
if run.get("complete") is not True:
    problems.append("complete is %r" % run.get("complete"))
for key, want in (("notes", len(rows)), ("rows", len(rows)), ("flagged", flagged)):
    if totals.get(key) != want:
        problems.append("totals.%s is %r, the CSV has %d" % (key, totals.get(key), want))
if not rows or not flagged:
    problems.append("%d rows, %d flagged: the take should have both" % (len(rows), flagged))
if problems:
    sys.exit("\n".join(problems))
EOF
check_totals() {
  "$PYTHON" "$WORK/check_totals.py" "$1" "$2"
}

# same_audio IN OUT: equal rate, length and every sample, bit for bit.
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
if a.dtype != np.float32:
    sys.exit("out is %s, not float32: cannot compare bit for bit" % b.dtype)
if not np.array_equal(a.view(np.uint32), b.view(np.uint32)):
    differ = np.flatnonzero(a.view(np.uint32) != b.view(np.uint32))
    sys.exit("%d samples differ, the first at %d: %r != %r" % (
        len(differ), differ[0], a[differ[0]], b[differ[0]]))
EOF
}

exits_zero() {
  if [ "$1" -ne 0 ]; then
    echo "exit status $1; stderr:"
    cat "$2"
    return 1
  fi
}

# rows_of LOG: its lines less the header; 0 when there is no LOG.
rows_of() {
  if [ -f "$1" ]; then
    echo $(($(wc -l <"$1") - 1))
  else
    echo 0
  fi
}

# run_lv2file LOG_DIR IN OUT: sets $status; stdout and stderr go to
# OUT.stdout and OUT.stderr.
run_lv2file() {
  LV2_PATH=$WORK/lv2 PLUMB_LOG_DIR=$1 \
    lv2file -i "$2" -o "$3" "$URI" >"$3.stdout" 2>"$3.stderr"
  status=$?
}

# ------------------------------------------------------------ 5. a complete scan

# The reference for check 1, and check 5. Logs do not depend on the block
# size (core/include/plumb.h; tests/hosts/hosts.sh checks it), so --block 64 is a fair
# reference for the --block 1 run killed below.
FULL=$WORK/full
"$PLUMB" scan -j 1 --block 64 -o "$FULL" "$WORK/long.wav" \
  >"$WORK/full.stdout" 2>"$WORK/full.stderr"
status=$?
FULL_LOG=$FULL/long.notes.csv
if [ "$status" -ne 0 ] || [ ! -f "$FULL_LOG" ]; then
  fail "complete scan of the 120 s take (exit status $status)"
  sed 's/^/    # /' "$WORK/full.stderr"
  finish
fi
FULL_ROWS=$(rows_of "$FULL_LOG")
check "complete scan: run.json totals (notes, rows, flagged) match the CSV" \
  check_totals "$FULL/long.run.json" "$FULL_LOG"

# ------------------------------------------------------------ 1. kill -9

KILLED=$WORK/killed
KILLED_LOG=$KILLED/long.notes.csv
"$PLUMB" scan -j 1 --block 1 -o "$KILLED" "$WORK/long.wav" \
  >"$WORK/killed.stdout" 2>"$WORK/killed.stderr" &
scan_pid=$!
RUNNING=$scan_pid
rows=0
tries=0
while [ "$tries" -lt 600 ]; do # 30 s at most
  if [ -f "$KILLED_LOG" ]; then
    rows=$(rows_of "$KILLED_LOG")
    [ "$rows" -ge 20 ] && break
  fi
  # (kill -0 would also succeed on the zombie of a finished scan)
  readlink "/proc/$scan_pid/exe" >/dev/null 2>&1 || break
  sleep 0.05
  tries=$((tries + 1))
done
# Only the process started above, and only while it is that program (or
# that program replaced by a rebuild meanwhile).
alive=no
case $(readlink "/proc/$scan_pid/exe" 2>/dev/null) in
  "$PLUMB_REAL" | "$PLUMB_REAL (deleted)")
    kill -9 "$scan_pid" 2>/dev/null && alive=yes
    ;;
esac
wait "$scan_pid" 2>/dev/null # no "Killed" from the shell
status=$?
RUNNING=""
killed_rows=$(rows_of "$KILLED_LOG")
echo "# killed after $killed_rows of $FULL_ROWS rows (exit status $status)"
killed_mid_take() {
  if [ "$alive" != yes ] || [ "$status" -ne 137 ]; then
    echo "the scan was not killed by SIGKILL (running at kill time: $alive," \
      "exit status $status, $killed_rows rows); stderr:"
    cat "$WORK/killed.stderr"
    return 1
  fi
  if [ "$killed_rows" -lt 20 ] || [ "$killed_rows" -ge "$FULL_ROWS" ]; then
    echo "$killed_rows rows at the kill; wanted 20 or more and fewer than" \
      "the $FULL_ROWS of a complete run"
    return 1
  fi
}
check "kill -9 mid-take: killed with at least 20 rows written, fewer than a complete run" \
  killed_mid_take
if [ -f "$KILLED_LOG" ]; then
  pass "kill -9 mid-take: notes.csv exists"
  check "kill -9 mid-take: whole rows only, the documented header, indexes 0, 1, 2 ... with no gap, readable by Python's csv" \
    check_log "$KILLED_LOG"
  check "kill -9 mid-take: the rows are the first rows of a complete run, byte for byte" \
    check_log "$KILLED_LOG" prefix-of "$FULL_LOG"
else
  fail "kill -9 mid-take: notes.csv exists"
  ls -lA "$KILLED" 2>&1 | sed 's/^/    # /'
fi
killed_json() {
  "$PYTHON" - "$KILLED/long.run.json" <<'EOF'
import json
import sys
run = json.load(open(sys.argv[1]))
if run.get("complete") is not False or run.get("totals") is not None:
    sys.exit("complete %r, totals %r: expected false and null after a crash"
             % (run.get("complete"), run.get("totals")))
if run.get("notes_file") != "long.notes.csv":
    sys.exit("notes_file is %r" % run.get("notes_file"))
EOF
}
check "kill -9 mid-take: run.json parses as JSON, complete false, totals null" \
  killed_json

# The checkers can fail: damaged copies of the complete run's log and
# totals must be rejected.
damage() {
  src=$FULL_LOG
  head -n 21 "$src" >"$WORK/first-rows.csv"
  head -c "$(($(wc -c <"$src") - 7))" "$src" >"$WORK/half-row.csv"
  sed '5d' "$src" >"$WORK/lost-row.csv"
  sed '1s/$/,extra/' "$src" >"$WORK/header.csv"
  sed '3s/,[^,]*$//' "$src" >"$WORK/short-row.csv"
  sed '2s/,\(in-tune\|sharp\|flat\|unsteady\|unpitched\),/,other,/' "$src" >"$WORK/other-row.csv"
  sed 's/"notes": \([0-9]*\)/"notes": 1\1/' "$FULL/long.run.json" \
    >"$WORK/wrong-totals.json"
  rejects check_log "$WORK/half-row.csv" &&
    rejects check_log "$WORK/lost-row.csv" &&
    rejects check_log "$WORK/header.csv" &&
    rejects check_log "$WORK/short-row.csv" &&
    rejects check_log "$WORK/other-row.csv" prefix-of "$FULL_LOG" &&
    rejects check_log "$src" prefix-of "$WORK/first-rows.csv" &&
    rejects check_totals "$WORK/wrong-totals.json" "$FULL_LOG" &&
    rejects check_totals "$FULL/long.run.json" "$WORK/lost-row.csv"
}
check "the checkers reject a half row, a lost row, a changed header, a wrong total" \
  damage

# ------------------------------------------------------------ 2. two at once

# The logs of each take alone (any block size gives the same log).
"$PLUMB" scan -j 1 --block 64 -o "$WORK/alone" "$WORK/a/take.wav" \
  >/dev/null 2>&1 && mv "$WORK/alone/take.notes.csv" "$WORK/alone-a.csv"
"$PLUMB" scan -j 1 --block 64 -o "$WORK/alone" "$WORK/b/take.wav" \
  >/dev/null 2>&1 && mv "$WORK/alone/take.notes.csv" "$WORK/alone-b.csv"
ROWS_A=$(rows_of "$WORK/alone-a.csv")
ROWS_B=$(rows_of "$WORK/alone-b.csv")

# --block 1 makes each take last about 2 s, so the two overlap.
BOTH=$WORK/both
"$PLUMB" scan -j 1 --block 1 -o "$BOTH" "$WORK/a/take.wav" \
  >"$WORK/a.stdout" 2>"$WORK/a.stderr" &
pid_a=$!
"$PLUMB" scan -j 1 --block 1 -o "$BOTH" "$WORK/b/take.wav" \
  >"$WORK/b.stdout" 2>"$WORK/b.stderr" &
pid_b=$!
RUNNING="$pid_a $pid_b"
wait "$pid_a"
status_a=$?
wait "$pid_b"
status_b=$?
RUNNING=""

two_files() {
  found=$(cd "$BOTH" && ls -A | sort | paste -s -d ' ' -)
  want="take-2.notes.csv take-2.run.json take.notes.csv take.run.json"
  if [ "$found" != "$want" ]; then
    echo "in the -o folder: $found"
    echo "expected:         $want"
    return 1
  fi
}
check "two scans at once, same label: take and take-2, a notes.csv and a run.json each" \
  two_files

# own_logs: one of take / take-2 is a's log alone, the other b's, byte for
# byte; each run.json names its files and counts its own rows.
own_logs() {
  if [ "$ROWS_A" -eq 0 ] || [ "$ROWS_B" -eq 0 ] || [ "$ROWS_A" -eq "$ROWS_B" ]; then
    echo "the takes alone gave $ROWS_A and $ROWS_B rows (want two different, non-zero)"
    return 1
  fi
  if cmp -s "$BOTH/take.notes.csv" "$WORK/alone-a.csv" &&
    cmp -s "$BOTH/take-2.notes.csv" "$WORK/alone-b.csv"; then
    return 0
  fi
  if cmp -s "$BOTH/take.notes.csv" "$WORK/alone-b.csv" &&
    cmp -s "$BOTH/take-2.notes.csv" "$WORK/alone-a.csv"; then
    return 0
  fi
  for log in "$BOTH/take.notes.csv" "$BOTH/take-2.notes.csv"; do
    echo "$log: $(check_log "$log" 2>&1 | tail -n 1)"
  done
  echo "neither pairing is byte-identical to the takes alone ($ROWS_A and $ROWS_B rows)"
  return 1
}
check "two scans at once: each log is one take's whole log, byte for byte (no rows of the other)" \
  own_logs
own_json() {
  "$PYTHON" - "$BOTH" <<'EOF'
import json
import os
import sys
problems = []
for stem in ("take", "take-2"):
    try:
        run = json.load(open(os.path.join(sys.argv[1], stem + ".run.json")))
        rows = sum(1 for _ in open(os.path.join(sys.argv[1], stem + ".notes.csv"))) - 1
    except (OSError, ValueError) as error:
        problems.append("%s: %s" % (stem, error))
        continue
    totals = run.get("totals") or {}
    if (run.get("take"), run.get("notes_file"), run.get("take_label")) != (
            stem, stem + ".notes.csv", "take"):
        problems.append("%s.run.json: take %r, notes_file %r, take_label %r" % (
            stem, run.get("take"), run.get("notes_file"), run.get("take_label")))
    if run.get("complete") is not True or totals.get("rows") != rows or \
            totals.get("notes") != rows:
        problems.append("%s.run.json: complete %r, totals %r; the CSV has %d rows"
                        % (stem, run.get("complete"), totals, rows))
if problems:
    sys.exit("\n".join(problems))
EOF
}
check "two scans at once: each run.json names its own files and counts its own rows" \
  own_json
# The summary line of a take: "take  NOTES  FLAGGED  UNPITCHED".
own_summary() {
  got_a=$(awk '$1 == "take" && $2 ~ /^[0-9]+$/ { print $2 }' "$WORK/a.stdout")
  got_b=$(awk '$1 == "take" && $2 ~ /^[0-9]+$/ { print $2 }' "$WORK/b.stdout")
  if [ "$status_a" -ne 0 ] || [ "$status_b" -ne 0 ] ||
    [ "$got_a" != "$ROWS_A" ] || [ "$got_b" != "$ROWS_B" ]; then
    echo "a/take.wav: exit $status_a, summary counts '${got_a}' notes, its take has $ROWS_A"
    echo "b/take.wav: exit $status_b, summary counts '${got_b}' notes, its take has $ROWS_B"
    cat "$WORK/a.stderr" "$WORK/b.stderr"
    return 1
  fi
}
check "two scans at once: each command exits 0 and its summary counts its own take's notes" \
  own_summary

# ------------------------------------------------------------ 3. odd names

# The takes live in JAIL/takes and the logs go to JAIL/logs; nothing else
# in WORK may change while the scan runs.
JAIL=$WORK/jail
mkdir "$JAIL" "$JAIL/takes" || exit 2
"$PYTHON" - "$WORK/short.wav" "$JAIL/takes" "$WORK/odd-expected" <<'EOF'
import os
import shutil
import sys

# The names, and what docs/log-format.md ("File names") makes of their
# labels (docs/command.md: the file name without its last extension).
names = [
    "a b 'c'..\u00e9.wav",
    "...wav",              # label ".."
    ".hidden.wav",         # label ".hidden"
    "tab\there\nnew\"line.wav",
    "\u00e9" * 60 + "x" * 60 + ".wav",  # 120 characters, 180 bytes
]
kept = set("ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789._-")
with open(sys.argv[3], "w", encoding="utf-8") as expected:
    for name in names:
        shutil.copy(sys.argv[1], os.path.join(sys.argv[2], name))
        label = name[: name.rindex(".")] if name.rindex(".") > 0 else name
        stem = "".join(c if c in kept else "_" for c in label)
        if stem.startswith("."):
            stem = "_" + stem[1:]
        stem = stem[:100]
        expected.write("%s\t%s\n" % (stem, label.encode("unicode_escape").decode()))
EOF
# Everything in WORK but the -o folder and this script's own files.
outside() {
  (cd "$WORK" && find . -path ./jail/logs -prune -o -print | LC_ALL=C sort |
    grep -v -x -e ./why -e ./odd.stdout -e ./odd.stderr \
      -e ./outside.before -e ./outside.after)
}
outside >"$WORK/outside.before"
"$PLUMB" scan -o "$JAIL/logs" "$JAIL/takes"/* "$JAIL/takes"/.??* \
  >"$WORK/odd.stdout" 2>"$WORK/odd.stderr"
odd_status=$?
outside >"$WORK/outside.after"

odd_names() {
  "$PYTHON" - "$JAIL/logs" "$WORK/odd-expected" <<'EOF'
import os
import re
import sys
expected = set()
for line in open(sys.argv[2], encoding="utf-8"):
    stem = line.rstrip("\n").split("\t")[0]
    expected |= {stem + ".notes.csv", stem + ".run.json"}
found = set(os.listdir(sys.argv[1]))
if found != expected:
    sys.exit("not expected: %r\nmissing: %r" % (sorted(found - expected),
                                                 sorted(expected - found)))
EOF
}
safe_names() {
  ls -A "$JAIL/logs" >"$WORK/odd-names" || return 1
  [ -s "$WORK/odd-names" ] || { echo "no files"; return 1; }
  if LC_ALL=C grep -v -x '[A-Za-z0-9_-][A-Za-z0-9._-]*' "$WORK/odd-names"; then
    echo "(names with other bytes, or a leading '.')"
    return 1
  fi
}
nothing_outside() {
  if ! diff "$WORK/outside.before" "$WORK/outside.after"; then
    echo "(files made or removed outside the -o folder, above)"
    return 1
  fi
}
odd_json() {
  "$PYTHON" - "$JAIL/logs" "$WORK/odd-expected" <<'EOF'
import json
import os
import sys
problems = []
for line in open(sys.argv[2], encoding="utf-8"):
    stem, label = line.rstrip("\n").split("\t")
    label = label.encode().decode("unicode_escape")
    try:
        run = json.load(open(os.path.join(sys.argv[1], stem + ".run.json"), encoding="utf-8"))
    except (OSError, ValueError) as error:
        problems.append("%r: %s" % (stem, error))
        continue
    if (run.get("take"), run.get("take_label"), run.get("notes_file")) != (
            stem, label, stem + ".notes.csv"):
        problems.append("take %r, take_label %r, notes_file %r; expected %r, %r"
                        % (run.get("take"), run.get("take_label"),
                           run.get("notes_file"), stem, label))
if problems:
    sys.exit("\n".join(problems))
EOF
}
odd_logs_whole() {
  for log in "$JAIL/logs"/*.notes.csv; do
    [ "$(check_log "$log" | tail -n 1)" = "6 rows" ] ||
      { echo "$log: $(check_log "$log" 2>&1 | tail -n 1), expected 6 rows"; return 1; }
  done
}
check "odd file names: the logs get the names docs/log-format.md's sanitising rule gives" \
  odd_names
check "odd file names: every file name only [A-Za-z0-9._-], none with a leading '.'" \
  safe_names
check "odd file names: nothing made outside the -o folder" nothing_outside
check "odd file names: run.json has the label as given (take_label) and the sanitised stem (take)" \
  odd_json
check "odd file names: each log is whole, 6 rows" odd_logs_whole
# docs/command.md: a log that cannot be read back is exit status 3, with
# a 'plumb: ' line.
odd_summary() {
  if [ "$odd_status" -ne 0 ] || grep -q '^plumb: ' "$WORK/odd.stderr"; then
    echo "exit status $odd_status; stderr:"
    cat "$WORK/odd.stderr"
    return 1
  fi
}
check "odd file names: plumb scan reads its own logs back (exit 0, no error)" \
  odd_summary

# lv2file sends no label: the automatic stem, with the UTC time of the run
# and lv2file's process id, N = 1 (its first take).
AUTO=$WORK/auto
before=$(date -u +%Y%m%d-%H%M%S)
LV2_PATH=$WORK/lv2 PLUMB_LOG_DIR=$AUTO \
  lv2file -i "$WORK/short.wav" -o "$WORK/auto.wav" "$URI" \
  >"$WORK/auto.stdout" 2>"$WORK/auto.stderr" &
auto_pid=$!
RUNNING=$auto_pid
wait "$auto_pid"
auto_status=$?
RUNNING=""
after=$(date -u +%Y%m%d-%H%M%S)
automatic_stem() {
  exits_zero "$auto_status" "$WORK/auto.stderr" || return 1
  found=$(cd "$AUTO" 2>/dev/null && ls -A | paste -s -d ' ' -)
  stem=${found%%.notes.csv*}
  if ! echo "$found" | grep -q -x 'take-[0-9]\{8\}-[0-9]\{6\}-[0-9][0-9]*-[0-9][0-9]*\.notes\.csv take-[0-9]\{8\}-[0-9]\{6\}-[0-9][0-9]*-[0-9][0-9]*\.run\.json' ||
    [ "$found" != "$stem.notes.csv $stem.run.json" ]; then
    echo "in PLUMB_LOG_DIR: $found"
    echo "expected take-YYYYmmdd-HHMMSS-PID-N.notes.csv and .run.json"
    return 1
  fi
  when=$(echo "$stem" | cut -d - -f 2-3)
  pid=$(echo "$stem" | cut -d - -f 4)
  n=$(echo "$stem" | cut -d - -f 5)
  if [ "$pid" != "$auto_pid" ] || [ "$n" != 1 ] ||
    [ "$(printf '%s\n' "$before" "$when" "$after" | LC_ALL=C sort | paste -s -d ' ' -)" != "$before $when $after" ]; then
    echo "$stem: time $when (the run was $before .. $after UTC), pid $pid" \
      "(lv2file was $auto_pid), N $n (expected 1)"
    return 1
  fi
  check_log "$AUTO/$stem.notes.csv" >/dev/null
}
check "lv2file, no label: one log take-YYYYmmdd-HHMMSS-PID-1 (UTC time of the run, lv2file's pid)" \
  automatic_stem

# ------------------------------------------------------------ 4. no room

: >"$WORK/afile"
unwritable=$WORK/afile/sub
run_lv2file "$unwritable" "$WORK/long.wav" "$WORK/unwritable.wav"
check "log folder under a regular file: lv2file exit status 0" \
  exits_zero "$status" "$WORK/unwritable.wav.stderr"
check "log folder under a regular file: out.wav equals in.wav bit for bit" \
  same_audio "$WORK/long.wav" "$WORK/unwritable.wav"
one_plumb_line() {
  lines=$(grep -c '^plumb: ' "$1")
  if [ "$lines" -ne 1 ] || ! grep '^plumb: ' "$1" | grep -qF "$2"; then
    echo "$lines lines starting 'plumb: ' (expected 1 naming $2):"
    cat "$1"
    return 1
  fi
}
check "log folder under a regular file: one 'plumb: ' line naming the folder" \
  one_plumb_line "$WORK/unwritable.wav.stderr" "$unwritable"

# A real full disk: a 64 KiB tmpfs filled up, then 12 KiB (three pages)
# freed, so run.json and a few dozen rows fit and the 240-note take
# overflows it.
DISK=$WORK/disk
mkdir "$DISK" || exit 2
if mount -t tmpfs -o size=64k,mode=0755 tmpfs "$DISK" 2>"$WORK/mount.err"; then
  MOUNTED=$DISK
  mkdir "$DISK/logs"
  dd if=/dev/zero of="$DISK/filler" bs=4096 2>/dev/null
  truncate -s -12288 "$DISK/filler"
  run_lv2file "$DISK/logs" "$WORK/long.wav" "$WORK/disk.wav"
  check "full disk (tmpfs): lv2file exit status 0" \
    exits_zero "$status" "$WORK/disk.wav.stderr"
  check "full disk (tmpfs): out.wav equals in.wav bit for bit" \
    same_audio "$WORK/long.wav" "$WORK/disk.wav"
  no_space_line() {
    if ! grep '^plumb: ' "$1" | grep -q 'No space left on device'; then
      echo "no 'plumb: ' line says 'No space left on device'; stderr:"
      cat "$1"
      return 1
    fi
  }
  check "full disk (tmpfs): a 'plumb: ' line says No space left on device" \
    no_space_line "$WORK/disk.wav.stderr"
  full_disk_log() {
    set -- "$DISK/logs"/take-*.notes.csv
    if [ "$#" -ne 1 ] || [ ! -f "$1" ]; then
      echo "not one take-*.notes.csv on the full disk:"
      ls -lA "$DISK/logs"
      return 1
    fi
    rows=$(check_log "$1" partial-end prefix-of "$FULL_LOG") || {
      echo "$rows"
      return 1
    }
    echo "$rows"
    if [ "${rows% rows}" -ge "$FULL_ROWS" ]; then
      echo "the disk never filled: $rows of $FULL_ROWS"
      return 1
    fi
  }
  check "full disk (tmpfs): the log keeps whole rows up to the failure, a half row only at the very end" \
    full_disk_log
  umount "$DISK" && MOUNTED=""
else
  pass "skipped: full disk: cannot mount a tmpfs here ($(head -n 1 "$WORK/mount.err"))"
fi

finish
