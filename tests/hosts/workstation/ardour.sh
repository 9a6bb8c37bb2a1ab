#!/bin/sh
# plumb in Ardour 7's headless tools (Debian package ardour: ardour7-lua,
# ardour7-export) on the Dummy backend, no display, no sound card
# (measured on Debian 12, ardour 7.3: both run headless there; see
# docs/hosts.md). Run by `make check-hosts`:
#
#   sh tests/hosts/workstation/ardour.sh BUILD_DIR
#
# 1. record (ardour_record.lua): a new session; an audio track with plumb
#    on it; a take label set through LV2 state by a preset
#    (lv2/plumb-check-label.lv2) before the plugin is put on the track;
#    three steady sines recorded from the backend's generators; the
#    tolerance set to 25 cents; saved.
# 2. reopen (ardour_reopen.lua): the session loaded again, without the
#    preset bundle, so the label can only come from the saved state; the
#    take played back through the plugin; saved.
# 3. export: ardour7-export renders the session (in freewheel).
#
# What each check compares with:
#   - where the log goes and what it is called: docs/log-format.md
#     ("Where the log goes": the state:makePath folder inside the
#     session; "File names": the label's rule, recomputed in
#     ardour_logs.py); the header: docs/log-format.md's column table;
#   - the rows: the generator's frequencies and level from Ardour's
#     source (ardour_common.lua), the MIDI Tuning Standard and
#     1200 * log2(f / target) (Ellis 1885), the tolerance's meaning in
#     docs/ports.md (the sines are 21.31 cents sharp: flagged at the
#     default 10 cents, in tune at 25);
#   - the state: Ardour's own read-back, its session file, and the
#     state.ttl it writes; docs/ports.md, "State";
#   - the export: its length against the session's end that Ardour
#     reports, its peak against -18 dBFS (generator) - 6 dB (the fader
#     this test sets) - 3 dB (Ardour's default equal-power pan law for a
#     mono track on a stereo bus, from memory) = -27 dBFS.
# Every Ardour call runs under `timeout`. Set PLUMB_TEST_KEEP=1 to keep
# the work folder. Prints "ok - ..." / "not ok - ...", then
# "N passed, N failed".

BUILD_DIR=${1:?usage: sh tests/hosts/workstation/ardour.sh BUILD_DIR}
HERE=$(cd "$(dirname "$0")" && pwd) || exit 2
ROOT=$(cd "$HERE/../../.." && pwd) || exit 2
. "$ROOT/tests/lib/checks.sh"
BUNDLE=$(cd "$BUILD_DIR/plumb.lv2" 2>/dev/null && pwd)
PYTHON=/usr/bin/python3
ARDOUR_TIMEOUT_S=60 # a run takes about 5 s; then TERM, and KILL 10 s later
EXPORT_TRIES=3
LABEL="Harbour take 7/é" # as in lv2/plumb-check-label.lv2/take-label.ttl
NAME=harbour             # the session's name


# logs_check ARGS...: the checks of ardour_logs.py (see there).
logs_check() { "$PYTHON" "$HERE/ardour_logs.py" "$@"; }

# ------------------------------------------------------------ set-up

if ! command -v ardour7-lua >/dev/null 2>&1; then
  sh "$ROOT/tools/deps.sh" ardour
fi
if ! command -v ardour7-lua >/dev/null 2>&1; then
  echo "skip - ardour7-lua is not installed (Debian package ardour)"
  echo "0 passed, 0 failed"
  exit 0
fi
if [ -z "$BUNDLE" ] || [ ! -f "$BUNDLE/plumb.so" ] || [ ! -x "$PYTHON" ]; then
  echo "not ok - missing $BUILD_DIR/plumb.lv2/plumb.so (make all) or $PYTHON"
  echo "0 passed, 1 failed"
  exit 1
fi

WORK=$(mktemp -d "${TMPDIR:-/tmp}/plumb-ardour.XXXXXX") || exit 2
if [ "${PLUMB_TEST_KEEP:-0}" = 1 ]; then
  trap 'echo "# kept $WORK"' EXIT
else
  trap 'rm -rf "$WORK"' EXIT
fi
trap 'exit 130' INT TERM

# Ardour gets a home, config and state of its own, and no PLUMB_LOG_DIR,
# so a log that misses the session folder shows up under $WORK.
SESSION=$WORK/session
mkdir -p "$WORK/home" "$WORK/cwd" "$WORK/xdg-state" "$WORK/lv2" || exit 2
HOME=$WORK/home
XDG_CONFIG_HOME=$WORK/home/.config
XDG_CACHE_HOME=$WORK/home/.cache
XDG_DATA_HOME=$WORK/home/.local/share
XDG_STATE_HOME=$WORK/xdg-state
export HOME XDG_CONFIG_HOME XDG_CACHE_HOME XDG_DATA_HOME XDG_STATE_HOME
unset PLUMB_LOG_DIR
# LV2_PATH names folders that hold bundles: one with a link to this
# build's bundle only (no installed plumb), and the preset's folder.
ln -s "$BUNDLE" "$WORK/lv2/plumb.lv2" || exit 2
LV2_WITH_PRESET=$WORK/lv2:$HERE/lv2
LV2_BUILD_ONLY=$WORK/lv2

echo "# $(ardour7-lua -V 2>/dev/null | head -n 1)"

# run_ardour OUT LV2_PATH COMMAND...: COMMAND (an Ardour tool) in
# $WORK/cwd, its output in $WORK/OUT; sets $status.
run_ardour() {
  out=$WORK/$1 lv2_path=$2
  shift 2
  (cd "$WORK/cwd" && LV2_PATH=$lv2_path timeout -k 10 "$ARDOUR_TIMEOUT_S" "$@") \
    >"$out" 2>&1
  status=$?
}

# reported OUT KEY: the value the Lua script printed as "plumb-check KEY".
reported() {
  sed -n "s/^plumb-check $2 //p" "$WORK/$1" | head -n 1
}

# ran_to_end OUT: exit status 0, the script's last line was reached, and
# no wait of the script (rolling, stopped ...) timed out.
ran_to_end() {
  if [ "$status" -ne 0 ] || [ "$(reported "$1" closed)" != true ] ||
    grep -q '^plumb-check [a-z_]* false$' "$WORK/$1"; then
    echo "exit status $status; Ardour said:"
    cat "$WORK/$1"
    return 1
  fi
}

STEM=$(logs_check stem "$LABEL")

# find_log: the labelled log, wherever it landed under $WORK (the session
# folder first); nothing when there is none.
find_log() {
  for where in "$SESSION" "$WORK/cwd" "$WORK/xdg-state" "$WORK/home"; do
    found=$(find "$where" -name "$STEM.notes.csv" 2>/dev/null | head -n 1)
    if [ -n "$found" ]; then
      echo "$found"
      return
    fi
  done
}

# in_session FILE: FILE lies inside the session folder; else say where.
in_session() {
  case $1 in
  "$SESSION"/*) return 0 ;;
  esac
  echo "the log is at ${1:-(nowhere)}, not inside $SESSION"
  grep -h "requested but" "$WORK"/*.out 2>/dev/null | sort -u
  return 1
}

# no_log_outside_session: no plumb log anywhere under $WORK but inside
# the session folder (the stage copies excepted).
no_log_outside_session() {
  stray=$(find "$WORK" -path "$SESSION" -prune -o -path "$WORK/stage-*" -prune \
    -o \( -name '*.notes.csv' -o -name '*.run.json' \) -print)
  if [ -n "$stray" ]; then
    echo "plumb files outside the session folder:"
    echo "$stray"
    return 1
  fi
}

# keep_stage NAME LOG: copy the log and its run.json aside, since the next
# stage writes the same names (docs/log-format.md, "File names").
keep_stage() {
  mkdir -p "$WORK/stage-$1"
  cp "$2" "${2%.notes.csv}.run.json" "$WORK/stage-$1/" 2>/dev/null
}

# has_documented_header LOG: the columns of docs/log-format.md, in order.
has_documented_header() {
  wanted=$(sed -n '/^## notes\.csv/,/^### /s/^| `\([a-z0-9_]*\)` |.*/\1/p' \
    "$ROOT/docs/log-format.md" | paste -s -d , -)
  got=$(head -n 1 "$1")
  if [ -z "$wanted" ] || [ "$got" != "$wanted" ]; then
    echo "header:   $got"
    echo "expected: $wanted"
    return 1
  fi
}

# check_stage_log STAGE VERDICT [--timeline REFERENCE]: the checks every
# stage's log gets; sets $log (empty when there is none).
check_stage_log() {
  stage=$1 verdict=$2
  shift 2
  log=$(find_log)
  check "$stage: the log lands inside the session folder" in_session "$log"
  check "$stage: no plumb log outside the session folder" no_log_outside_session
  if [ -z "$log" ]; then
    fail "$stage: a log named after the take label, $STEM.notes.csv"
    return
  fi
  pass "$stage: a log named after the take label, $STEM.notes.csv"
  keep_stage "$stage" "$log"
  log=$WORK/stage-$stage/$STEM.notes.csv
  check "$stage: the header of docs/log-format.md" has_documented_header "$log"
  # shellcheck disable=SC2086 # NOTE_PORTS is a list of numbers
  check "$stage: one row a recorded note (note, f0, cents, peak), all $verdict" \
    logs_check notes "$log" "$verdict" $NOTE_PORTS "$@"
  check "$stage: run.json has the label, complete" logs_check run \
    "${log%.notes.csv}.run.json" "take_label=\"$LABEL\"" complete=true
}

# ------------------------------------------------------------ 1. record

run_ardour record.out "$LV2_WITH_PRESET" \
  ardour7-lua "$HERE/ardour_record.lua" "$HERE/ardour_common.lua" "$SESSION" "$NAME"
check "record: ardour7-lua creates, records and saves the session" ran_to_end record.out
echo "# Ardour: $(reported record.out sample_rate_hz) Hz," \
  "block $(reported record.out block_frames) frames," \
  "Dummy backend buffer $(reported record.out backend_buffer_frames)"
NOTE_PORTS=$(sed -n 's/^plumb-check note_from system:capture_//p' "$WORK/record.out" |
  paste -s -d ' ' -)
check "record: the take-label preset was applied before the plugin joined the track" \
  [ "$(reported record.out preset)" = "plumb check: take label" ]
# shellcheck disable=SC2086 # NOTE_PORTS is a list of numbers
check "record: three notes were fed to the track" [ "$(set -- $NOTE_PORTS; echo $#)" -eq 3 ]
check_stage_log record sharp

# ------------------------------------------------------------ 2. reopen

run_ardour reopen.out "$LV2_BUILD_ONLY" \
  ardour7-lua "$HERE/ardour_reopen.lua" "$HERE/ardour_common.lua" "$SESSION" "$NAME"
check "reopen: ardour7-lua loads, plays and saves the session" ran_to_end reopen.out
check "reopen: Ardour reads the tolerance back as 25" \
  [ "$(reported reopen.out tolerance_after_reopen)" = 25.0 ]

ardour_file=$SESSION/$NAME.ardour
check "reopen: the session file holds tolerance 25" \
  grep -q '<Port symbol="tolerance" value="25"/>' "$ardour_file"
# Ardour keeps an LV2 plugin's state in plugins/ID/STATE_DIR/state.ttl,
# named by the plugin's <Processor id=...> and its <lv2 state-dir=...>.
processor_id=$(sed -n 's/.*<Processor id="\([0-9]*\)".*unique-id="urn:plumb:intonation".*/\1/p' \
  "$ardour_file" | head -n 1)
state_dir=$(sed -n 's/.*<lv2 .*state-dir="\([^"]*\)".*/\1/p' "$ardour_file" | head -n 1)
state_ttl=$SESSION/plugins/$processor_id/$state_dir/state.ttl
check "reopen: the saved LV2 state ($state_dir/state.ttl) holds the take label" \
  grep -qF "<urn:plumb:takeLabel> \"$LABEL\"" "$state_ttl"
check_stage_log reopen in-tune --timeline "$WORK/stage-record/$STEM.notes.csv"
if [ -f "$WORK/stage-reopen/$STEM.run.json" ]; then
  check "reopen: the plugin ran the take at the restored tolerance, 25" \
    logs_check run "$WORK/stage-reopen/$STEM.run.json" settings.tolerance_cents=25
fi

# ------------------------------------------------------------ 3. export

# Debian's ardour7-export 7.3 now and then aborts ("double free or
# corruption" in ARDOUR::PortExportChannel::~PortExportChannel) or hangs,
# with plumb in the session or not (docs/hosts.md): up to three tries.
try=1
while :; do
  run_ardour export.out "$LV2_BUILD_ONLY" \
    ardour7-export -o "$WORK/export.wav" "$SESSION" "$NAME"
  if [ "$status" -eq 0 ] || [ "$try" -ge "$EXPORT_TRIES" ]; then
    break
  fi
  echo "# ardour7-export, try $try: exit status $status ($(tail -n 1 "$WORK/export.out"))"
  try=$((try + 1))
done
check "export: ardour7-export exits 0 (try $try of $EXPORT_TRIES, status $status)" \
  [ "$status" -eq 0 ]
check "export: a stereo 48 kHz WAV of the session's length, peak -27 dBFS" \
  logs_check wav "$WORK/export.wav" "$(reported reopen.out session_end_sample)" -27.0
check_stage_log export in-tune --timeline "$WORK/stage-record/$STEM.notes.csv"

if [ "$failed" -ne 0 ]; then
  for out in record reopen export; do
    echo "--- $out: Ardour said:"
    grep -v '^plumb-check \|^$' "$WORK/$out.out" | sed 's/^/    # /'
  done
fi
finish
