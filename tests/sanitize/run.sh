#!/bin/sh
# The `make check-sanitize` runner: sh tests/sanitize/run.sh BUILD_DIR
#
# BUILD_DIR holds the whole project built with -fsanitize=address,undefined
# (tests/sanitize.mk). This runs tests/run.sh on it, so every suite of
# `make check` runs, except those listed in tests/sanitize/skip, which get
# a SKIP line with their reason. Then BUILD_DIR/ubsan/tests/test_realtime,
# built with UBSan alone (ASan's runtime and its interposer clash), as
# one more suite, "test_realtime (UBSan only)". Around them:
#
#   - A sanitizer's finding ends the process with status 86, which the
#     plumb command never uses (docs/command.md, "Exit status": 0 to 3),
#     so that a host test that expects a failing status (tests/hosts/torture.sh
#     expects 1 with --strict, which is also the sanitizers' default)
#     still fails.
#   - ASan (memory errors and leaks) writes its reports to
#     BUILD_DIR/sanitizer-reports/ (its log_path option) instead of
#     stderr, so that a report counts even where a host test keeps stderr
#     to itself: after the suites, each report is printed and the run
#     fails, one more suite, "sanitizer reports". UBSan's reports stay on
#     stderr: with gcc 12, whose -fsanitize=address,undefined links two
#     runtimes, UBSan ignores log_path (measured, Debian 12); its status
#     86 and a process that stops at its first report are what the suites
#     see.
#   - The test binaries and the plumb command link the sanitizers' runtime
#     themselves, and load the sanitized plugin. lv2file and jalv do not,
#     and a sanitized library cannot load into them ("ASan runtime does
#     not come first in initial library list"), so they run through
#     wrappers in BUILD_DIR/sanitizer-hosts/, put first on PATH, that
#     LD_PRELOAD the runtime the plugin was linked with (read with ldd):
#     the plugin is then checked inside them for memory and undefined
#     behaviour errors. Leak checking is off in those two hosts only:
#     lv2file leaks its own buffers (arg_litn in libargtable2, a 32 KiB
#     block in main), and FFTW's planner state becomes unreachable when
#     the host unloads the plugin and FFTW with it. Leaks are checked in
#     the hosts this project owns (the cmocka hosts and the command).
#     lv2_validate, lv2ls and lv2info read the TTL files and never load
#     the plugin, so they run as they are (tests/hosts/install.sh passes so).
#   - CC, CFLAGS and LDFLAGS are passed on as given (tests/sanitize.mk
#     sets them), so that tests/hosts/install.sh's `make install BUILD=...`
#     would rebuild with the same flags.
#
# The last line is the totals, "N passed, N failed", as tests/run.sh's.

if [ "$#" -ne 1 ]; then
  echo "usage: sh tests/sanitize/run.sh BUILD_DIR" >&2
  exit 2
fi
cd "$(dirname "$0")/../.." || exit 2
build=$(cd "$1" && pwd) || exit 2

reports=$build/sanitizer-reports
hosts=$build/sanitizer-hosts
rm -rf "$reports" "$hosts"
mkdir -p "$reports" "$hosts" || exit 2

# The ASan runtime the plugin needs, to preload into foreign hosts.
runtime=$(ldd "$build/plumb.lv2/plumb.so" 2>/dev/null |
  sed -n 's/^[[:space:]]*libasan[^ ]* => \([^ ]*\) .*/\1/p' | head -n 1)
if [ -z "$runtime" ] || [ ! -f "$runtime" ]; then
  echo "$build/plumb.lv2/plumb.so links no ASan runtime (ldd); was it built by make check-sanitize?" >&2
  exit 2
fi

# wrap HOST: BUILD_DIR/sanitizer-hosts/HOST runs the installed HOST with
# the runtime preloaded and leak checking off. Nothing when HOST is not
# installed: the host test then says it is missing.
wrap() {
  real=$(command -v "$1") || return 0
  cat >"$hosts/$1" <<EOF
#!/bin/sh
# Written by tests/sanitize/run.sh: $1 with the ASan runtime preloaded,
# so that it can load the sanitized plugin.
LD_PRELOAD="$runtime\${LD_PRELOAD:+ \$LD_PRELOAD}"
ASAN_OPTIONS="\${ASAN_OPTIONS:+\$ASAN_OPTIONS:}detect_leaks=0"
export LD_PRELOAD ASAN_OPTIONS
exec "$real" "\$@"
EOF
  chmod +x "$hosts/$1"
}
wrap lv2file
wrap jalv

# halt_on_error is UBSan's default under -fno-sanitize-recover=all; it is
# said again so that the options show the whole policy.
ASAN_OPTIONS="log_path=$reports/asan:exitcode=86:detect_leaks=1:detect_stack_use_after_return=1:check_initialization_order=1:strict_string_checks=1"
UBSAN_OPTIONS="exitcode=86:print_stacktrace=1:halt_on_error=1"
PLUMB_TEST_SKIP=$(pwd)/tests/sanitize/skip
PATH=$hosts:$PATH
export ASAN_OPTIONS UBSAN_OPTIONS PLUMB_TEST_SKIP PATH

out=$build/sanitize-run.log
sh tests/run.sh "$build" | tee "$out"
totals=$(tail -n 1 "$out" |
  sed -n 's/^\([0-9][0-9]*\) passed, \([0-9][0-9]*\) failed$/\1 \2/p')
if [ -z "$totals" ]; then
  echo "tests/run.sh did not end with its totals"
  exit 1
fi
set -- $totals

passed=$1 failed=$2

# test_realtime with UBSan alone; counted as tests/run.sh counts cmocka
# suites (a crash or a missing summary is one failure more).
realtime=$build/ubsan/tests/test_realtime
name="test_realtime (UBSan only)"
log=$build/ubsan/test_realtime.log
if [ ! -x "$realtime" ]; then
  printf 'FAIL  %-32s (%s not built: make check-sanitize builds it)\n' "$name" "$realtime"
  failed=$((failed + 1))
else
  timeout 900 "$realtime" >"$log" 2>&1
  status=$?
  count() {
    sed -n "s/^\[  $1 *\] \([0-9][0-9]*\) test(s).*/\1/p" "$log" |
      awk '{ n += $1 } END { print n + 0 }'
  }
  rt_passed=$(count PASSED)
  rt_failed=$(count FAILED)
  if [ "$status" -ne 0 ] && [ "$rt_failed" -eq 0 ]; then
    rt_failed=1
  elif [ "$status" -eq 0 ] && [ "$rt_passed" -eq 0 ]; then
    rt_failed=1
  fi
  passed=$((passed + rt_passed)) failed=$((failed + rt_failed))
  if [ "$rt_failed" -eq 0 ]; then
    printf 'PASS  %-32s (%s passed, 0 failed)\n' "$name" "$rt_passed"
  else
    printf 'FAIL  %-32s (%s passed, %s failed; exit status %s)\n' "$name" \
      "$rt_passed" "$rt_failed" "$status"
    sed 's/^/    | /' "$log"
  fi
fi

found=$(find "$reports" -type f | wc -l)
if [ "$found" -eq 0 ]; then
  printf 'PASS  %-32s (no report in %s)\n' "sanitizer reports" "$reports"
  passed=$((passed + 1))
else
  printf 'FAIL  %-32s (%s reports in %s)\n' "sanitizer reports" "$found" "$reports"
  for report in "$reports"/*; do
    echo "    | ---- $(basename "$report")"
    sed 's/^/    | /' "$report"
  done
  failed=$((failed + 1))
fi
echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
