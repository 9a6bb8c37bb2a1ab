# `make check-sanitize`: the whole project (core, plugin bundle, command
# and every cmocka suite but test_realtime) built into build-sanitize/
# with AddressSanitizer and UndefinedBehaviorSanitizer, then the suites of
# `make check` run on it by tests/sanitize/run.sh (see there: reports,
# foreign hosts, skips with their reasons in tests/sanitize/skip).
# test_realtime interposes malloc and the locks, as ASan does, so it is
# built with UBSan alone, with the core and the plugin it loads, in
# build-sanitize/ubsan/, and run there by the same script.
# Included from the Makefile.
#
# Built with gcc (CC=cc): clang would need -shared-libasan for the plugin,
# whose link is checked with -z defs. -O2 keeps the run short while the
# sanitizers keep what they check (common practice, no source).

SAN_BUILD   := build-sanitize
SAN_FLAGS   := -fsanitize=address,undefined -fno-omit-frame-pointer \
               -fno-sanitize-recover=all
SAN_CFLAGS  := -O2 -g $(SAN_FLAGS)
SAN_TESTS   := $(filter-out %/test_realtime, \
                 $(patsubst $(BUILD)/%,$(SAN_BUILD)/%,$(TEST_BIN)))
SAN_VARS     = CC="$(CC)" CFLAGS="$(SAN_CFLAGS)" LDFLAGS="$(SAN_FLAGS)"
SAN_UB_BUILD := $(SAN_BUILD)/ubsan
SAN_UB_FLAGS := -fsanitize=undefined -fno-omit-frame-pointer \
                -fno-sanitize-recover=all
SAN_UB_VARS   = CC="$(CC)" CFLAGS="-O2 -g $(SAN_UB_FLAGS)" \
                LDFLAGS="$(SAN_UB_FLAGS)"

.PHONY: check-sanitize

check-sanitize: deps
	@$(MAKE) --no-print-directory BUILD=$(SAN_BUILD) $(SAN_VARS) \
	    all $(SAN_TESTS)
	@$(MAKE) --no-print-directory BUILD=$(SAN_UB_BUILD) $(SAN_UB_VARS) \
	    $(SAN_UB_BUILD)/plumb.lv2/plumb.so $(SAN_UB_BUILD)/tests/test_realtime
	@$(SAN_VARS) sh tests/sanitize/run.sh $(SAN_BUILD)
