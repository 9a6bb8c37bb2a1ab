# plumb: build, test, demo and benchmark.
# On a fresh Debian machine `make demo` and `make check` are the only two
# commands needed: both run `make deps` first.

PREFIX  ?= /usr/local
LV2DIR  ?= $(PREFIX)/lib/lv2
BINDIR  ?= $(PREFIX)/bin
DESTDIR ?=

CC      ?= cc
BUILD   := build
BUNDLE  := $(BUILD)/plumb.lv2
PYTHON  := /usr/bin/python3

PKGS        := lv2 lilv-0 fftw3f sndfile cmocka
# Debian packages the build and the tests need (see DEVELOPERS.md).
BUILD_DEBS  := build-essential pkg-config lv2-dev libfftw3-dev liblilv-dev \
               libsndfile1-dev libcmocka-dev
TEST_DEBS   := lilv-utils lv2file sordi serdi fluidsynth fluid-soundfont-gm \
               aubio-tools python3-numpy python3-scipy locales jalv jackd2

WARNINGS := -Wall -Wextra -Werror -Wshadow -Wstrict-prototypes \
            -Wmissing-prototypes -Wpointer-arith -Wcast-qual -Wvla
CFLAGS   ?= -O3 -g
ALL_CFLAGS = -std=c11 -D_XOPEN_SOURCE=700 $(WARNINGS) $(CFLAGS) \
             -fPIC -fvisibility=hidden -Icore
# The analysis must not depend on the host's floating-point surprises.
ALL_CFLAGS += -fno-fast-math -ffp-contract=off

PKG_CFLAGS = $(shell pkg-config --cflags $(PKGS) 2>/dev/null)
FFTW_LIBS  = $(shell pkg-config --libs fftw3f 2>/dev/null || echo -lfftw3f)

CORE_SRC  := $(wildcard core/*.c core/ensemble/*.c)
CORE_OBJ  := $(CORE_SRC:%.c=$(BUILD)/obj/%.o)
LV2_SRC   := $(wildcard plugin/lv2/*.c)
LV2_OBJ   := $(LV2_SRC:%.c=$(BUILD)/obj/%.o)
CLI_SRC   := $(wildcard plugin/cli/*.c)
CLI_OBJ   := $(CLI_SRC:%.c=$(BUILD)/obj/%.o)
SIG_SRC   := tests/signal.c tests/harness.c tests/sampled/render.c tests/urid_table.c
SIG_OBJ   := $(SIG_SRC:%.c=$(BUILD)/obj/%.o)
TEST_SRC  := $(wildcard tests/test_*.c)
TEST_BIN  := $(TEST_SRC:tests/%.c=$(BUILD)/tests/%)
SAMPLED_TEST_SRC := $(wildcard tests/sampled/test_*.c)
TEST_BIN  += $(SAMPLED_TEST_SRC:tests/sampled/test_%.c=$(BUILD)/tests/test_sampled_%)
TTL_SRC   := $(wildcard ttl/*.ttl)
PRESETS   := $(wildcard presets/*.ttl)

.SECONDARY:

.PHONY: all deps check demo bench clean install install-user uninstall \
        check-ttl check-unit check-hosts check-sanitize format

all: $(BUNDLE)/plumb.so $(BUNDLE)/manifest.ttl $(BUILD)/plumb

# ------------------------------------------------------------- dependencies
deps:
	@sh tools/deps.sh $(BUILD_DEBS) $(TEST_DEBS)

# ------------------------------------------------------------------- core
$(BUILD)/obj/%.o: %.c
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(PKG_CFLAGS) -MMD -MP -c $< -o $@

$(BUILD)/libplumb.a: $(CORE_OBJ)
	@mkdir -p $(dir $@)
	rm -f $@ && ar rcs $@ $^

# ----------------------------------------------------------------- plugin
# -z nodelete: a host's dlclose() leaves the plugin (and so libfftw3f,
# which keeps its planner's memory until fftwf_cleanup(), unsafe to call
# in a library others share) loaded, so that loading it again reuses that
# memory instead of losing it on every unload.
$(BUNDLE)/plumb.so: $(LV2_OBJ) $(BUILD)/libplumb.a
	@mkdir -p $(dir $@)
	$(CC) $(LDFLAGS) -shared -Wl,--exclude-libs,ALL -Wl,-z,defs -Wl,-z,nodelete -o $@ $(LV2_OBJ) \
	    $(BUILD)/libplumb.a $(FFTW_LIBS) -lpthread -lm

$(BUNDLE)/manifest.ttl: ttl/manifest.ttl.in $(TTL_SRC) $(PRESETS)
	@mkdir -p $(dir $@)
	sed -e 's/@LIB_EXT@/.so/g' ttl/manifest.ttl.in > $@
	cp $(TTL_SRC) $(BUNDLE)/
	$(if $(PRESETS),cp $(PRESETS) $(BUNDLE)/)

# ---------------------------------------------------------------- command
$(BUILD)/plumb: $(CLI_OBJ) $(BUILD)/libplumb.a
	$(CC) $(LDFLAGS) -o $@ $(CLI_OBJ) $(BUILD)/libplumb.a \
	    $(shell pkg-config --libs lilv-0 sndfile 2>/dev/null) $(FFTW_LIBS) -lpthread -lm

# ------------------------------------------------------------------ tests
# Test and tool programs record the headers they include (-MMD, in
# $@.d), so that they are rebuilt when a header of the core, the plugin or
# the tests changes.
$(BUILD)/tests/%: tests/%.c $(SIG_OBJ) $(BUILD)/libplumb.a
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(PKG_CFLAGS) -Itests -MMD -MP -MF $@.d $(LDFLAGS) -o $@ $< $(SIG_OBJ) \
	    $(BUILD)/libplumb.a $(shell pkg-config --libs cmocka sndfile 2>/dev/null) \
	    $(FFTW_LIBS) -lpthread -lm -ldl

$(BUILD)/tests/test_sampled_%: tests/sampled/test_%.c $(SIG_OBJ) $(BUILD)/libplumb.a
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(PKG_CFLAGS) -Itests -Itests/sampled -MMD -MP -MF $@.d $(LDFLAGS) -o $@ $< $(SIG_OBJ) \
	    $(BUILD)/libplumb.a $(shell pkg-config --libs cmocka sndfile 2>/dev/null) \
	    $(FFTW_LIBS) -lpthread -lm -ldl

check: deps
	@$(MAKE) --no-print-directory all
	@$(MAKE) --no-print-directory $(TEST_BIN)
	@sh tests/run.sh $(BUILD)

demo: deps
	@$(MAKE) --no-print-directory all
	@sh tools/demo.sh $(BUILD)

bench: deps
	@$(MAKE) --no-print-directory all
	@sh tools/bench.sh $(BUILD)

format:
	clang-format -i core/*.[ch] plugin/*/*.[ch] tests/*.[ch]

# ---------------------------------------------------------------- install
install: all
	install -d $(DESTDIR)$(LV2DIR)/plumb.lv2 $(DESTDIR)$(BINDIR)
	install -m 644 $(BUNDLE)/*.ttl $(DESTDIR)$(LV2DIR)/plumb.lv2/
	install -m 755 $(BUNDLE)/plumb.so $(DESTDIR)$(LV2DIR)/plumb.lv2/
	install -m 755 $(BUILD)/plumb $(DESTDIR)$(BINDIR)/plumb

install-user:
	@$(MAKE) --no-print-directory install PREFIX=$(HOME)/.local \
	    LV2DIR=$(HOME)/.lv2 DESTDIR=

uninstall:
	rm -rf $(DESTDIR)$(LV2DIR)/plumb.lv2 $(DESTDIR)$(BINDIR)/plumb

clean:
	rm -rf $(BUILD)

-include $(CORE_OBJ:.o=.d) $(LV2_OBJ:.o=.d) $(CLI_OBJ:.o=.d) $(SIG_OBJ:.o=.d)
-include $(TEST_BIN:=.d)

# ------------------------------------------------------------ tool programs
# Small programs used by the demo and the benchmark (tools/*.c), linked
# with the test signal generator and the core.
TOOL_SRC := $(wildcard tools/*.c)
TOOL_BIN := $(TOOL_SRC:tools/%.c=$(BUILD)/tools/%)
-include $(TOOL_BIN:=.d)
tools: $(TOOL_BIN)
$(BUILD)/tools/%: tools/%.c $(SIG_OBJ) $(BUILD)/libplumb.a
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(PKG_CFLAGS) -Itests -MMD -MP -MF $@.d $(LDFLAGS) -o $@ $< $(SIG_OBJ) \
	    $(BUILD)/libplumb.a $(shell pkg-config --libs sndfile 2>/dev/null) \
	    $(FFTW_LIBS) -lpthread -lm

# ------------------------------------------------------------ other hosts
# Ardour 7's headless tools (Debian package ardour, about 115 MB), too
# heavy for `make check`; see tests/check-hosts/ardour.sh.
check-hosts: all
	@sh tests/check-hosts/ardour.sh $(BUILD)

# ------------------------------------------------------------ reliability
# Fuzz harnesses (clang's libFuzzer), in their own file.
-include tests/fuzz/fuzz.mk
-include tests/sanitize.mk
