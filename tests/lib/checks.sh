# The test conventions the host tests share (sourced, not run): one line a
# check, "ok - NAME" or "not ok - NAME", and a last line "N passed, N
# failed" that tests/run.sh reads. The sourcing script sets WORK (a
# scratch folder) before it calls check.

passed=0
failed=0

pass() { passed=$((passed + 1)); echo "ok - $1"; }
fail() { failed=$((failed + 1)); echo "not ok - $1"; }

# check NAME COMMAND...: ok when COMMAND succeeds; its output is shown
# (indented) when it fails.
check() {
  check_name=$1
  shift
  if "$@" >"$WORK/why" 2>&1; then
    pass "$check_name"
  else
    fail "$check_name"
    sed 's/^/    # /' "$WORK/why"
  fi
}

# exits_zero STATUS STDERR: the host's exit status was 0; else say which,
# with what the host printed.
exits_zero() {
  if [ "$1" -ne 0 ]; then
    echo "exit status $1; stderr:"
    cat "$2"
    return 1
  fi
}

finish() {
  echo "$passed passed, $failed failed"
  [ "$failed" -eq 0 ]
  exit $?
}

# documented_header: the notes.csv columns as docs/log-format.md lists
# them, comma-joined (ROOT is the project's top folder).
documented_header() {
  sed -n '/^## notes\.csv/,/^### /s/^| `\([a-z0-9_]*\)` |.*/\1/p' \
    "$ROOT/docs/log-format.md" | paste -s -d , -
}

# require_lv2file_hosts LABEL BUILD_DIR: the built command and bundle,
# lv2file, and $PYTHON with numpy and scipy, or one failed check naming
# what is missing and the end of the test. Sets PLUMB and BUNDLE.
require_lv2file_hosts() {
  PLUMB=$2/plumb
  BUNDLE=$2/plumb.lv2
  missing=""
  [ -f "$BUNDLE/plumb.so" ] || missing="$missing $BUNDLE/plumb.so (make all)"
  [ -x "$PLUMB" ] || missing="$missing $PLUMB (make all)"
  command -v lv2file >/dev/null 2>&1 ||
    missing="$missing lv2file (apt-get install lv2file)"
  "$PYTHON" -c 'import numpy, scipy' 2>/dev/null ||
    missing="$missing $PYTHON with numpy and scipy (python3-numpy, python3-scipy)"
  if [ -n "$missing" ]; then
    fail "$1: missing:$missing"
    finish
  fi
}

# link_bundle: $WORK/lv2, for LV2_PATH, which names folders that hold
# bundles, not the bundles themselves (measured on Debian 12, lilv
# 0.24.14): a folder holding only a link to this build's bundle,
# so lilv reads no other folder of the build as a bundle and no installed
# plumb is picked up.
link_bundle() {
  mkdir "$WORK/lv2" && ln -s "$(cd "$BUNDLE" && pwd)" "$WORK/lv2/plumb.lv2" || exit 2
}
