#!/bin/sh
# The installed plugin as LV2 hosts discover it.
#
#   sh tests/hosts/install.sh BUILD_DIR
#
# Two install flavours, each into a temporary folder:
#   - system: make install DESTDIR=<tmp> PREFIX=/usr  (bundle in
#     <tmp>/usr/lib/lv2, command in <tmp>/usr/bin);
#   - user:   make install-user with HOME=<tmp>  (bundle in <tmp>/.lv2,
#     command in <tmp>/.local/bin); the real home is checked untouched.
# Then, with LV2_PATH naming only the installed folder:
#   - the installed files are the build's, byte for byte;
#   - serdi reads every installed .ttl (Turtle syntax) and lv2_validate
#     reports 0 errors over the installed bundle (both are needed: measured
#     on Debian 12, lv2-dev 1.18.4, lv2_validate prints "error reading" on
#     a Turtle syntax error and still reports 0 errors);
#   - lv2ls lists urn:plumb:intonation;
#   - lv2info shows every port with the index and symbol ttl/plumb.ttl
#     gives it, and the label of every preset in presets/*.ttl;
#   - lilv's own description of the plugin (lv2info -p) carries every
#     port's units:unit as ttl/plumb.ttl declares it (lv2info's listing
#     prints no units);
#   - jalv's console command `presets` lists every preset as "URI (label)"
#     (lv2info shows labels only; of lilv-utils 0.24.14 and jalv 1.6.6 in
#     Debian 12 it is the one command-line tool that prints preset URIs:
#     lv2ls, lv2apply and lv2bench have no preset option (their --help),
#     and jalv.gtk3 and jalv.qt5 show presets in a menu, from memory);
#   - the installed command runs (--help) and scans a take with the bundle
#     it finds beside itself (docs/command.md, plugin/cli/bundle.c).
# Every expected port, unit and preset is read from the TTL files
# (ttl/plumb.ttl, presets/*.ttl, the built manifest.ttl) with serdi, so the
# checks follow the files when ports or presets are added.
#
# Needs make, serdi, lv2_validate, lilv-utils, jalv, jackd2 and
# /usr/bin/python3 (standard library only).

BUILD_ARG=${1:?usage: sh tests/hosts/install.sh BUILD_DIR}
ROOT=$(cd "$(dirname "$0")/../.." && pwd) || exit 2
. "$ROOT/tests/lib/checks.sh"
BUILD=$(cd "$BUILD_ARG" && pwd) || exit 2
PYTHON=/usr/bin/python3
URI=urn:plumb:intonation

WORK=$(mktemp -d "${TMPDIR:-/tmp}/plumb-install.XXXXXX") || exit 2
jackd_pid=""
cleanup() {
  if [ -n "$jackd_pid" ]; then
    kill "$jackd_pid" 2>/dev/null
    wait "$jackd_pid" 2>/dev/null
  fi
  rm -rf "$WORK"
}
trap cleanup EXIT
trap 'exit 130' INT TERM



# ------------------------------------------------------------ TTL facts

# ttl_facts KIND FILE...: facts read from Turtle files (each parsed on its
# own by serdi into N-Triples, so blank nodes never mix), one a line,
# sorted bytewise (LC_ALL=C sort, as every list compared here):
#   ports    "INDEX SYMBOL" of every lv2:port of urn:plumb:intonation
#   units    "SYMBOL UNIT-URI" of every such port with a units:unit
#   presets  "URI (LABEL)" of every pset:Preset with an rdfs:label
#   listed   "URI" of every pset:Preset
ttl_facts() {
  timeout 60 "$PYTHON" - "$@" <<'EOF' | LC_ALL=C sort
import json
import re
import subprocess
import sys

LV2 = "http://lv2plug.in/ns/lv2core#"
RDF_TYPE = "http://www.w3.org/1999/02/22-rdf-syntax-ns#type"
LABEL = "http://www.w3.org/2000/01/rdf-schema#label"
PRESET = "http://lv2plug.in/ns/ext/presets#Preset"
UNIT = "http://lv2plug.in/ns/extensions/units#unit"
PLUGIN = "urn:plumb:intonation"
TERM = r'(<[^>]*>|_:\S+|"(?:[^"\\]|\\.)*"(?:\^\^<[^>]*>|@[A-Za-z0-9-]+)?)'
TRIPLE = re.compile(r"^" + TERM + r" " + TERM + r" " + TERM + r" \.$")


def value(term):
    """A URI without its brackets, a literal's text, a blank node as is."""
    if term.startswith("<"):
        return term[1:-1]
    if term.startswith('"'):
        return json.loads(term[: term.rindex('"') + 1])
    return term


def triples(path):
    text = subprocess.run(["serdi", "-i", "turtle", "-o", "ntriples", path],
                          check=True, capture_output=True, text=True).stdout
    for line in text.splitlines():
        match = TRIPLE.match(line.strip())
        if match:
            yield tuple(value(t) for t in match.groups())


kind, facts = sys.argv[1], set()
for path in sys.argv[2:]:
    found = list(triples(path))
    about = {}
    for s, p, o in found:
        about.setdefault(s, {}).setdefault(p, []).append(o)
    ports = about.get(PLUGIN, {}).get(LV2 + "port", [])
    for port in ports:
        props = about.get(port, {})
        symbol = props.get(LV2 + "symbol", ["?"])[0]
        if kind == "ports":
            facts.add("%s %s" % (props.get(LV2 + "index", ["?"])[0], symbol))
        elif kind == "units":
            facts.update("%s %s" % (symbol, u) for u in props.get(UNIT, []))
    for s, props in about.items():
        if PRESET not in props.get(RDF_TYPE, []):
            continue
        if kind == "listed":
            facts.add(s)
        elif kind == "presets":
            facts.update("%s (%s)" % (s, l) for l in props.get(LABEL, []))
for fact in facts:
    print(fact)
EOF
}

# same_lines WHAT GOT WANTED: two sorted fact lists are equal; else say
# which lines differ.
same_lines() {
  if [ ! -s "$3" ]; then
    echo "nothing expected for $1: the TTL files gave no facts"
    return 1
  fi
  if ! cmp -s "$2" "$3"; then
    echo "$1 differ (< shown, > declared in the TTL files):"
    diff "$2" "$3"
    return 1
  fi
}

# ------------------------------------------------------------ the checks

# installed_like_build LV2_FOLDER COMMAND: the bundle's files and the
# command are the build's, byte for byte, and nothing else is in the bundle.
installed_like_build() {
  (cd "$BUILD/plumb.lv2" && ls | LC_ALL=C sort) >"$WORK/files.want"
  (cd "$1/plumb.lv2" && ls | LC_ALL=C sort) >"$WORK/files.got" || return 1
  same_lines "bundle files" "$WORK/files.got" "$WORK/files.want" || return 1
  for file in $(cat "$WORK/files.want"); do
    cmp "$BUILD/plumb.lv2/$file" "$1/plumb.lv2/$file" || return 1
  done
  cmp "$BUILD/plumb" "$2"
}

# turtle_reads FILE: serdi parses it (exit 1 on a syntax error).
turtle_reads() {
  timeout 30 serdi -i turtle -o ntriples "$1" >/dev/null
}

# validates BUNDLE: lv2_validate over the bundle's files together exits 0,
# reports "Found 0 errors" and read every file (tests/run.sh does the same
# for the build's bundle).
validates() {
  timeout 120 lv2_validate "$1"/*.ttl >"$WORK/validate.out" 2>&1
  status=$?
  errors=$(sed -n 's/^Found \([0-9][0-9]*\) errors.*/\1/p' "$WORK/validate.out" | tail -n 1)
  if [ "$status" -ne 0 ] || [ "${errors:-x}" != 0 ] ||
    grep -q '^error reading' "$WORK/validate.out"; then
    cat "$WORK/validate.out"
    echo "lv2_validate: exit status $status, errors reported: ${errors:-none}"
    return 1
  fi
}

# lists_plugin LV2_FOLDER
lists_plugin() {
  LV2_PATH=$1 timeout 30 lv2ls >"$WORK/lv2ls.out" 2>&1
  if ! grep -qx "$URI" "$WORK/lv2ls.out"; then
    echo "lv2ls printed:"
    cat "$WORK/lv2ls.out"
    return 1
  fi
}

# shows_ports LV2_FOLDER: lv2info's "Port N:" blocks give each port the
# index and symbol ttl/plumb.ttl declares, and no other port.
shows_ports() {
  LV2_PATH=$1 timeout 30 lv2info "$URI" >"$WORK/lv2info.out" 2>&1 || {
    cat "$WORK/lv2info.out"
    return 1
  }
  awk '/^\tPort [0-9]+:$/ { index_ = $2; sub(":", "", index_) }
       /^\t\tSymbol:/ { print index_, $2 }' "$WORK/lv2info.out" |
    LC_ALL=C sort >"$WORK/ports.got"
  same_lines "ports (index symbol)" "$WORK/ports.got" "$WORK/ports.want"
}

# shows_units LV2_FOLDER: the Turtle lilv writes for the plugin it loaded
# (lv2info -p) gives each port the units:unit ttl/plumb.ttl declares.
shows_units() {
  rm -f "$WORK/loaded.ttl"
  LV2_PATH=$1 timeout 30 lv2info -p "$WORK/loaded.ttl" "$URI" >/dev/null 2>&1 &&
    ttl_facts units "$WORK/loaded.ttl" >"$WORK/units.got" || return 1
  same_lines "units (symbol unit)" "$WORK/units.got" "$WORK/units.want"
}

# shows_preset_labels: lv2info's "Presets:" list (from the last
# shows_ports run) holds the label of every preset, and only those.
shows_preset_labels() {
  awk '/^\tPresets:/ { on = 1; next } on && /^[[:space:]]*$/ { exit }
       on { sub(/^[[:space:]]+/, ""); print }' "$WORK/lv2info.out" |
    LC_ALL=C sort >"$WORK/labels.got"
  sed 's/^[^ ]* (\(.*\))$/\1/' "$WORK/presets.want" | LC_ALL=C sort >"$WORK/labels.want"
  same_lines "preset labels" "$WORK/labels.got" "$WORK/labels.want"
}

# jalv_lists_presets LV2_FOLDER NAME: jalv's `presets` command prints
# "URI (label)" for every preset, and only those.
jalv_lists_presets() {
  mkdir -p "$WORK/jalv-logs"
  printf 'presets\n' | LV2_PATH=$1 PLUMB_LOG_DIR=$WORK/jalv-logs \
    timeout 30 jalv -x -n "$2" "$URI" >"$WORK/jalv.out" 2>&1
  status=$?
  sed -n 's/^[> ]*\(urn:[^ ]* (.*)\)$/\1/p' "$WORK/jalv.out" |
    LC_ALL=C sort >"$WORK/jalv-presets.got"
  if [ "$status" -ne 0 ]; then
    cat "$WORK/jalv.out"
    echo "jalv: exit status $status"
    return 1
  fi
  same_lines "presets (URI (label))" "$WORK/jalv-presets.got" "$WORK/presets.want"
}

# command_helps COMMAND: --help exits 0 with the usage (docs/command.md).
command_helps() {
  timeout 30 "$1" --help >"$WORK/help.out" 2>&1
  status=$?
  if [ "$status" -ne 0 ] || ! grep -q 'plumb scan' "$WORK/help.out"; then
    cat "$WORK/help.out"
    echo "exit status $status"
    return 1
  fi
}

# command_scans COMMAND: the installed command analyses the test take
# with the bundle it finds beside itself and logs one A4 within 1 cent.
# The truth: a 440 Hz sine is A4, MIDI 69, by the MIDI Tuning Standard's
# f = 440 * 2^((m - 69) / 12); the 1-cent margin is common practice, no
# source (the core's own tests are far tighter).
command_scans() {
  rm -rf "$WORK/scan"
  timeout 120 "$1" scan -j 1 -o "$WORK/scan" "$WORK/a4.wav" >"$WORK/scan.out" 2>&1
  status=$?
  log=$WORK/scan/a4.notes.csv
  if [ "$status" -ne 0 ] || [ ! -f "$log" ]; then
    cat "$WORK/scan.out"
    echo "exit status $status; log $log $( [ -f "$log" ] && echo found || echo missing)"
    return 1
  fi
  awk -F, 'NR == 1 { for (i = 1; i <= NF; i++) col[$i] = i; next }
    { rows++; note = $col["note"]; midi = $col["midi"]; cents = $col["cents"] }
    END {
      if (rows != 1 || note != "A4" || midi != 69 || cents < -1 || cents > 1) {
        printf "%d rows; last: note %s, midi %s, cents %s\n", rows, note, midi, cents
        exit 1
      } }' "$log" || { cat "$log"; return 1; }
}

# real_home_state: what the real home holds of an install-user, with times.
real_home_state() {
  for path in "$REAL_HOME/.lv2/plumb.lv2" "$REAL_HOME/.local/bin/plumb"; do
    if [ -e "$path" ]; then
      find "$path" -exec stat -c '%n %y %s' {} +
    else
      echo "$path absent"
    fi
  done
}

# same_state BEFORE AFTER
same_state() {
  cmp -s "$1" "$2" || { diff "$1" "$2"; return 1; }
}

# check_installed NAME LV2_FOLDER COMMAND: every check on one install.
check_installed() {
  name=$1 folder=$2 command=$3
  check "$name: installed files equal the build's" \
    installed_like_build "$folder" "$command"
  for ttl in "$folder"/plumb.lv2/*.ttl; do
    check "$name: serdi reads $(basename "$ttl")" turtle_reads "$ttl"
  done
  check "$name: lv2_validate reports 0 errors" validates "$folder/plumb.lv2"
  check "$name: lv2ls lists $URI" lists_plugin "$folder"
  check "$name: lv2info shows every port of ttl/plumb.ttl" shows_ports "$folder"
  check "$name: lv2info lists every preset label of presets/*.ttl" \
    shows_preset_labels
  check "$name: lv2info -p carries every unit of ttl/plumb.ttl" \
    shows_units "$folder"
  check "$name: jalv lists every preset URI and label" \
    jalv_lists_presets "$folder" "plumb-install-$name"
  check "$name: the installed command runs (--help)" command_helps "$command"
  check "$name: the installed command scans a take with its bundle" \
    command_scans "$command"
}

# ------------------------------------------------------------ set-up

missing=""
for tool in make serdi lv2_validate lv2ls lv2info jalv jackd jack_lsp timeout; do
  command -v "$tool" >/dev/null 2>&1 || missing="$missing $tool"
done
[ -x "$PYTHON" ] || missing="$missing $PYTHON"
if [ -n "$missing" ]; then
  fail "install: missing:$missing (make deps installs lilv-utils, jalv, jackd2, serdi)"
  finish
fi

# The expected facts, from the sources (and the manifest the build wrote
# from ttl/manifest.ttl.in).
ttl_facts ports "$ROOT/ttl/plumb.ttl" >"$WORK/ports.want"
ttl_facts units "$ROOT/ttl/plumb.ttl" >"$WORK/units.want"
ttl_facts presets "$ROOT"/presets/*.ttl >"$WORK/presets.want"
ttl_facts listed "$ROOT"/presets/*.ttl >"$WORK/preset-files.want"
# A preset file the manifest does not list is never read by a host: lilv
# reads a bundle's manifest.ttl and the files its rdfs:seeAlso names (LV2
# core specification, "bundles").
manifest_lists_presets() {
  ttl_facts listed "$BUILD/plumb.lv2/manifest.ttl" >"$WORK/listed.got" &&
    same_lines "preset URIs (manifest against presets/*.ttl)" \
      "$WORK/listed.got" "$WORK/preset-files.want"
}
check "the manifest lists exactly the presets of presets/*.ttl" \
  manifest_lists_presets

# The test take: 1.5 s of a 440 Hz sine at -20 dBFS (amplitude 0.1),
# 16-bit mono 48 kHz. Hearing caution: it is never played; if you keep a
# copy and listen, start with the volume low.
timeout 60 "$PYTHON" - "$WORK/a4.wav" <<'EOF' || { fail "install: cannot write the test take"; finish; }
import math
import struct
import sys
import wave

rate_hz, f0_hz, amplitude = 48000, 440.0, 0.1
with wave.open(sys.argv[1], "wb") as take:
    take.setnchannels(1)
    take.setsampwidth(2)
    take.setframerate(rate_hz)
    take.writeframes(b"".join(
        struct.pack("<h", round(32767 * amplitude * math.sin(2 * math.pi * f0_hz * i / rate_hz)))
        for i in range(int(1.5 * rate_hz))))
EOF

# jalv needs a JACK server (measured on Debian 12, jalv 1.6.6, jackd2
# 1.9.21; the dummy driver needs no sound card): one of our own on the
# dummy driver, so a server already running is left alone.
JACK_DEFAULT_SERVER="plumb-install-$$"
export JACK_DEFAULT_SERVER
timeout 600 jackd --no-realtime -d dummy -r 48000 -p 1024 >"$WORK/jackd.log" 2>&1 &
jackd_pid=$!
tries=0
until timeout 5 jack_lsp >/dev/null 2>&1 || [ "$tries" -ge 50 ]; do
  sleep 0.1
  tries=$((tries + 1))
done

# make from the project's root, with the build folder the tests were given.
case $BUILD in
"$ROOT"/*) make_build=${BUILD#"$ROOT"/} ;;
*) make_build=$BUILD ;;
esac
run_make() {
  timeout 900 make --no-print-directory -C "$ROOT" BUILD="$make_build" "$@"
}

# ------------------------------------------------------------ system

dest=$WORK/dest
check "system: make install DESTDIR=<tmp> PREFIX=/usr exits 0" \
  run_make install DESTDIR="$dest" PREFIX=/usr
check_installed system "$dest/usr/lib/lv2" "$dest/usr/bin/plumb"

# ------------------------------------------------------------ library

# A program of someone else's, built against the installed library with
# nothing but pkg-config: it analyses an A4 and prints the note's MIDI
# number and cents (69, about 0: the MIDI Tuning Standard's A4 = 440 Hz).
library_program() {
  cat >"$WORK/uses_plumb.c" <<'PROGRAM'
#include <plumb.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>

int main(void) {
  plumb_settings settings;
  plumb_settings_default(&settings, 48000.0);
  plumb_status status;
  plumb *analyser = plumb_new(&settings, &status);
  if (!analyser) {
    fprintf(stderr, "%s\n", plumb_strerror(status));
    return 1;
  }
  float *x = calloc(48000, sizeof *x);
  const double two_pi = 6.283185307179586;
  for (int i = 4800; i < 43200; ++i) x[i] = (float)(0.25 * sin(two_pi * 440.0 * i / 48000.0));
  plumb_process(analyser, x, 48000);
  plumb_finish(analyser);
  plumb_note note;
  int found = 0;
  while (plumb_pop_note(analyser, &note)) {
    printf("%d %.2f\n", note.midi, note.cents);
    ++found;
  }
  plumb_free(analyser);
  free(x);
  return found == 1 ? 0 : 1;
}
PROGRAM
}

prefix=$WORK/prefix
check "library: make install PREFIX=<tmp> exits 0" run_make install PREFIX="$prefix"
library_program
pc_path=$prefix/lib/pkgconfig
check "library: pkg-config finds plumb in the installed prefix" \
  env PKG_CONFIG_PATH="$pc_path" pkg-config --exists plumb
build_against() {
  # With the compiler and link flags the library was built with (the
  # sanitizer build's library needs its runtime linked in first).
  # shellcheck disable=SC2046,SC2086 # the flags are words
  ${CC:-cc} -std=c11 -Wall -Wextra -Werror ${LDFLAGS:-} -o "$WORK/uses_plumb" "$WORK/uses_plumb.c" \
    $(PKG_CONFIG_PATH="$pc_path" pkg-config --cflags --libs plumb) -lm
}
check "library: a program builds with pkg-config --cflags --libs plumb" build_against
runs_against() {
  LD_LIBRARY_PATH=$prefix/lib "$WORK/uses_plumb" >"$WORK/uses_plumb.out" || return 1
  awk '$1 == 69 && $2 < 0.1 && $2 > -0.1 { ok = 1 } END { exit !ok }' "$WORK/uses_plumb.out"
}
check "library: it reads the A4 it analyses as MIDI 69, within 0.1 cent" runs_against
only_public() {
  nm -D --defined-only "$prefix/lib/libplumb.so" | awk '{ print $3 }' >"$WORK/exports"
  [ -s "$WORK/exports" ] && ! grep -v '^plumb_' "$WORK/exports"
}
check "library: the shared library exports plumb_ symbols only" only_public
static_only_public() {
  nm -g --defined-only "$prefix/lib/libplumb.a" | awk 'NF == 3 { print $3 }' >"$WORK/globals"
  [ -s "$WORK/globals" ] && ! grep -v '^plumb_' "$WORK/globals"
}
check "library: every global symbol of the static library is plumb_" static_only_public

# ------------------------------------------------------------ user

REAL_HOME=${HOME:-/root}
real_home_state >"$WORK/home.before"
user_home=$WORK/home
mkdir -p "$user_home"
# HOME only for make, in a subshell: the real one stays for the check.
install_user() { (HOME=$user_home && export HOME && run_make install-user); }
check "user: make install-user with HOME=<tmp> exits 0" install_user
real_home_state >"$WORK/home.after"
check "user: the real home is untouched" same_state "$WORK/home.before" "$WORK/home.after"
check_installed user "$user_home/.lv2" "$user_home/.local/bin/plumb"

finish
