#!/bin/sh
# Input torture test of the plumb command: hostile takes, names, folders
# and logs. Every one must get one clear line on stderr ("plumb: ",
# naming the file, no stack trace, no "(null)") or a correct result, and
# never a crash (exit status 128 or more, a sanitizer report), never a
# hang (every run is under `timeout`; a timeout is a failure), and never
# the loss of another take's log (a good take runs in the same batch or
# into the same folder, and its log must keep its note).
#
#   sh tests/hosts/torture.sh BUILD_DIR
#
# The cases:
#   1. broken files: empty, header only, truncated mid-sample, a header
#      that claims more data than there is / less / 0xFFFFFFFF, random
#      bytes, text, a folder, a missing file, an unreadable file (a path
#      through a regular file; chmod 000 read by an unprivileged user);
#   2. a FIFO with no writer and one with a writer, standard input as
#      "-" and as /dev/stdin (a pipe from sox): no hang, and a stream is
#      refused with a true reason or read once;
#   3. sample rates 8000, 11025, 12000, 16000, 22050, 384000 Hz (inside
#      the 8 .. 384 kHz that docs/methods.md and core/include/plumb.h accept) and
#      0, 1, 2, 7999, 384001, 1000000 Hz (outside: refused);
#   4. 64 channels: 64 tracks, 64 unique labels, each its own note;
#   5. two hours of silence: 0 notes, exit 0, peak resident set measured;
#   6. NaN, Inf, silence, white noise, a 15 kHz tone, a click, a hit:
#      no notes or only unpitched ones, exit 0; with a flagged take under
#      --strict, exit 1, not 3;
#   7. hostile names: spaces, quotes, $, backslash, a leading dash, tab,
#      newline, ESC, a C1 byte, a 255-byte UTF-8 name (NAME_MAX: a
#      300-byte name cannot be made, so that case is a skip); no raw
#      control character in the output, no table row broken; names that
#      sanitise to one log stem ("a b"/"a_b", "c?d"/"c*d"), at -j1 and
#      -j2, each keeping its own notes;
#   8. a stale log of the same label (its notes must not be reported
#      again), a symlink at the log's name (the file it points at must
#      keep every byte), a log folder that cannot be made (under a
#      regular file, on a read-only tmpfs) or written (a read-only tmpfs);
#   9. plumb report on hostile logs, each beside a good log that must
#      still be shown: random bytes, empty, header only, a last row cut
#      off, a FIFO, a link to /dev/zero, a folder, a 1 MB line, ESC in a
#      field, ESC and a newline in a log's name; and report of a regular
#      file and of a FIFO.
#
# Expected values come from the takes themselves (exact synthetic
# signals; see tests/hosts/torture/make_inputs.py for the frequencies and their
# targets in equal temperament at A4 = 440 Hz) and from the documented
# behaviour (docs/command.md, docs/log-format.md); each check names its
# source. Bounds that are judgement calls say "common practice, no
# source".
#
# Caution: the takes are synthetic test tones, at -12 dBFS or below; do
# not play them loudly.
#
# Needs BUILD_DIR/plumb beside BUILD_DIR/plumb.lv2 (make all), sox,
# timeout, and /usr/bin/python3 with numpy. Runs as root for the
# read-only tmpfs and for setpriv; without them those checks are skipped
# with an "ok - skipped" line that says why.

BUILD_DIR=${1:?usage: sh tests/hosts/torture.sh BUILD_DIR}
ROOT=$(cd "$(dirname "$0")/../.." && pwd) || exit 2
. "$ROOT/tests/lib/checks.sh"
PYTHON=/usr/bin/python3
SUMMARY=$ROOT/tests/hosts/torture/summary.py
PLUMB=$(cd "$BUILD_DIR" 2>/dev/null && pwd)/plumb

# A 1 s take runs in well under a second; 60 s means a hang, not a slow
# machine (common practice, no source). Cases that would block on a read
# get 20 s, so a hang costs less.
LIMIT_S=60
BLOCKING_LIMIT_S=20
LONG_LIMIT_S=600
# The 2-hour take's bound on the peak resident set (common practice, no
# source). The take is 57.6 M samples; held whole as floats it would take
# 230 MB (derived), so a reader that does not stream fails it.
LONG_RSS_LIMIT_KB=204800

WORK=$(mktemp -d "${TMPDIR:-/tmp}/plumb-torture.XXXXXX") || exit 2
MOUNTED=""  # the read-only tmpfs, while mounted
RUNNING=""  # background writers started here and not yet waited for

cleanup() {
  for pid in $RUNNING; do
    kill "$pid" 2>/dev/null
    wait "$pid" 2>/dev/null
  done
  if [ -n "$MOUNTED" ]; then
    umount "$MOUNTED" 2>/dev/null || umount -l "$MOUNTED" 2>/dev/null
  fi
  rm -rf --one-file-system "$WORK"
}
trap cleanup EXIT
trap 'exit 130' INT TERM

missing=""
[ -x "$PLUMB" ] && [ -f "$BUILD_DIR/plumb.lv2/plumb.so" ] ||
  missing="$missing $BUILD_DIR/plumb and plumb.lv2 (make all)"
command -v sox >/dev/null 2>&1 || missing="$missing sox (apt-get install sox)"
command -v timeout >/dev/null 2>&1 || missing="$missing timeout (coreutils)"
"$PYTHON" -c 'import numpy' 2>/dev/null ||
  missing="$missing $PYTHON with numpy (python3-numpy)"
if [ -n "$missing" ]; then
  fail "torture: missing:$missing"
  finish
fi

IN=$WORK/in
mkdir "$IN" || exit 2
if ! "$PYTHON" "$ROOT/tests/hosts/torture/make_inputs.py" "$IN"; then
  fail "torture: could not write the takes with tests/hosts/torture/make_inputs.py"
  finish
fi
GOOD=$IN/good.wav

# ------------------------------------------------------------ helpers

# say TEXT...: echo without the backslash escapes dash's echo expands
# (the command's escaped output holds "\n", "\x1b" ...).
say() {
  printf '%s\n' "$*"
}

# run_plumb TAG LIMIT ARGS...: plumb ARGS under timeout, stdin from
# /dev/null, stdout and stderr in $WORK/TAG.out and .err; sets status.
run_plumb() {
  tag=$1 limit=$2
  shift 2
  timeout -k 5 "$limit" "$PLUMB" "$@" </dev/null \
    >"$WORK/$tag.out" 2>"$WORK/$tag.err"
  status=$?
}

show_err() {
  sed -n '1,12s/^/      /p' "$WORK/$1.err"
}

# survived TAG: no hang, no crash, no sanitizer report or stack trace, no
# "(null)" (what glibc prints for a null string) in the output.
survived() {
  if [ "$status" -eq 124 ] || [ "$status" -eq 137 ]; then
    say "hung: killed by timeout after $limit s (exit status $status); stderr:"
    show_err "$1"
    return 1
  fi
  # tests/sanitize/run.sh makes a sanitizer's finding exit 86.
  if [ "$status" -eq 86 ]; then
    say "a sanitizer's finding: exit status 86; stderr:"
    show_err "$1"
    return 1
  fi
  if [ "$status" -ge 128 ]; then
    say "crashed: exit status $status (signal $((status - 128))); stderr:"
    show_err "$1"
    return 1
  fi
  if grep -q -E 'Sanitizer|runtime error:|^ *#[0-9]+ 0x[0-9a-f]|Segmentation fault|Aborted|core dumped|Traceback|backtrace' \
    "$WORK/$1.err"; then
    say "a sanitizer report or stack trace on stderr (exit status $status):"
    show_err "$1"
    return 1
  fi
  if grep -q -F '(null)' "$WORK/$1.err" "$WORK/$1.out"; then
    say "\"(null)\" in the output:"
    grep -h -F '(null)' "$WORK/$1.err" "$WORK/$1.out" | head -n 3
    return 1
  fi
}

# one_line TAG NAME...: stderr is one line, starting "plumb: " (the
# prefix docs/command.md gives every error), holding one of the NAMEs.
one_line() {
  tag=$1
  shift
  lines=$(grep -c '' "$WORK/$tag.err")
  if [ "$lines" -ne 1 ]; then
    say "$lines lines on stderr, expected one:"
    show_err "$tag"
    return 1
  fi
  if ! grep -q '^plumb: ' "$WORK/$tag.err"; then
    say "stderr does not start with 'plumb: ': $(cat "$WORK/$tag.err")"
    return 1
  fi
  for wanted_name; do
    grep -q -F -- "$wanted_name" "$WORK/$tag.err" && return 0
  done
  say "the line names none of [$*]: $(cat "$WORK/$tag.err")"
  return 1
}

# refused TAG NAME...: exit status 3 (docs/command.md: "a take that could
# not be read") and one line naming the file.
refused() {
  if [ "$status" -ne 3 ]; then
    say "exit status $status, expected 3; stderr:"
    show_err "$1"
    return 1
  fi
  one_line "$@"
}

# row TAG LABEL [renamed]: "NOTES FLAGGED UNPITCHED" of LABEL in the
# summary of TAG (with "renamed": of LABEL-N when there is no LABEL); a
# line "LABEL ... 0 notes" or "no notes" counts as "0 0 0".
row() {
  counts=$("$PYTHON" "$SUMMARY" "row${3:+-$3}" "$WORK/$1.out" "$2")
  case $? in
    0) say "$counts" ;;
    4) say "listed more than once" ; return 1 ;;
    *)
      if grep -F -- "$2" "$WORK/$1.out" | grep -q -i -E '(^|[^0-9])0 notes|no notes'; then
        say "0 0 0"
      else
        say "not listed"
        return 1
      fi
      ;;
  esac
}

# listed_with TAG LABEL COUNTS [renamed]: the summary's counts row for
# LABEL.
listed_with() {
  got=$(row "$1" "$2" "${4:-}")
  if [ "$got" != "$3" ]; then
    say "the summary's row for '$2': $got; expected notes, flagged, unpitched $3"
    sed -n '1,30s/^/      /p' "$WORK/$1.out"
    return 1
  fi
}

# log_holds DIR LABEL NOTES [renamed]: the one log in DIR whose run.json
# has take_label LABEL (or LABEL-N, with "renamed") holds exactly the
# notes NOTES ("NOTE VERDICT", rows joined by "; ").
log_holds() {
  got=$("$PYTHON" "$SUMMARY" "log${4:+-$4}" "$1" "$2" | paste -s -d ';' - | sed 's/;/; /g')
  if [ "$got" != "$3" ]; then
    say "the log of '$2' in $1 holds: '$got'; expected '$3'"
    return 1
  fi
}

# good_survives TAG DIR: the good take (452 Hz: A4, +46.6 cents, sharp
# beyond the default 10-cent tolerance; make_inputs.py) kept its log with
# its one note, and the summary lists it with 1 note, 1 flagged.
good_survives() {
  log_holds "$2" good "A4 sharp" || return 1
  listed_with "$1" good "1 1 0"
}

# outcome NAME TEXT: an information line for the reader, not a check
# (to the script's stdout, past check's capture).
exec 3>&1
outcome() {
  say "#   $1: $2" >&3
}

# clean_exit TAG: exit status 0 and nothing on stderr.
clean_exit() {
  if [ "$status" -ne 0 ] || [ -s "$WORK/$1.err" ]; then
    say "exit status $status, expected 0 and nothing on stderr; stderr:"
    show_err "$1"
    return 1
  fi
}

# ------------------------------------------------------------ 1. broken files

# broken NAME FILE LABEL RULE: scans the good take and FILE into a new
# folder, in that order; RULE is one of
#   refuse       refused: exit 3, one line naming FILE;
#   refuse-or-0  refused, or a take of 0 notes: exit 0, nothing on stderr;
#   warn-or-refuse  refused, or analysed with its note and one line that
#                says the file is shorter than its header (docs/command.md
#                gives no status for a warning: 0 or 3);
#   read-or-refuse  refused, or analysed (exit 0) with its note, at most one
#                line on stderr naming it.
broken() {
  name=$1 file=$2 label=$3 rule=$4
  tag=$(say "$label" | tr -c 'A-Za-z0-9\n' _)
  out=$WORK/out-$tag
  run_plumb "$tag" "$LIMIT_S" scan -j 1 -o "$out" "$GOOD" "$file"
  check "$name: no crash, no hang" survived "$tag"
  check "$name: the good take in the same batch keeps its log and its note" \
    good_survives "$tag" "$out"
  case $rule in
    refuse) text="refused: exit 3, one line naming it" ;;
    refuse-or-0) text="refused with one line naming it, or read as 0 notes (exit 0)" ;;
    warn-or-refuse) text="refused with one line, or analysed (A4 sharp) with one line saying it is truncated" ;;
    read-or-refuse) text="refused with one line, or analysed: exit 0, its note A4 sharp" ;;
  esac
  check "$name: $text" broken_rule "$tag" "$label" "$rule" "$out"
}

broken_rule() {
  tag=$1 label=$2 rule=$3 out=$4
  if [ "$status" -eq 3 ] && [ "$(grep -c '' "$WORK/$tag.err")" -eq 1 ] &&
    [ "$(row "$tag" "$label")" = "not listed" ]; then
    outcome "$label" "refused: $(cat "$WORK/$tag.err")"
    # A take with no notes leaves no log (docs/log-format.md), so "cannot
    # read its log" is no reason to refuse a take.
    if grep -q 'its log' "$WORK/$tag.err"; then
      say "refused for its log, not for the input: $(cat "$WORK/$tag.err")"
      return 1
    fi
    one_line "$tag" "$label"
    return
  fi
  case $rule in
    refuse)
      refused "$tag" "$label"
      ;;
    refuse-or-0)
      if [ "$status" -ne 0 ] || [ -s "$WORK/$tag.err" ]; then
        say "neither refused (exit 3, one line) nor read as 0 notes (exit 0," \
          "stderr empty): exit status $status; stderr:"
        show_err "$tag"
        return 1
      fi
      listed_with "$tag" "$label" "0 0 0"
      ;;
    warn-or-refuse)
      if [ "$status" -ne 0 ] && [ "$status" -ne 3 ]; then
        say "exit status $status, expected 0 or 3"
        return 1
      fi
      one_line "$tag" "$label" || return 1
      if ! grep -q -i -E 'truncat|shorter|incomplete|ends early|ended early|cut off|disagree' "$WORK/$tag.err"; then
        say "analysed, but the line does not say the file is truncated:" \
          "$(cat "$WORK/$tag.err")"
        return 1
      fi
      log_holds "$out" "$label" "A4 sharp" || return 1
      outcome "$label" "analysed, with: $(cat "$WORK/$tag.err")"
      ;;
    read-or-refuse)
      if [ "$status" -ne 0 ]; then
        say "exit status $status, neither refused (3, one line) nor read (0); stderr:"
        show_err "$tag"
        return 1
      fi
      if [ -s "$WORK/$tag.err" ]; then
        one_line "$tag" "$label" || return 1
      fi
      log_holds "$out" "$label" "A4 sharp" || return 1
      listed_with "$tag" "$label" "1 1 0"
      ;;
  esac
}

say "# 1. broken files (each scanned after the good take)"
broken "empty file" "$IN/empty.wav" empty refuse
broken "header-only WAV (0 frames)" "$IN/header-only.wav" header-only refuse-or-0
# Half the data and three bytes into the next sample: the header claims
# 48000 frames.
broken "WAV truncated mid-sample" "$IN/truncated.wav" truncated warn-or-refuse
broken "header claims twice the data there is" "$IN/lies-bigger.wav" lies-bigger warn-or-refuse
# The first half holds 0.5 s of the 452 Hz tone: still one A4 sharp note.
broken "header claims half the data there is" "$IN/lies-smaller.wav" lies-smaller read-or-refuse
broken "header claims 0xFFFFFFFF bytes (a writer that could not seek)" \
  "$IN/lies-ffffffff.wav" lies-ffffffff read-or-refuse
broken "64 KiB of random bytes named .wav" "$IN/random.wav" random refuse
broken "a text file named .wav" "$IN/text.wav" text refuse
mkdir "$IN/a-folder.wav"
broken "a folder given as a file" "$IN/a-folder.wav" a-folder refuse
broken "a missing file" "$IN/missing.wav" missing refuse
# ENOTDIR: the path goes through a regular file.
broken "a path through a regular file" "$GOOD/inner.wav" inner refuse

# Unreadable for its reader: root reads a chmod 000 file, so the scan runs
# as nobody (setpriv, util-linux).
locked_case() {
  if ! command -v setpriv >/dev/null 2>&1; then
    pass "skipped: unreadable file (chmod 000): no setpriv to drop root"
    return
  fi
  chmod 755 "$WORK" "$IN" || return
  cp "$GOOD" "$IN/locked.wav" && chmod 000 "$IN/locked.wav"
  mkdir -m 777 "$WORK/out-locked" "$WORK/out-nobody"
  if ! timeout -k 5 "$LIMIT_S" setpriv --reuid=65534 --regid=65534 \
    --clear-groups "$PLUMB" scan -j 1 -o "$WORK/out-nobody" "$GOOD" \
    </dev/null >"$WORK/nobody.out" 2>"$WORK/nobody.err"; then
    pass "skipped: unreadable file (chmod 000): plumb does not run as nobody here ($(head -n 1 "$WORK/nobody.err"))"
    return
  fi
  timeout -k 5 "$LIMIT_S" setpriv --reuid=65534 --regid=65534 \
    --clear-groups "$PLUMB" scan -j 1 -o "$WORK/out-locked" "$GOOD" \
    "$IN/locked.wav" </dev/null >"$WORK/locked.out" 2>"$WORK/locked.err"
  status=$? limit=$LIMIT_S
  check "unreadable file (chmod 000, run as nobody): no crash, no hang" survived locked
  check "unreadable file (chmod 000, run as nobody): the good take keeps its log and its note" \
    good_survives locked "$WORK/out-locked"
  check "unreadable file (chmod 000, run as nobody): refused, exit 3, one line naming it" \
    refused locked locked
}
locked_case

# ------------------------------------------------------------ 2. FIFO, stdin

say "# 2. FIFOs and standard input"
mkfifo "$IN/fifo-idle.wav" "$IN/fifo-fed.wav" || exit 2
# No writer: an open() for reading would wait for one for ever.
broken_fifo() {
  run_plumb fifo-idle "$BLOCKING_LIMIT_S" scan -j 1 -o "$WORK/out-fifo-idle" \
    "$GOOD" "$IN/fifo-idle.wav"
  check "FIFO with no writer: no crash, no hang ($BLOCKING_LIMIT_S s)" survived fifo-idle
  check "FIFO with no writer: the good take keeps its log and its note" \
    good_survives fifo-idle "$WORK/out-fifo-idle"
  check "FIFO with no writer: refused, exit 3, one line naming it" \
    refused fifo-idle fifo-idle
}
broken_fifo

# With a writer: the E4 take (338.6 Hz, E4 +46.5 cents: sharp) flows in
# once. Either refused, or read once (a FIFO cannot be read twice).
read_or_refused() {
  tag=$1 out=$2 notes=$3
  shift 3
  if [ "$status" -eq 3 ] && [ "$(grep -c '' "$WORK/$tag.err")" -eq 1 ]; then
    outcome "$tag" "refused: $(cat "$WORK/$tag.err")"
    # The stream is a WAV that sox wrote: that is no reason to give.
    if grep -q -i 'format not recognised' "$WORK/$tag.err"; then
      say "refused with a false reason (the stream is a valid WAV):" \
        "$(cat "$WORK/$tag.err")"
      return 1
    fi
    one_line "$tag" "$@"
    return
  fi
  if [ "$status" -ne 0 ]; then
    say "exit status $status: neither refused (3, one line) nor read (0); stderr:"
    show_err "$tag"
    return 1
  fi
  got=$(cd "$out" 2>/dev/null && for log in *.notes.csv; do
    [ "$log" = good.notes.csv ] || sed 1d "$log" | cut -d , -f 5,25
  done | paste -s -d ';' -)
  if [ "$got" != "$notes" ]; then
    say "read, but its log holds notes '$got' (note,verdict), expected '$notes':"
    ls -A "$out" | sed 's/^/      /'
    return 1
  fi
  outcome "$tag" "read: notes $got"
}

timeout 30 sh -c 'cat "$1" >"$2"' sh "$IN/e4sharp.wav" "$IN/fifo-fed.wav" &
writer=$!
RUNNING=$writer
run_plumb fifo-fed "$BLOCKING_LIMIT_S" scan -j 1 -o "$WORK/out-fifo-fed" \
  "$GOOD" "$IN/fifo-fed.wav"
kill "$writer" 2>/dev/null
wait "$writer" 2>/dev/null
RUNNING=""
check "FIFO with a writer: no crash, no hang ($BLOCKING_LIMIT_S s)" survived fifo-fed
check "FIFO with a writer: the good take keeps its log and its note" \
  good_survives fifo-fed "$WORK/out-fifo-fed"
check "FIFO with a writer: refused with one line, or read once (E4 sharp)" \
  read_or_refused fifo-fed "$WORK/out-fifo-fed" "E4,sharp" fifo-fed

# stdin_run TAG FILE...: sox streams the E4 take (a pipe: no seeking)
# into plumb scan FILE...
stdin_run() {
  tag=$1
  shift
  limit=$BLOCKING_LIMIT_S
  sox "$IN/e4sharp.wav" -t wav - 2>/dev/null |
    timeout -k 5 "$limit" "$PLUMB" scan -j 1 -o "$WORK/out-$tag" "$@" \
      >"$WORK/$tag.out" 2>"$WORK/$tag.err"
  status=$?
}
stdin_run stdin-dash "$GOOD" -
check "standard input as '-': no crash, no hang" survived stdin-dash
check "standard input as '-': the good take keeps its log and its note" \
  good_survives stdin-dash "$WORK/out-stdin-dash"
check "standard input as '-': refused with one line, or read (E4 sharp)" \
  read_or_refused stdin-dash "$WORK/out-stdin-dash" "E4,sharp" \
  "'-'" '-:' stdin 'standard input'
# docs/command.md: standard input's label is "stdin", and /dev/stdin's
# file name is stdin too.
stdin_listed() {
  [ "$status" -ne 0 ] || listed_with "$1" stdin "1 1 0"
}
check "standard input as '-': when read, listed as 'stdin' with its note" \
  stdin_listed stdin-dash
stdin_run dev-stdin "$GOOD" /dev/stdin
check "/dev/stdin (a pipe): no crash, no hang" survived dev-stdin
check "/dev/stdin (a pipe): the good take keeps its log and its note" \
  good_survives dev-stdin "$WORK/out-dev-stdin"
check "/dev/stdin (a pipe): refused with one line, or read (E4 sharp)" \
  read_or_refused dev-stdin "$WORK/out-dev-stdin" "E4,sharp" /dev/stdin
check "/dev/stdin (a pipe): when read, listed as 'stdin' with its note" \
  stdin_listed dev-stdin

# ------------------------------------------------------------ 3. sample rates

say "# 3. sample rates"
# Inside 8 .. 384 kHz: the 452 Hz tone is one A4 sharp note at any rate.
rate_ok() {
  [ "$status" -eq 0 ] && [ ! -s "$WORK/$1.err" ] || {
    say "exit status $status; stderr:"
    show_err "$1"
    return 1
  }
  log_holds "$WORK/out-$1" "$1" "A4 sharp" || return 1
  listed_with "$1" "$1" "1 1 0"
}
for rate_hz in 8000 11025 12000 16000 22050 384000; do
  run_plumb "rate-$rate_hz" "$LIMIT_S" scan -j 1 -o "$WORK/out-rate-$rate_hz" \
    "$IN/rate-$rate_hz.wav"
  check "$rate_hz Hz: no crash, no hang" survived "rate-$rate_hz"
  check "$rate_hz Hz (inside 8..384 kHz): exit 0, one note A4 sharp" \
    rate_ok "rate-$rate_hz"
done
# Outside: refused with a line that names the take and gives the reason.
rate_refused() {
  refused "$1" "$1" || return 1
  if ! grep -q -E 'Hz|rate' "$WORK/$1.err"; then
    say "the line does not say it is the sample rate: $(cat "$WORK/$1.err")"
    return 1
  fi
}
for rate_hz in 0 1 2 7999 384001 1000000; do
  run_plumb "rate-$rate_hz" "$LIMIT_S" scan -j 1 -o "$WORK/out-rate-$rate_hz" \
    "$GOOD" "$IN/rate-$rate_hz.wav"
  check "$rate_hz Hz: no crash, no hang" survived "rate-$rate_hz"
  check "$rate_hz Hz (outside 8..384 kHz): refused, exit 3, one line naming it and the rate" \
    rate_refused "rate-$rate_hz"
  check "$rate_hz Hz: the good take keeps its log and its note" \
    good_survives "rate-$rate_hz" "$WORK/out-rate-$rate_hz"
done

# ------------------------------------------------------------ 4. 64 channels

say "# 4. 64 channels"
run_plumb multi "$LIMIT_S" scan -j 2 -o "$WORK/out-multi" "$IN/multi64.wav"
check "64 channels: no crash, no hang" survived multi
check "64 channels: exit 0, nothing on stderr" clean_exit multi
# docs/command.md: channel N is the track LABEL-chN. Channel k (from 1)
# holds MIDI note 29 + k, in tune (make_inputs.py): its name in scientific
# pitch notation, sharps only (docs/log-format.md), C4 = MIDI 60.
multi_tracks() {
  "$PYTHON" - "$ROOT/tests/hosts/torture" "$WORK/out-multi" "$WORK/multi.out" <<'EOF'
import csv
import json
import os
import sys

sys.path.insert(0, sys.argv[1])
import summary

folder, output = sys.argv[2:]
names = ["C", "C#", "D", "D#", "E", "F", "F#", "G", "G#", "A", "A#", "B"]
rows = {}
for label, *counts in summary.counts(summary.read_lines(output)):
    rows.setdefault(label, []).append(" ".join(counts))
logs = {}
for name in os.listdir(folder):
    if name.endswith(".run.json"):
        run = json.load(open(os.path.join(folder, name)))
        logs.setdefault(run["take_label"], []).append(run["notes_file"])
problems = []
if sum(len(found) for found in rows.values()) != 64:
    problems.append("the summary lists %d tracks, expected 64"
                    % sum(len(found) for found in rows.values()))
for channel in range(1, 65):
    midi = 29 + channel
    label = "multi64-ch%d" % channel
    want = [("%s%d" % (names[midi % 12], midi // 12 - 1), "in-tune")]
    got = None
    if len(logs.get(label, [])) == 1:
        with open(os.path.join(folder, logs[label][0]), newline="") as source:
            got = [(row["note"], row["verdict"]) for row in csv.DictReader(source)]
    if got != want or rows.get(label) != ["1 0 0"]:
        problems.append("%s: logs %r holding %r (expected %r), summary rows %r"
                        % (label, logs.get(label), got, want, rows.get(label)))
if problems:
    sys.exit("\n".join(problems[:10]))
EOF
}
check "64 channels: 64 tracks multi64-ch1 .. -ch64, each listed once, each log its own channel's note" \
  multi_tracks

# ------------------------------------------------------------ 5. two hours

say "# 5. two hours of silence"
LONG=$WORK/long-silence.wav
# 8 kHz 16-bit mono: 115 MB, quick to write; sox's -n is a null input.
if sox -n -r 8000 -c 1 -b 16 "$LONG" trim 0 7200 2>"$WORK/sox.err"; then
  limit=$LONG_LIMIT_S
  started=$(date +%s.%N)
  if [ -x /usr/bin/time ]; then
    /usr/bin/time -v -o "$WORK/long.time" timeout -k 5 "$limit" "$PLUMB" scan \
      -o "$WORK/out-long" "$LONG" </dev/null >"$WORK/long.out" 2>"$WORK/long.err"
    status=$?
    rss_kb=$(sed -n 's/^[[:space:]]*Maximum resident set size (kbytes): //p' "$WORK/long.time")
  else
    # Without GNU time: the children's peak resident set from getrusage.
    "$PYTHON" -c '
import resource, subprocess, sys
status = subprocess.call(sys.argv[2:], stdin=subprocess.DEVNULL,
    stdout=open(sys.argv[1] + ".out", "wb"), stderr=open(sys.argv[1] + ".err", "wb"))
print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)
sys.exit(status if status >= 0 else 128 - status)' "$WORK/long" \
      timeout -k 5 "$limit" "$PLUMB" scan -o "$WORK/out-long" "$LONG" >"$WORK/long.rss"
    status=$?
    rss_kb=$(cat "$WORK/long.rss")
  fi
  ended=$(date +%s.%N)
  seconds=$(say "$started $ended" | awk '{ printf "%.1f", $2 - $1 }')
  say "# 2-hour take (8 kHz mono, $(soxi -D "$LONG") s): exit status $status," \
    "$seconds s, peak resident set ${rss_kb:-?} kB"
  check "2 hours of silence: no crash, no hang ($LONG_LIMIT_S s)" survived long
  check "2 hours of silence: exit 0, nothing on stderr" clean_exit long
  check "2 hours of silence: the summary says 0 notes" listed_with long long-silence "0 0 0"
  long_rss() {
    case $rss_kb in
      '' | *[!0-9]*) say "no peak resident set measured: '$rss_kb'"; return 1 ;;
    esac
    if [ "$rss_kb" -ge "$LONG_RSS_LIMIT_KB" ]; then
      say "peak resident set $rss_kb kB, over $LONG_RSS_LIMIT_KB kB"
      return 1
    fi
  }
  check "2 hours of silence: peak resident set under $LONG_RSS_LIMIT_KB kB (${rss_kb:-?} kB)" long_rss
  rm -f "$LONG"
else
  fail "2 hours of silence: sox could not write the take: $(head -n 1 "$WORK/sox.err")"
fi

# ------------------------------------------------------------ 6. no pitched notes

say "# 6. takes with no pitched note"
# quiet_ok TAG LABEL: exit 0; the summary lists the take with no notes or
# only unpitched ones (docs/command.md: unpitched notes are never flagged),
# and a log, if there is one, holds only unpitched rows; stderr empty or
# one line naming the take (a warning of bad samples, say).
quiet_ok() {
  if [ "$status" -ne 0 ]; then
    say "exit status $status, expected 0; stderr:"
    show_err "$1"
    return 1
  fi
  if [ -s "$WORK/$1.err" ]; then
    one_line "$1" "$2" || return 1
  fi
  got=$(row "$1" "$2") || { say "the summary does not list '$2': $got"; sed 's/^/      /' "$WORK/$1.out"; return 1; }
  set -- "$1" "$2" $got
  if [ "$4" -ne 0 ] || [ "$3" -ne "$5" ]; then
    say "the summary's row for '$2': notes $3, flagged $4, unpitched $5;" \
      "expected no notes but unpitched ones"
    return 1
  fi
  if [ "$3" -gt 0 ]; then
    verdicts=$("$PYTHON" "$SUMMARY" log "$WORK/out-$1" "$2" | cut -d ' ' -f 2 | sort -u)
    [ "$verdicts" = unpitched ] || {
      say "its log's verdicts: $verdicts"
      return 1
    }
  fi
  outcome "$2" "notes $3, unpitched $5"
}
QUIET="nan inf silence noise tone-15khz click hit"
for label in $QUIET; do
  run_plumb "$label" "$LIMIT_S" scan -j 1 -o "$WORK/out-$label" "$IN/$label.wav"
  check "$label: no crash, no hang" survived "$label"
  check "$label: exit 0, no notes or only unpitched ones" quiet_ok "$label" "$label"
done
set --
for label in $QUIET; do
  set -- "$@" "$IN/$label.wav"
done
run_plumb strict "$LIMIT_S" scan -j 2 --strict -o "$WORK/out-strict" "$GOOD" "$@"
check "--strict, the flagged take and the 7 takes without pitched notes: no crash, no hang" \
  survived strict
strict_one() {
  if [ "$status" -ne 1 ]; then
    say "exit status $status, expected 1 (docs/command.md: a flagged note under --strict); stderr:"
    show_err strict
    return 1
  fi
}
check "--strict, the flagged take and the 7 takes without pitched notes: exit 1, not 3" strict_one
check "--strict batch: the good take keeps its log and its note" \
  good_survives strict "$WORK/out-strict"

# ------------------------------------------------------------ 7. names

say "# 7. hostile names"
NAMES=$WORK/names
mkdir "$NAMES" || exit 2
# The names, as bytes (the 255-byte one is NAME_MAX, the longest a Linux
# file name may be; 300 bytes cannot be made, see below).
"$PYTHON" - "$GOOD" "$NAMES" <<'EOF'
import os
import shutil
import sys
good, folder = sys.argv[1], os.fsencode(sys.argv[2])
names = [b"with space.wav", b"it's \"quoted\".wav", b"$HOME $(id) `id`.wav",
         b"back\\slash.wav", b"-dash.wav", b"tab\there.wav", b"new\nline.wav",
         b"\x1b[31mred\x1b[0m.wav", b"c1-\x9b31m.wav",
         "\u97f3".encode() * 83 + b"ab.wav"]
assert len(names[-1]) == 255
for name in names:
    shutil.copy(good, os.path.join(folder, name))
EOF
NAME_COUNT=10

# names_logs: every take's log holds its own note: A4 sharp (the labels
# are the names less ".wav", docs/command.md; the longest may be cut, at
# a character boundary, so its take_label is a prefix of its label).
names_logs() {
  "$PYTHON" - "$NAMES" "$1" <<'EOF'
import csv
import json
import os
import sys

takes, logs = (os.fsencode(a) for a in sys.argv[1:])

def as_json_text(raw):
    # docs/log-format.md: bytes that are not UTF-8 are written as the
    # Latin-1 character of the same number.
    text = raw.decode("utf-8", "surrogateescape")
    return "".join(chr(ord(c) - 0xDC00) if 0xDC80 <= ord(c) <= 0xDCFF else c
                   for c in text)

def shown(name):
    return repr(name) if len(name) < 40 else "%r... (%d bytes)" % (name[:9], len(name))

runs = []
for name in os.listdir(logs):
    if name.endswith(b".run.json"):
        runs.append(json.load(open(os.path.join(logs, name), encoding="utf-8")))
problems = []
for name in sorted(os.listdir(takes)):
    label = as_json_text(name[:-4])
    mine = [run for run in runs if run.get("take_label") == label or
            (len(name) > 200 and run.get("take_label") and
             label.startswith(run["take_label"]))]
    if len(mine) != 1:
        problems.append("%s: %d logs with its label" % (shown(name), len(mine)))
        continue
    rows = list(csv.DictReader(open(os.path.join(logs, os.fsencode(mine[0]["notes_file"])))))
    got = [(row["note"], row["verdict"]) for row in rows]
    if got != [("A4", "sharp")]:
        problems.append("%s: log holds %r, expected one A4 sharp" % (shown(name), got))
matched = set()
for name in os.listdir(takes):
    matched.add(as_json_text(name[:-4]))
strays = [run.get("take_label") for run in runs if run.get("take_label") not in matched]
if problems and strays:
    problems.append("logs whose take_label is no take's label: %s"
                    % ", ".join("...%r (%d bytes as UTF-8)" % (label[-4:], len(label.encode()))
                                for label in strays))
if problems:
    sys.exit("\n".join(problems))
EOF
}
# names_table TAG: the counts table has one row a take and the flagged
# table one row a take, each A4 sharp: a raw newline would split a row.
names_table() {
  rows=$("$PYTHON" "$SUMMARY" rows "$WORK/$1.out")
  flagged=$("$PYTHON" "$SUMMARY" flagged "$WORK/$1.out" | sort | uniq -c | sed 's/^ *//')
  if [ "$rows" -ne "$NAME_COUNT" ] || [ "$flagged" != "$NAME_COUNT A4 sharp" ]; then
    say "$rows rows in the counts table and flagged '$flagged';" \
      "expected $NAME_COUNT and '$NAME_COUNT A4 sharp':"
    sed -n '1,40s/^/      /p' "$WORK/$1.out" | cat -v
    return 1
  fi
}
clean_output() {
  "$PYTHON" "$SUMMARY" clean "$WORK/$1.out" "$WORK/$1.err"
}
for jobs in 1 2; do
  tag=names-j$jobs
  (cd "$NAMES" && timeout -k 5 "$LIMIT_S" "$PLUMB" scan -j "$jobs" \
    -o "$WORK/out-$tag" -- *) </dev/null >"$WORK/$tag.out" 2>"$WORK/$tag.err"
  status=$? limit=$LIMIT_S
  check "hostile names, -j$jobs: no crash, no hang" survived "$tag"
  check "hostile names, -j$jobs: exit 0, nothing on stderr" clean_exit "$tag"
  check "hostile names, -j$jobs: each take's log holds its own note" names_logs "$WORK/out-$tag"
  check "hostile names, -j$jobs: one table row a take" names_table "$tag"
  check "hostile names, -j$jobs: output is UTF-8 with no raw control character (ESC, C1, tab, newline in a row)" \
    clean_output "$tag"
done
run_plumb names-report "$LIMIT_S" report "$WORK/out-names-j1"
check "report of the hostile names' logs: no crash, no hang" survived names-report
check "report of the hostile names' logs: output is UTF-8 with no raw control character" \
  clean_output names-report
(cd "$NAMES" && timeout -k 5 "$LIMIT_S" "$PLUMB" scan -o "$WORK/out-dot-dash" ./-dash.wav) \
  </dev/null >"$WORK/dot-dash.out" 2>"$WORK/dot-dash.err"
status=$? limit=$LIMIT_S
check "leading dash given as ./-dash.wav: no crash, no hang" survived dot-dash
dot_dash() {
  exits_zero "$status" "$WORK/dot-dash.err" || return 1
  log_holds "$WORK/out-dot-dash" -dash "A4 sharp"
}
check "leading dash given as ./-dash.wav: exit 0, its log holds A4 sharp" dot_dash
if (: >"$NAMES/$(printf '%0300d' 0).wav") 2>/dev/null; then
  fail "a 300-byte name: the file system took it; this test expects NAME_MAX 255"
else
  pass "skipped: a 300-byte UTF-8 name: Linux file names hold at most 255 bytes (NAME_MAX); the 255-byte one is above"
fi

# Names that sanitise to one stem (docs/log-format.md: every byte
# outside A-Z a-z 0-9 . _ - becomes _): "a b" and "a_b", "c?d" and "c*d".
# The A4 take (452 Hz) and the E4 take (338.6 Hz) tell the logs apart.
# docs/command.md: the later of two clashing tracks may be relabelled
# LABEL-2, so a label or its LABEL-N is looked for.
SAME=$WORK/same
mkdir "$SAME" || exit 2
cp "$GOOD" "$SAME/a b.wav" && cp "$IN/e4sharp.wav" "$SAME/a_b.wav" &&
  cp "$GOOD" "$SAME/c?d.wav" && cp "$IN/e4sharp.wav" "$SAME/c*d.wav" || exit 2
same_stem() {
  out=$WORK/out-$1
  exits_zero "$status" "$WORK/$1.err" || return 1
  log_holds "$out" "a b" "A4 sharp" renamed &&
    log_holds "$out" a_b "E4 sharp" renamed &&
    log_holds "$out" "c?d" "A4 sharp" renamed &&
    log_holds "$out" "c*d" "E4 sharp" renamed || return 1
  for label in "a b" a_b "c?d" "c*d"; do
    listed_with "$1" "$label" "1 1 0" renamed || return 1
  done
  rows=$("$PYTHON" "$SUMMARY" rows "$WORK/$1.out")
  if [ "$rows" -ne 4 ]; then
    say "$rows rows in the counts table, expected 4"
    return 1
  fi
}
for jobs in 1 2; do
  tag=same-j$jobs
  run_plumb "$tag" "$LIMIT_S" scan -j "$jobs" -o "$WORK/out-$tag" \
    "$SAME/a b.wav" "$SAME/a_b.wav" "$SAME/c?d.wav" "$SAME/c*d.wav"
  check "names with one stem (a b, a_b, c?d, c*d), -j$jobs: no crash, no hang" survived "$tag"
  check "names with one stem (a b, a_b, c?d, c*d), -j$jobs: exit 0, every log survives with its own note, every row its own count" \
    same_stem "$tag"
done

# ------------------------------------------------------------ 8. logs in the way

say "# 8. stale logs, symlinks, unwritable folders"
# A stale log: a/take.wav (A4 sharp) then b/take.wav (all NaN) into one
# folder; the second summary is of the NaN take alone (docs/command.md:
# the command reads back the log its own process wrote).
mkdir "$WORK/a" "$WORK/b" && cp "$GOOD" "$WORK/a/take.wav" &&
  cp "$IN/nan.wav" "$WORK/b/take.wav" || exit 2
run_plumb stale-1 "$LIMIT_S" scan -o "$WORK/out-stale" "$WORK/a/take.wav"
run_plumb stale-2 "$LIMIT_S" scan -o "$WORK/out-stale" "$WORK/b/take.wav"
check "stale log: second scan, no crash, no hang" survived stale-2
stale() {
  exits_zero "$status" "$WORK/stale-2.err" || return 1
  listed_with stale-2 take "0 0 0" || return 1
  if [ -n "$("$PYTHON" "$SUMMARY" flagged "$WORK/stale-2.out")" ]; then
    say "the second summary shows flagged notes:"
    sed 's/^/      /' "$WORK/stale-2.out"
    return 1
  fi
}
check "stale log: the NaN take's summary says 0 notes, exit 0, not the earlier run's note" stale

# A symlink at the log's name, to a victim outside the folder. Whatever
# the scan does, the victim must not change.
mkdir "$WORK/out-link" "$WORK/victims" || exit 2
printf 'precious: not a log\n' >"$WORK/victims/notes"
printf '{"precious": true}\n' >"$WORK/victims/run"
cp "$WORK/victims/notes" "$WORK/victims/notes.orig"
cp "$WORK/victims/run" "$WORK/victims/run.orig"
ln -s "$WORK/victims/notes" "$WORK/out-link/prey.notes.csv"
ln -s "$WORK/victims/run" "$WORK/out-link/prey.run.json"
cp "$GOOD" "$IN/prey.wav"
run_plumb link "$LIMIT_S" scan -j 1 -o "$WORK/out-link" "$GOOD" "$IN/prey.wav"
check "symlink at the log's name: no crash, no hang" survived link
victims_intact() {
  cmp "$WORK/victims/notes.orig" "$WORK/victims/notes" &&
    cmp "$WORK/victims/run.orig" "$WORK/victims/run"
}
check "symlink at the log's name: the files it points at are untouched, byte for byte" victims_intact
check "symlink at the log's name: the good take keeps its log and its note" \
  good_survives link "$WORK/out-link"
link_outcome() {
  if [ "$status" -eq 3 ]; then
    one_line link prey
    return
  fi
  exits_zero "$status" "$WORK/link.err" || return 1
  listed_with link prey "1 1 0" || return 1
  log_holds "$WORK/out-link" prey "A4 sharp"
}
check "symlink at the log's name: refused with one line naming it, or logged elsewhere and listed with its note" \
  link_outcome

# Log folders that cannot be made or written (docs/command.md: exit 3).
: >"$WORK/a-file"
run_plumb under-file "$LIMIT_S" scan -o "$WORK/a-file/logs" "$GOOD"
check "-o under a regular file: no crash, no hang" survived under-file
check "-o under a regular file: exit 3, one line naming the folder" \
  refused under-file "$WORK/a-file/logs"
RO=$WORK/read-only
mkdir "$RO" || exit 2
if mount -t tmpfs -o ro,size=64k,mode=0755 tmpfs "$RO" 2>"$WORK/mount.err"; then
  MOUNTED=$RO
  run_plumb ro-new "$LIMIT_S" scan -o "$RO/logs" "$GOOD"
  check "-o a folder to make on a read-only tmpfs: no crash, no hang" survived ro-new
  check "-o a folder to make on a read-only tmpfs: exit 3, one line naming it" \
    refused ro-new "$RO/logs"
  run_plumb ro-root "$LIMIT_S" scan -o "$RO" "$GOOD"
  check "-o a read-only tmpfs itself: no crash, no hang" survived ro-root
  check "-o a read-only tmpfs itself: exit 3, one line naming the folder or the take" \
    refused ro-root "$RO" good
  umount "$RO" && MOUNTED=""
else
  pass "skipped: read-only log folder: cannot mount a tmpfs here ($(head -n 1 "$WORK/mount.err"))"
fi

# ------------------------------------------------------------ 9. report

say "# 9. plumb report on hostile logs"
GOOD_LOG=$WORK/out-empty/good.notes.csv
if [ ! -f "$GOOD_LOG" ]; then
  fail "report: no good log from case 1 ($GOOD_LOG) to build the folders from"
  finish
fi
HEADER=$(head -n 1 "$GOOD_LOG")
# report_case NAME RULE MAKE: a folder with good.notes.csv (1 note, A4
# sharp, from case 1) and what the shell command MAKE makes in it ($D);
#   refuse       the bad log: one line naming it, exit 3 (docs/command.md,
#                "plumb report DIR"), the good log still shown;
#   refuse-or-0  that, or the bad log shown as 0 notes (exit 0);
#   read-or-refuse  that, or exit 0 with nothing on stderr, the bad log
#                listed (2 rows);
#   warn-cut     a last row cut off before its line break: left out, with
#                one line naming the log (docs/command.md, "plumb report
#                DIR"); the whole row before it counted;
#   refuse-or-skip  that, or passed over: exit 0, nothing on stderr, only
#                the good log listed (it is not a regular file, so not a
#                log docs/log-format.md describes).
report_case() {
  name=$1 rule=$2 make=$3 bad=$4
  D=$WORK/report-$bad
  mkdir "$D" && cp "$GOOD_LOG" "$D/good.notes.csv" && eval "$make" || exit 2
  run_plumb "report-$bad" "$BLOCKING_LIMIT_S" report "$D"
  tag=report-$bad
  check "report, $name: no crash, no hang ($BLOCKING_LIMIT_S s)" survived "$tag"
  check "report, $name: the good log is still shown, 1 note, 1 flagged" listed_with "$tag" good "1 1 0"
  case $rule in
    refuse) text="refused: exit 3, one line naming it" ;;
    refuse-or-0) text="refused with one line naming it, or listed with 0 notes (exit 0)" ;;
    read-or-refuse) text="refused with one line naming it, or listed (exit 0)" ;;
    refuse-or-skip) text="refused with one line naming it, or passed over (exit 0)" ;;
    warn-cut) text="one line naming it, the cut row left out, the whole one counted (1 note, 1 flagged)" ;;
  esac
  check "report, $name: $text" report_rule "$tag" "$rule" "$bad"
  check "report, $name: output is UTF-8 with no raw control character" clean_output "$tag"
}
report_rule() {
  tag=$1 rule=$2 bad=$3
  if [ "$status" -eq 3 ]; then
    outcome "$tag" "refused: $(head -n 1 "$WORK/$tag.err")"
    one_line "$tag" "$bad"
    return
  fi
  case $rule in
    refuse)
      refused "$tag" "$bad"
      ;;
    refuse-or-0)
      clean_exit "$tag" || return 1
      listed_with "$tag" "$bad" "0 0 0"
      ;;
    read-or-refuse)
      clean_exit "$tag" || return 1
      rows=$("$PYTHON" "$SUMMARY" rows "$WORK/$tag.out")
      if [ "$rows" -ne 2 ]; then
        say "read, but the counts table has $rows rows, expected 2 (good and $bad):"
        sed -n '1,20s/^/      /p' "$WORK/$tag.out" | cat -v
        return 1
      fi
      outcome "$tag" "read: $(grep -v '^good ' "$WORK/$tag.out" | grep -E ' [0-9]+ +[0-9]+ +[0-9]+ *$' | cat -v)"
      ;;
    warn-cut)
      if [ "$status" -ne 0 ]; then
        say "exit status $status; stderr:"
        show_err "$tag"
        return 1
      fi
      one_line "$tag" "$bad" || return 1
      listed_with "$tag" "$bad" "1 1 0"
      ;;
    refuse-or-skip)
      clean_exit "$tag" || return 1
      rows=$("$PYTHON" "$SUMMARY" rows "$WORK/$tag.out")
      if [ "$rows" -ne 1 ]; then
        say "exit 0, but the counts table has $rows rows, expected the good log's alone:"
        sed -n '1,20s/^/      /p' "$WORK/$tag.out" | cat -v
        return 1
      fi
      outcome "$tag" "passed over"
      ;;
  esac
}
report_case "random bytes as a log" refuse \
  'head -c 4096 /dev/urandom >"$D/garbage.notes.csv"' garbage
report_case "an empty log" refuse-or-0 ': >"$D/empty.notes.csv"' empty
# docs/log-format.md: the header row, then one row a note: 0 notes.
report_case "a header-only log (0 notes)" refuse-or-0 \
  'printf "%s\n" "$HEADER" >"$D/headonly.notes.csv"' headonly
report_case "a FIFO as a log" refuse-or-skip 'mkfifo "$D/fifo.notes.csv"' fifo
report_case "a log linked to /dev/zero" refuse-or-skip 'ln -s /dev/zero "$D/zero.notes.csv"' zero
report_case "a folder named like a log" refuse-or-skip 'mkdir "$D/folder.notes.csv"' folder
# The good row, then the first 40 bytes of it again with no line break.
report_case "a log whose last row is cut off" warn-cut \
  '{ cat "$GOOD_LOG"; sed -n 2p "$GOOD_LOG" | head -c 40; } >"$D/cut.notes.csv"' cut
report_case "a log with a 1 MB line" read-or-refuse \
  '{ printf "%s\n" "$HEADER"; head -c 1048576 /dev/zero | tr "\\0" 7; echo; } >"$D/long.notes.csv"' long
# A flagged row whose note field holds ESC sequences (a colour, a
# window title): the flagged table shows the note.
report_case "ESC inside a log's note field" read-or-refuse \
  '{ printf "%s\n" "$HEADER"; sed -n 2p "$GOOD_LOG" | sed "s/,A4,/,\x1b[31mA4\x1b]0;title\x07,/"; } >"$D/esc.notes.csv"' esc
# ESC and a newline in a log's file name: report labels by file name.
report_case "ESC and a newline in a log's name" read-or-refuse \
  'cp "$GOOD_LOG" "$D/$(printf "red\033[31m\nname").notes.csv"' red
run_plumb report-file "$LIMIT_S" report "$GOOD"
check "report of a regular file: no crash, no hang" survived report-file
check "report of a regular file: exit 3, one line naming it" refused report-file good.wav
run_plumb report-fifo "$BLOCKING_LIMIT_S" report "$IN/fifo-idle.wav"
check "report of a FIFO: no crash, no hang ($BLOCKING_LIMIT_S s)" survived report-fifo
check "report of a FIFO: exit 3, one line naming it" refused report-fifo fifo-idle

finish
