#!/bin/sh
# The `make check` runner: sh tests/run.sh BUILD_DIR
#
#   1. every TTL file of BUILD_DIR/plumb.lv2: Turtle syntax with serdi
#      (one test a file; lv2_validate does not fail on syntax errors),
#      then lv2_validate over the bundle's files together (one test: the
#      plugin's description spans several files, so a file alone would
#      show false errors);
#   2. every BUILD_DIR/tests/test_* binary (cmocka);
#   3. every tests/hosts/*.sh host test, given BUILD_DIR, whose last line is
#      "N passed, N failed".
#
# One result line a suite; a failing suite's whole output is shown. The
# last line is the totals, "N passed, N failed". The exit status is 1
# when anything failed or when no test ran.
#
# PLUMB_TEST_SKIP, when set, names a file of suites not to run, one a
# line: the suite's name (a test binary's or a host test script's file
# name, e.g. test_realtime or jalv.sh), then the reason; '#' starts a
# comment. Each listed suite gets a line "SKIP  NAME (REASON)", whether
# or not its binary was built. `make check-sanitize` uses it
# (tests/sanitize/skip).

if [ "$#" -ne 1 ]; then
  echo "usage: sh tests/run.sh BUILD_DIR" >&2
  exit 2
fi
cd "$(dirname "$0")/.." || exit 2
build=$1

total_passed=0
total_failed=0
work=$(mktemp -d "${TMPDIR:-/tmp}/plumb-run.XXXXXX") || exit 2
trap 'rm -rf "$work"' EXIT
trap 'exit 130' INT TERM
out=$work/out

# A hung binary must not hang `make check` (common practice, no source).
if command -v timeout >/dev/null 2>&1; then
  limit="timeout 900"
else
  limit=""
fi

# result NAME PASSED FAILED [DETAIL]: print the suite's line, add its
# counts, and on failure show the captured output ($out).
result() {
  total_passed=$((total_passed + $2))
  total_failed=$((total_failed + $3))
  if [ "$3" -eq 0 ]; then
    printf 'PASS  %-32s (%s passed, %s failed%s)\n' "$1" "$2" "$3" "${4:-}"
  else
    printf 'FAIL  %-32s (%s passed, %s failed%s)\n' "$1" "$2" "$3" "${4:-}"
    sed 's/^/    | /' "$out"
  fi
}

skip_list=${PLUMB_TEST_SKIP:-}
if [ -n "$skip_list" ] && [ ! -r "$skip_list" ]; then
  echo "PLUMB_TEST_SKIP: cannot read $skip_list" >&2
  exit 2
fi
skipped_suites=0

# skip_reason NAME: prints why NAME is listed in PLUMB_TEST_SKIP and
# succeeds, or fails when it is not listed.
skip_reason() {
  [ -n "$skip_list" ] || return 1
  awk -v name="$1" '
    { sub(/#.*/, "") }
    $1 == name { sub(/^[ \t]*[^ \t]+[ \t]*/, ""); print; found = 1; exit }
    END { exit !found }' "$skip_list"
}

# skipped NAME REASON: the suite's SKIP line.
skipped() {
  skipped_suites=$((skipped_suites + 1))
  printf 'SKIP  %-32s (%s)\n' "$1" "${2:-no reason given}"
}

# skip_unbuilt PATTERN: a SKIP line for every listed suite whose name
# matches PATTERN but that the loop over the built ones did not meet.
skip_unbuilt() {
  [ -n "$skip_list" ] || return 0
  for name in $(sed 's/#.*//' "$skip_list" | awk 'NF { print $1 }'); do
    case "$name" in
    $1) ;;
    *) continue ;;
    esac
    case " $skip_seen " in
    *" $name "*) continue ;;
    esac
    skipped "$name" "$(skip_reason "$name")"
  done
}
skip_seen=""

# Sum the N of every line "[  WORD  ] N test(s)" that cmocka printed.
cmocka_count() {
  sed -n "s/^\[  $1 *\] \([0-9][0-9]*\) test(s).*/\1/p" "$out" |
    awk '{ n += $1 } END { print n + 0 }'
}

# ------------------------------------------------------------ 1. TTL

check_ttl_syntax() {
  passed=0 failed=0
  : >"$work/syntax"
  for ttl in "$1"/*.ttl; do
    if serdi -i turtle -o ntriples "$ttl" >/dev/null 2>"$work/one"; then
      passed=$((passed + 1))
    else
      failed=$((failed + 1))
      { echo "serdi: $ttl is not valid Turtle:"; cat "$work/one"; } >>"$work/syntax"
    fi
  done
  cp "$work/syntax" "$out"
  result "ttl syntax (serdi)" "$passed" "$failed"
}

# lv2_validate can exit 0 while reporting errors, so read its count too.
check_ttl_lv2() {
  lv2_validate "$1"/*.ttl >"$out" 2>&1
  status=$?
  errors=$(sed -n 's/^Found \([0-9][0-9]*\) errors.*/\1/p' "$out" | tail -n 1)
  if [ "$status" -eq 0 ] && [ "${errors:-x}" = 0 ] &&
    ! grep -q '^error reading' "$out"; then
    result "ttl lv2_validate (bundle)" 1 0
  else
    echo "lv2_validate: exit status $status, errors reported: ${errors:-none}" >>"$out"
    result "ttl lv2_validate (bundle)" 0 1
  fi
}

check_ttl() {
  bundle=$build/plumb.lv2
  set -- "$bundle"/*.ttl
  if [ ! -f "$1" ]; then
    echo "no TTL files in $bundle: was the plugin built (make all)?" >"$out"
    result "ttl" 0 1
    return
  fi
  for tool in serdi lv2_validate; do
    if ! command -v "$tool" >/dev/null 2>&1; then
      echo "$tool not found (Debian packages serdi, lv2-dev; make deps)" >"$out"
      result "ttl ($tool)" 0 1
      return
    fi
  done
  check_ttl_syntax "$bundle"
  check_ttl_lv2 "$bundle"
}

# ------------------------------------------------------------ 2. cmocka

# cmocka prints "[  PASSED  ] N test(s)." and "[  FAILED  ] N test(s)"
# and exits with the number of failures; a crash or a binary that never
# reaches its summary counts as one failure more.
run_cmocka() {
  $limit "$1" >"$out" 2>&1
  status=$?
  passed=$(cmocka_count PASSED)
  failed=$(cmocka_count FAILED)
  skipped=$(cmocka_count SKIPPED)
  detail=", $skipped skipped"
  if [ "$status" -ne 0 ] && [ "$failed" -eq 0 ]; then
    failed=1
    if [ "$status" -eq 124 ]; then
      detail="$detail; timed out"
    elif [ "$status" -gt 128 ]; then
      detail="$detail; killed by signal $((status - 128))"
    else
      detail="$detail; exit status $status"
    fi
  elif [ "$status" -eq 0 ] && [ $((passed + skipped)) -eq 0 ]; then
    failed=1
    detail="$detail; no cmocka summary"
  fi
  result "$(basename "$1")" "$passed" "$failed" "$detail"
}

run_unit_tests() {
  found=0
  for binary in "$build"/tests/test_*; do
    [ -f "$binary" ] && [ -x "$binary" ] || continue
    found=1
    name=$(basename "$binary")
    if reason=$(skip_reason "$name"); then
      skip_seen="$skip_seen $name"
      skipped "$name" "$reason"
      continue
    fi
    run_cmocka "$binary"
  done
  skip_unbuilt 'test_*'
  if [ "$found" -eq 0 ]; then
    echo "no test binaries in $build/tests (make check builds them)" >"$out"
    result "unit tests" 0 1
  fi
}

# ------------------------------------------------------------ 3. hosts

run_host_test() {
  $limit sh "$1" "$build" >"$out" 2>&1
  status=$?
  counts=$(tail -n 1 "$out" |
    sed -n 's/^\([A-Za-z_-]*: \)\{0,1\}\([0-9][0-9]*\) passed, \([0-9][0-9]*\) failed.*/\2 \3/p')
  if [ -z "$counts" ]; then
    echo "(last line is not \"N passed, N failed\"; exit status $status)" >>"$out"
    result "$(basename "$1")" 0 1
    return
  fi
  set -- "$1" $counts
  if [ "$status" -ne 0 ] && [ "$3" -eq 0 ]; then
    echo "(exit status $status)" >>"$out"
    result "$(basename "$1")" "$2" 1
  else
    result "$(basename "$1")" "$2" "$3"
  fi
}

run_host_tests() {
  for script in tests/hosts/*.sh; do
    [ -f "$script" ] || continue
    [ "$script" = tests/run.sh ] && continue
    name=$(basename "$script")
    if reason=$(skip_reason "$name"); then
      skip_seen="$skip_seen $name"
      skipped "$name" "$reason"
      continue
    fi
    run_host_test "$script"
  done
  skip_unbuilt '*.sh'
}

check_ttl
run_unit_tests
run_host_tests

status=0
if [ "$total_failed" -ne 0 ]; then
  status=1
elif [ "$total_passed" -eq 0 ]; then
  echo "no test ran"
  status=1
fi
if [ "$skipped_suites" -ne 0 ]; then
  echo "$skipped_suites suites skipped (listed in $skip_list)"
fi
echo "$total_passed passed, $total_failed failed"
exit "$status"
