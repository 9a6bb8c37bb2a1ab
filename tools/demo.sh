#!/bin/sh
# The demo (`make demo`): sh tools/demo.sh BUILD_DIR
#
# Writes the invented session of docs/demo.md into BUILD_DIR/demo/session,
# scans it with BUILD_DIR/plumb, lets plumb's table of flagged notes show,
# then compares the logs with the deliberate errors in the truth files:
# which were caught, which were missed, and any false flags.

if [ "$#" -ne 1 ]; then
  echo "usage: sh tools/demo.sh BUILD_DIR" >&2
  exit 2
fi
cd "$(dirname "$0")/.." || exit 2
build=$1
session=$build/demo/session
logs=$build/demo/logs
tolerance_cents=10 # plumb's default; common practice, no source

cat <<'EOF'
CAUTION: this demo writes test tones (synthetic instruments and drums).
Before you play any of its WAV files, turn the volume down, then listen
at a low, safe level - with headphones especially. Loud test tones can
damage hearing.

EOF

make --no-print-directory BUILD="$build" "$build/tools/demo_session" >/dev/null ||
  { echo "demo: cannot build $build/tools/demo_session" >&2; exit 1; }
if [ ! -x "$build/plumb" ]; then
  echo "demo: $build/plumb is not built (make all)" >&2
  exit 1
fi
rm -rf "$session" "$logs"
mkdir -p "$session" "$logs" || exit 1
"$build/tools/demo_session" "$session" || exit 1
echo

echo "plumb scan -t $tolerance_cents --ensemble --tempo 96 -o $logs $session/*.wav"
"$build/plumb" scan -t "$tolerance_cents" --ensemble --tempo 96 -o "$logs" "$session"/*.wav
scan_status=$?
echo
if [ "$scan_status" -ge 2 ]; then
  echo "demo: plumb scan failed (exit status $scan_status)" >&2
fi

# compare TRUTH LOG STEM COUNTS: print what the log says about each
# deliberate error and each false flag; append "deliberate caught false
# notes flagged" to COUNTS. A deliberate error is a pitched truth note
# beyond the tolerance; a log note belongs to the truth note it overlaps
# most in time.
compare() {
  awk -F, -v tol="$tolerance_cents" -v stem="$3" -v counts="$4" '
    function name(m,   pc) {
      split("C C# D D# E F F# G G# A A# B", pc, " ")
      return pc[m % 12 + 1] (int(m / 12) - 1)
    }
    function abs(x) { return x < 0 ? -x : x }
    function deliberate(k) { return tm[k] != "" && abs(td[k]) > tol }
    function flagged(v) { return v == "sharp" || v == "flat" || v == "unsteady" }
    FNR == 1 { file++ }
    file == 1 && FNR > 1 { n++; ts[n] = $1; te[n] = $2; tm[n] = $3; td[n] = $4 }
    file == 2 && FNR == 1 { for (i = 1; i <= NF; i++) col[$i] = i }
    file == 2 && FNR > 1 {
      m++; ls[m] = $(col["start_s"]); le[m] = $(col["end_s"])
      lc[m] = $(col["cents"]); lv[m] = $(col["verdict"])
    }
    END {
      if (!("verdict" in col) || !("cents" in col) || !("start_s" in col)) {
        print "  " stem ": the log has no start_s, cents or verdict column"
        print "0 0 0 0 0" >> counts
        exit
      }
      for (j = 1; j <= m; j++) {
        best[j] = 0; most = 0
        for (k = 1; k <= n; k++) {
          o = (le[j] < te[k] ? le[j] : te[k]) - (ls[j] > ts[k] ? ls[j] : ts[k])
          if (o > most) { most = o; best[j] = k }
        }
      }
      wanted = 0; caught = 0; false_flags = 0; flags = 0
      for (k = 1; k <= n; k++) {
        if (!deliberate(k)) continue
        wanted++; expect = td[k] > 0 ? "sharp" : "flat"; said = "no note found"
        hit = 0
        for (j = 1; j <= m; j++) {
          if (best[j] != k) continue
          if (lv[j] == expect) hit = 1
          if (said == "no note found" || lv[j] == expect)
            said = lv[j] ", " lc[j] " cents"
        }
        caught += hit
        printf "  %-7s %-4s at %6.2f s  %+6.1f cents  %s: %s\n", stem, name(tm[k]),
               ts[k], td[k], hit ? "caught" : "MISSED", said
      }
      for (j = 1; j <= m; j++) {
        if (!flagged(lv[j])) continue
        flags++
        k = best[j]
        if (k && deliberate(k) && lv[j] == (td[k] > 0 ? "sharp" : "flat")) continue
        false_flags++
        meant = !k ? "no note there" : (tm[k] == "" ? "an unpitched hit" : \
                sprintf("%s meant %+g cents", name(tm[k]), td[k]))
        printf "  %-7s FALSE FLAG at %6.2f s: %s, %s cents (%s)\n", stem,
               ls[j], lv[j], lc[j], meant
      }
      print wanted, caught, false_flags, m, flags >> counts
    }' "$1" "$2"
}

echo "Deliberate errors (beyond +-$tolerance_cents cents) and what the logs say:"
counts=$(mktemp "${TMPDIR:-/tmp}/plumb-demo.XXXXXX") || exit 1
missing=0
for truth in "$session"/*.truth.csv; do
  [ -f "$truth" ] || continue
  stem=$(basename "$truth" .truth.csv)
  log=$logs/$stem.notes.csv
  if [ ! -f "$log" ]; then
    echo "  $stem: no log at $log"
    missing=$((missing + 1))
    continue
  fi
  compare "$truth" "$log" "$stem" "$counts"
done
set -- $(awk '{ w += $1; c += $2; f += $3; n += $4; g += $5 }
              END { print w + 0, c + 0, f + 0, n + 0, g + 0 }' "$counts")
rm -f "$counts"
echo
if [ "$3" -eq 1 ]; then false_flags="1 false flag"; else false_flags="$3 false flags"; fi
echo "Caught $2 of $1 deliberate errors; $false_flags among $4 logged notes ($5 flagged)."
echo "The logs are in $logs/<track>.notes.csv; the takes and their truth files in $session/."
echo
# The ensemble faults (docs/demo.md): the reed sits 6 cents above the
# rest, and its A5 doubles the fiddle's, beating at 880 (2^(6/1200) - 1) Hz.
echo "Ensemble faults and what $logs/ensemble.*.csv say:"
awk -F, 'NR > 1 && $4 != "" { o[$1] = $4; n++ }
  END { rest = 0; for (t in o) if (t != "reed") rest += o[t]
        d = o["reed"] - rest / (n - 1)
        printf "  reed sits %+.1f cents above the other parts (meant +6): %s\n", d,
               (d > 4 && d < 8) ? "caught" : "MISSED" }' "$logs/ensemble.tracks.csv"
awk -F, 'NR > 1 && $9 == "P1" && $14 != "" && (($3 == "reed" && $6 == "fiddle") || ($3 == "fiddle" && $6 == "reed")) {
    want = 880 * (2 ^ (6 / 1200) - 1); e = $14 - want; if (e < 0) e = -e
    printf "  unison %s/%s %s at %.2f s beats %.2f Hz (meant %.2f): %s\n", $3, $6, $5, $1, $14, want,
           e < 0.3 ? "caught" : "MISSED"; found = 1 }
  END { if (!found) print "  the reed/fiddle unison: MISSED (no such pair)" }' "$logs/ensemble.pairs.csv"
[ "$scan_status" -lt 2 ] && [ "$missing" -eq 0 ]
