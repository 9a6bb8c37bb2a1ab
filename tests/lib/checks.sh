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
