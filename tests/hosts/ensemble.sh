#!/bin/sh
# plumb ensemble and plumb scan --ensemble on exact synthetic tones
# (harmonic tones made with numpy, so every interval is known exactly):
# sh tests/hosts/ensemble.sh BUILD_DIR. Last line: "N passed, N failed".
ROOT=$(cd "$(dirname "$0")/../.." && pwd)
. "$ROOT/tests/lib/checks.sh"
PYTHON=${PYTHON:-/usr/bin/python3}
build=${1:-build}
PLUMB=$build/plumb
WORK=$(mktemp -d "${TMPDIR:-/tmp}/plumb-ensemble.XXXXXX") || exit 2
trap 'rm -rf "$WORK"' EXIT
if [ ! -x "$PLUMB" ] || ! "$PYTHON" -c 'import numpy, scipy' 2>/dev/null; then
  fail "ensemble: needs $PLUMB (make all) and $PYTHON with numpy and scipy"
  finish
fi

# Three parts, 4 s each, 8 harmonics at 1/k: A3 and E4 in equal
# temperament at A4 = 440 Hz, and A4 6 cents sharp (a part that sits
# above the rest, inside the per-note tolerance).
"$PYTHON" - "$WORK" <<'PY' || exit 2
import sys, numpy as np
from scipy.io import wavfile
rate = 48000
t = np.arange(int(4.0 * rate)) / rate
env = np.minimum(1, np.minimum(t / 0.05, (4.0 - t) / 0.05))
for name, f0 in (("low", 220.0), ("mid", 440 * 2 ** (-5 / 12)), ("high", 440 * 2 ** (6 / 1200))):
    x = sum(np.sin(2 * np.pi * k * f0 * t) / k for k in range(1, 9))
    wavfile.write(f"{sys.argv[1]}/{name}.wav", rate, (0.2 * env * x / np.abs(x).max()).astype(np.float32))
PY

"$PLUMB" scan -j 1 --ensemble --tempo 120 --meter 3/4 -o "$WORK/logs" \
  "$WORK/low.wav" "$WORK/mid.wav" "$WORK/high.wav" >"$WORK/out" 2>"$WORK/err"
check "scan --ensemble exits 0" exits_zero $? "$WORK/err"
check "the summary names the ensemble step" grep -q '^Ensemble: 3 tracks' "$WORK/out"
pairs=$WORK/logs/ensemble.pairs.csv
check "pairs file: the required columns in order" sh -c "head -n 1 '$pairs' | grep -q '^start_s,end_s,track_low,index_low,note_low,track_high,index_high,note_high,interval,interval_cents,et_dev_cents,just_ratio,just_dev_cents,beat_hz,verdict'"
# The fifth A3-E4 of harmonic tones is 700 cents (1200 log2 of the ratio,
# Ellis 1885); its 3:2 partials beat at |3 fA - 2 fE| (Helmholtz 1863).
fifth() {
  awk -F, 'NR > 1 && $3 == "low" && $6 == "mid" {
    b = 3 * 220 - 2 * 440 * 2 ^ (-5 / 12); if (b < 0) b = -b
    d = $10 - 700; if (d < 0) d = -d; e = $14 - b; if (e < 0) e = -e
    found = 1; ok = $9 == "P5" && $12 == "3/2" && d < 0.2 && e < 0.05
    print $9, $10, $12, $14, "expected beat", b; exit !ok }
    END { if (!found) { print "no low/mid pair"; exit 1 } }' "$pairs"
}
check "A3-E4: P5, 700 cents within 0.2, 3/2, beat within 0.05 Hz" fifth
# The octave's ET deviation is the +6 cents of the high part.
check "A3-A4: P8, +6 cents within 0.3" awk -F, 'NR > 1 && $3 == "low" && $6 == "high" {
    d = $11 - 6; if (d < 0) d = -d; print $9, $11; exit !($9 == "P8" && d < 0.3) }' "$pairs"
tracks=$WORK/logs/ensemble.tracks.csv
# Offsets: high sits 6 cents above low and mid (which agree).
check "offsets: high - low within 6 +-0.5, mid - low within 0 +-0.5" awk -F, '
    NR > 1 { o[$1] = $4 } END { a = o["high"] - o["low"]; b = o["mid"] - o["low"]
    print a, b; exit !(a > 5.5 && a < 6.5 && b > -0.5 && b < 0.5) }' "$tracks"
# --tempo 120, 3/4: a note starting near 0 s is in bar 1 (0.5 s a beat).
check "offline timeline: bar and beat filled" awk -F, 'NR == 2 { print $16, $17; exit !($16 == 1 && $17 >= 1 && $17 < 1.5) }' "$pairs"
check "ensemble.json has the drift and pair count" grep -q '"drift_cents_per_min"' "$WORK/logs/ensemble.json"

# plumb ensemble over the folder gives the same pairs.
cp "$pairs" "$WORK/pairs.scan"
"$PLUMB" ensemble "$WORK/logs" >"$WORK/out" 2>"$WORK/err"
check "ensemble DIR exits 0" exits_zero $? "$WORK/err"
# (the tracks come in another order: name order, not the command line's)
sort "$pairs" >"$WORK/a" && sort "$WORK/pairs.scan" >"$WORK/b"
check "ensemble DIR: the same pairs" cmp "$WORK/a" "$WORK/b"

# One track alone: no pairs, no error.
"$PLUMB" ensemble -o "$WORK" "$WORK/logs/low.notes.csv" >"$WORK/out" 2>"$WORK/err"
check "one track: exit 0" exits_zero $? "$WORK/err"
check "one track: 0 pairs" grep -q '^Ensemble: 1 tracks, 0 pairs' "$WORK/out"

# A missing column: a clear message, status 3.
mkdir "$WORK/bad"
sed '1s/f0_hz/f0/' "$WORK/logs/low.notes.csv" >"$WORK/bad/low.notes.csv"
"$PLUMB" ensemble "$WORK/bad" >"$WORK/out" 2>"$WORK/err"
status=$?
check "missing column: status 3 and the column named" sh -c "[ $status -eq 3 ] && grep -q \"no column 'f0_hz'\" '$WORK/err'"

# A last row cut off: said, left out, the rest compared.
mkdir "$WORK/cut"
cp "$WORK/logs/low.notes.csv" "$WORK/logs/low.run.json" "$WORK/logs/mid.notes.csv" \
  "$WORK/logs/mid.run.json" "$WORK/cut/"
printf '9,3.0,3.5,3.0,A3,57,220.000,220.1' >>"$WORK/cut/mid.notes.csv"
"$PLUMB" ensemble "$WORK/cut" >"$WORK/out" 2>"$WORK/err"
status=$?
check "cut last row: exit 0 with a warning" sh -c "[ $status -eq 0 ] && grep -q 'cut off' '$WORK/err'"

# Two takes in one folder (a second scan is another process): refused
# with the takes listed, then --take picks one.
"$PLUMB" scan -j 1 -o "$WORK/logs" "$WORK/high.wav" >/dev/null 2>&1
mv "$WORK/logs/high.notes.csv" "$WORK/logs/high2.notes.csv"
mv "$WORK/logs/high.run.json" "$WORK/logs/high2.run.json"
"$PLUMB" scan -j 1 -o "$WORK/logs" "$WORK/high.wav" >/dev/null 2>&1
"$PLUMB" ensemble "$WORK/logs" >"$WORK/out" 2>"$WORK/err"
status=$?
check "two takes: refused (status 2), takes listed" sh -c "[ $status -eq 2 ] && grep -q 'different takes' '$WORK/err'"
"$PLUMB" ensemble --take low "$WORK/logs" >"$WORK/out" 2>"$WORK/err"
check "--take picks the take holding that log" exits_zero $? "$WORK/err"
finish
