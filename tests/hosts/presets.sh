#!/bin/sh
# The bundle's presets, through the command: for every presets/*.ttl,
# `plumb scan --preset LABEL` (and by the URI's last part) runs on a short
# tone, and the take's run.json shows every value the preset sets; an
# unknown preset is a usage error (exit 2) that lists the presets.
#
#   sh tests/hosts/presets.sh BUILD_DIR
#
# Needs BUILD_DIR/plumb beside BUILD_DIR/plumb.lv2 (make all), serdi to
# read the preset files, and /usr/bin/python3 with numpy and scipy for the
# test tone.

BUILD_DIR=${1:?usage: sh tests/hosts/presets.sh BUILD_DIR}
cd "$(dirname "$0")/../.." || exit 2
PLUMB=$BUILD_DIR/plumb
PYTHON=/usr/bin/python3

passed=0
failed=0
WORK=$(mktemp -d "${TMPDIR:-/tmp}/plumb-presets.XXXXXX") || exit 1
trap 'rm -rf "$WORK"' EXIT
trap 'exit 130' INT TERM

pass() { passed=$((passed + 1)); echo "ok - $1"; }
fail() { failed=$((failed + 1)); echo "not ok - $1"; }
finish() {
  echo "$passed passed, $failed failed"
  [ "$failed" -eq 0 ]
  exit $?
}

LV2=http://lv2plug.in/ns/lv2core#
PSET=http://lv2plug.in/ns/ext/presets#
RDFS=http://www.w3.org/2000/01/rdf-schema#

# preset_values FILE: "symbol value" lines for the preset's lv2:port
# entries, read from serdi's N-Triples (so the layout of the file does not
# matter). Also "label LABEL", "comment yes", "applies URI".
preset_values() {
  serdi -i turtle -o ntriples "$1" | awk -v lv2="$LV2" -v pset="$PSET" -v rdfs="$RDFS" '
    # the text of the literal in the object position: between the first
    # and the last unescaped quote of the line
    function literal(line,   start, rest, end) {
      start = index(line, "\"")
      rest = substr(line, start + 1)
      end = match(rest, /"(\^\^<[^>]*>|@[A-Za-z-]+)? \.$/)
      return end ? substr(rest, 1, end - 1) : ""
    }
    $2 == "<" lv2 "symbol>" { symbol[$1] = literal($0) }
    $2 == "<" pset "value>" { value[$1] = literal($0) }
    $2 == "<" rdfs "label>" { print "label " literal($0) }
    $2 == "<" rdfs "comment>" && literal($0) != "" { print "comment yes" }
    $2 == "<" lv2 "appliesTo>" { print "applies " $3 }
    END { for (node in symbol) if (node in value) print symbol[node], value[node] }'
}

# json_value FILE KEY: the value of "KEY": in run.json, quotes removed.
json_value() {
  sed -n "s/^ *\"$2\": *\"\{0,1\}\([^\",]*\)\"\{0,1\},\{0,1\} *$/\1/p" "$1" | head -n 1
}

same_number() { awk -v a="$1" -v b="$2" 'BEGIN { d = a - b; exit !(a != "" && b != "" && d < 1e-3 && d > -1e-3) }'; }

TEMPERAMENTS="equal just pythagorean meantone werckmeister3 kirnberger3 vallotti custom"
TONICS="C C# D D# E F F# G G# A A# B"
nth() { n=$1; shift; shift "$n" 2>/dev/null && echo "${1:-}"; }

# check_run PRESET_NAME VALUES_FILE RUN_JSON: every value the preset sets
# shows in run.json; prints what differs, nothing when all agree.
check_run() {
  while read -r symbol value; do
    case $symbol in
      reference) key=reference_hz want=$value ;;
      tolerance) key=tolerance_cents want=$value ;;
      min_note) key=min_note_ms want=$value ;;
      lowest) key=lowest_midi want=$value ;;
      highest) key=highest_midi want=$value ;;
      temperament) key=temperament want=$(nth "${value%.*}" $TEMPERAMENTS) ;;
      tonic) key=tonic want=$(nth "${value%.*}" $TONICS) ;;
      *) continue ;;
    esac
    got=$(json_value "$3" "$key")
    case $symbol in
      temperament | tonic) [ -n "$want" ] && [ "$got" = "$want" ] ;;
      *) same_number "$got" "$want" ;;
    esac || echo "$key is '$got', the preset sets $symbol $value${want:+ ($want)}"
  done <"$2"
}

if [ ! -x "$PLUMB" ]; then
  echo "presets: no executable $PLUMB (run make all first)"
  echo "0 passed, 1 failed"
  exit 1
fi
if ! command -v serdi >/dev/null 2>&1; then
  echo "presets: serdi not found (Debian package serdi; make deps)"
  echo "0 passed, 1 failed"
  exit 1
fi
# A 0.5 s, 440 Hz tone at -12 dBFS, 48 kHz mono float WAV.
if ! "$PYTHON" - "$WORK/tone.wav" <<'EOF'
import sys
import numpy as np
from scipy.io import wavfile
rate_hz = 48000
t_s = np.arange(rate_hz // 2) / rate_hz
amplitude = 10.0 ** (-12.0 / 20.0)
tone = (amplitude * np.sin(2.0 * np.pi * 440.0 * t_s)).astype(np.float32)
wavfile.write(sys.argv[1], rate_hz, tone)
EOF
then
  echo "presets: could not make the test tone with $PYTHON (numpy, scipy)"
  echo "0 passed, 1 failed"
  exit 1
fi

set -- presets/*.ttl
if [ ! -f "$1" ]; then
  fail "there are presets in presets/"
  finish
fi

labels=""
for file in "$@"; do
  name=$(basename "$file" .ttl)
  preset_values "$file" >"$WORK/$name.all"
  label=$(sed -n 's/^label //p' "$WORK/$name.all" | head -n 1)
  grep -v '^label \|^comment \|^applies ' "$WORK/$name.all" >"$WORK/$name.values"

  if [ -z "$label" ]; then
    fail "$name: has an rdfs:label"
    continue
  fi
  labels="$labels$label
"
  if grep -q '^comment yes$' "$WORK/$name.all" &&
    grep -q '^applies <urn:plumb:intonation>$' "$WORK/$name.all"; then
    pass "$name: has an rdfs:comment and applies to urn:plumb:intonation"
  else
    fail "$name: has an rdfs:comment and applies to urn:plumb:intonation"
  fi
  if ! grep -q '^reference ' "$WORK/$name.values" ||
    ! grep -q '^tolerance ' "$WORK/$name.values"; then
    fail "$name: sets reference and tolerance"
    continue
  fi

  for how in label name; do
    if [ "$how" = label ]; then asked=$label; else asked=$name; fi
    logs=$WORK/logs-$name-$how
    "$PLUMB" scan --preset "$asked" -o "$logs" "$WORK/tone.wav" \
      >"$WORK/stdout" 2>"$WORK/stderr"
    status=$?
    if [ "$status" -ne 0 ]; then
      fail "$name: scan --preset '$asked' exits 0 (got $status: $(cat "$WORK/stderr"))"
      continue
    fi
    if [ ! -f "$logs/tone.run.json" ]; then
      fail "$name: scan --preset '$asked' writes tone.run.json"
      continue
    fi
    check_run "$name" "$WORK/$name.values" "$logs/tone.run.json" >"$WORK/diff"
    if [ -s "$WORK/diff" ]; then
      fail "$name: run.json of --preset '$asked' shows the preset's values: $(tr '\n' ';' <"$WORK/diff")"
    else
      pass "$name: --preset '$asked' runs and run.json shows its $(wc -l <"$WORK/$name.values" | tr -d ' ') values"
    fi
  done
done

# ------------------------------------------------------------ unknown name
"$PLUMB" scan --preset no-such-preset -o "$WORK/unknown-logs" "$WORK/tone.wav" \
  >"$WORK/stdout" 2>"$WORK/stderr"
status=$?
if [ "$status" -eq 2 ]; then
  pass "an unknown preset exits 2"
else
  fail "an unknown preset exits 2 (got $status)"
fi
if [ -e "$WORK/unknown-logs" ]; then
  fail "an unknown preset stops the scan before any take runs"
else
  pass "an unknown preset stops the scan before any take runs"
fi
missing=$(printf '%s' "$labels" | while IFS= read -r label; do
  grep -qF "'$label'" "$WORK/stderr" || printf "'%s' " "$label"
done)
if [ -z "$missing" ] && grep -qF "no-such-preset" "$WORK/stderr"; then
  pass "the unknown preset's message names it and lists every preset"
else
  fail "the unknown preset's message names it and lists every preset (missing: ${missing:-the name}): $(cat "$WORK/stderr")"
fi

finish
