# plumb: build, test, demo and benchmark.
# On a fresh Debian machine `make demo` and `make check` are the only two
# commands needed: both run `make deps` first. `make V=1` shows the full
# commands; by default each step prints one short line.

PREFIX     ?= /usr/local
LV2DIR     ?= $(PREFIX)/lib/lv2
BINDIR     ?= $(PREFIX)/bin
LIBDIR     ?= $(PREFIX)/lib
INCLUDEDIR ?= $(PREFIX)/include
DESTDIR    ?=

CC      ?= cc
BUILD   := build
BUNDLE  := $(BUILD)/plumb.lv2
PYTHON  := /usr/bin/python3

# The core library's version: the soname changes with the major only
# (docs/library.md says what keeps a program built against an older
# header working).
VERSION       := 0.3.0
VERSION_MAJOR := 0

PKGS        := lv2 lilv-0 fftw3f sndfile cmocka
# Debian packages the build and the tests need (see DEVELOPERS.md).
BUILD_DEBS  := build-essential pkg-config lv2-dev libfftw3-dev liblilv-dev \
               libsndfile1-dev libcmocka-dev
TEST_DEBS   := lilv-utils lv2file sordi serdi fluidsynth fluid-soundfont-gm \
               aubio-tools python3-numpy python3-scipy locales jalv jackd2 \
               sox

WARNINGS := -Wall -Wextra -Werror -Wshadow -Wstrict-prototypes \
            -Wmissing-prototypes -Wpointer-arith -Wcast-qual -Wvla
CFLAGS   ?= -O3 -g
# The analysis must not depend on the host's floating-point surprises.
BASE_CFLAGS = -std=c11 -D_XOPEN_SOURCE=700 $(WARNINGS) $(CFLAGS) \
              -fPIC -fvisibility=hidden -fno-fast-math -ffp-contract=off
PUBLIC_INCLUDES := -Icore/include -Iplugin/shared

PKG_CFLAGS = $(shell pkg-config --cflags $(PKGS) 2>/dev/null)
FFTW_LIBS  = $(shell pkg-config --libs fftw3f 2>/dev/null || echo -lfftw3f)

# Quiet steps: one line a file unless V=1.
ifeq ($(V),1)
  Q :=
  say = @true
else
  Q := @
  say = @printf '  %-7s %s\n'
endif

# The rooms. Each folder's objects get the include paths of its own
# layer: the core sees its internals, nothing else does.
CORE_SRC    := $(wildcard core/*/*.c)
CORE_OBJ    := $(CORE_SRC:%.c=$(BUILD)/obj/%.o)
FORMATS_SRC := $(wildcard plugin/formats/*.c)
FORMATS_OBJ := $(FORMATS_SRC:%.c=$(BUILD)/obj/%.o)
LV2_SRC     := $(wildcard plugin/lv2/*.c)
LV2_OBJ     := $(LV2_SRC:%.c=$(BUILD)/obj/%.o)
CLI_SRC     := $(wildcard plugin/cli/*.c)
CLI_OBJ     := $(CLI_SRC:%.c=$(BUILD)/obj/%.o)
TESTLIB_SRC := $(wildcard tests/lib/*.c tests/plugin/*_host.c) tests/sampled/render.c
TESTLIB_SRC := $(filter-out tests/lib/test_%.c,$(TESTLIB_SRC))
TESTLIB_OBJ := $(TESTLIB_SRC:%.c=$(BUILD)/obj/%.o)
TEST_SRC    := $(wildcard tests/*/test_*.c)
TEST_BIN    := $(addprefix $(BUILD)/tests/,$(notdir $(TEST_SRC:.c=)))
TOOL_SRC    := $(wildcard tools/*.c)
TOOL_BIN    := $(TOOL_SRC:tools/%.c=$(BUILD)/tools/%)
TTL_SRC     := $(wildcard ttl/*.ttl)
PRESETS     := $(wildcard presets/*.ttl)
HEADERS     := $(wildcard core/include/*.h)

CORE_LIB    := $(BUILD)/libplumb.a
SHARED_LIB  := $(BUILD)/libplumb.so.$(VERSION)
SONAME      := libplumb.so.$(VERSION_MAJOR)

$(BUILD)/obj/core/%.o:           ROOM_CFLAGS = -Icore $(PUBLIC_INCLUDES)
$(BUILD)/obj/plugin/formats/%.o: ROOM_CFLAGS = -Iplugin/formats $(PUBLIC_INCLUDES)
$(BUILD)/obj/plugin/lv2/%.o:     ROOM_CFLAGS = -Iplugin/formats $(PUBLIC_INCLUDES)
$(BUILD)/obj/plugin/cli/%.o:     ROOM_CFLAGS = -Iplugin/formats $(PUBLIC_INCLUDES)
$(BUILD)/obj/tests/%.o:          ROOM_CFLAGS = -Itests/lib -Itests/plugin -Itests/sampled \
                                               -Iplugin/lv2 $(PUBLIC_INCLUDES)
# Module tests of the core test its internal modules, so they, and only
# they, see the core's private headers.
TEST_CFLAGS = -Itests/lib -Itests/plugin -Itests/sampled -Iplugin/formats \
              -Iplugin/lv2 $(PUBLIC_INCLUDES)
CORE_TEST_CFLAGS = -Icore $(TEST_CFLAGS)

.SECONDARY:

.PHONY: all lib deps check demo bench clean install install-user uninstall \
        check-hosts check-sanitize check-headers format format-check lint tools

all: $(BUNDLE)/plumb.so $(BUNDLE)/manifest.ttl $(BUILD)/plumb lib

# ------------------------------------------------------------- dependencies
deps:
	@sh tools/deps.sh $(BUILD_DEBS) $(TEST_DEBS)

# ------------------------------------------------------------------- core
$(BUILD)/obj/%.o: %.c
	@mkdir -p $(dir $@)
	$(say) CC $<
	$(Q)$(CC) $(BASE_CFLAGS) $(ROOM_CFLAGS) $(PKG_CFLAGS) -MMD -MP -c $< -o $@

$(CORE_LIB): $(CORE_OBJ)
	@mkdir -p $(dir $@)
	$(say) AR $@
	$(Q)rm -f $@ && ar rcs $@ $^

# The shared library exports the public calls only: the objects are built
# with hidden visibility and plumb.h marks its calls PLUMB_API.
$(SHARED_LIB): $(CORE_OBJ)
	$(say) LINK $@
	$(Q)$(CC) $(LDFLAGS) -shared -Wl,-soname,$(SONAME) -Wl,-z,defs -o $@ $^ \
	    $(FFTW_LIBS) -lpthread -lm
	$(Q)ln -sf libplumb.so.$(VERSION) $(BUILD)/$(SONAME)
	$(Q)ln -sf $(SONAME) $(BUILD)/libplumb.so

# plumb.pc is written at install time, for the PREFIX installed to.
PC_SED = sed -e 's|@PREFIX@|$(PREFIX)|; s|@LIBDIR@|$(LIBDIR)|; s|@INCLUDEDIR@|$(INCLUDEDIR)|' \
             -e 's|@VERSION@|$(VERSION)|; s|@MAJOR@|$(VERSION_MAJOR)|'

lib: $(CORE_LIB) $(SHARED_LIB)

# ----------------------------------------------------------------- plugin
# -z nodelete: a host's dlclose() leaves the plugin (and so libfftw3f,
# which keeps its planner's memory until fftwf_cleanup(), unsafe to call
# in a library others share) loaded, so that loading it again reuses that
# memory instead of losing it on every unload.
$(BUNDLE)/plumb.so: $(LV2_OBJ) $(FORMATS_OBJ) $(CORE_LIB)
	@mkdir -p $(dir $@)
	$(say) LINK $@
	$(Q)$(CC) $(LDFLAGS) -shared -Wl,--exclude-libs,ALL -Wl,-z,defs -Wl,-z,nodelete \
	    -o $@ $(LV2_OBJ) $(FORMATS_OBJ) $(CORE_LIB) $(FFTW_LIBS) -lpthread -lm

$(BUNDLE)/manifest.ttl: ttl/manifest.ttl.in $(TTL_SRC) $(PRESETS)
	@mkdir -p $(dir $@)
	$(say) GEN $@
	$(Q)sed -e 's/@LIB_EXT@/.so/g' ttl/manifest.ttl.in > $@
	$(Q)cp $(TTL_SRC) $(BUNDLE)/
	$(Q)$(if $(PRESETS),cp $(PRESETS) $(BUNDLE)/)

# ---------------------------------------------------------------- command
$(BUILD)/plumb: $(CLI_OBJ) $(FORMATS_OBJ) $(CORE_LIB)
	$(say) LINK $@
	$(Q)$(CC) $(LDFLAGS) -o $@ $(CLI_OBJ) $(FORMATS_OBJ) $(CORE_LIB) \
	    $(shell pkg-config --libs lilv-0 sndfile 2>/dev/null) $(FFTW_LIBS) -lpthread -lm

# ------------------------------------------------------------------ tests
# Test binaries sit flat in $(BUILD)/tests whatever their room; each
# records the headers it includes (-MMD, in $@.d) so that a changed header
# rebuilds it.
TEST_LIBS = $(TESTLIB_OBJ) $(FORMATS_OBJ) $(CORE_LIB) \
            $(shell pkg-config --libs cmocka sndfile 2>/dev/null) $(FFTW_LIBS) \
            -lpthread -lm -ldl

define test_rule
$(BUILD)/tests/$(notdir $(1:.c=)): $(1) $(TESTLIB_OBJ) $(FORMATS_OBJ) $(CORE_LIB)
	@mkdir -p $$(dir $$@)
	$$(say) TEST $$@
	$$(Q)$$(CC) $$(BASE_CFLAGS) $(if $(filter tests/core/%,$(1)),$$(CORE_TEST_CFLAGS),$$(TEST_CFLAGS)) \
	    $$(PKG_CFLAGS) -MMD -MP -MF $$@.d $$(LDFLAGS) -o $$@ $$< $$(TEST_LIBS)
endef
$(foreach t,$(TEST_SRC),$(eval $(call test_rule,$(t))))

check: deps
	@$(MAKE) --no-print-directory all
	@$(MAKE) --no-print-directory $(TEST_BIN) check-headers
	@sh tests/run.sh $(BUILD)

# Every public header compiles on its own under maximum warnings (as
# serd's test/headers do): it includes what it uses and nothing leaks.
HEADER_WARNINGS := $(WARNINGS) -Wpedantic -Wconversion -Wsign-conversion \
                   -Wundef -Wredundant-decls -Wdouble-promotion
check-headers: $(HEADERS:core/include/%.h=$(BUILD)/headers/%.ok)
$(BUILD)/headers/%.ok: core/include/%.h
	@mkdir -p $(dir $@)
	$(say) HEADER $<
	$(Q)printf '#include "%s"\n' $(notdir $<) | \
	    $(CC) -std=c11 $(HEADER_WARNINGS) -Icore/include -x c -fsyntax-only -
	$(Q)printf '#include "%s"\n#include "%s"\n' $(notdir $<) $(notdir $<) | \
	    $(CC) -std=c11 $(HEADER_WARNINGS) -Icore/include -x c -fsyntax-only -
	$(Q)touch $@

demo: deps
	@$(MAKE) --no-print-directory all
	@sh tools/demo.sh $(BUILD)

bench: deps
	@$(MAKE) --no-print-directory all
	@sh tools/bench.sh $(BUILD)

# ------------------------------------------------------------ tool programs
# Small programs used by the demo and the benchmark (tools/*.c), linked
# with the test signal generator and the core.
# Two benchmarks look inside the analyser, and so see the core's private
# headers: bench_core counts the hops it ran, bench_memory prints the
# sizes of its parts. Every other tool uses the public API.
TOOLS_INSIDE := $(BUILD)/tools/bench_core $(BUILD)/tools/bench_memory
$(TOOLS_INSIDE): TOOL_CFLAGS = -Icore
tools: $(TOOL_BIN)
$(BUILD)/tools/%: tools/%.c $(TESTLIB_OBJ) $(FORMATS_OBJ) $(CORE_LIB)
	@mkdir -p $(dir $@)
	$(say) TOOL $@
	$(Q)$(CC) $(BASE_CFLAGS) $(TOOL_CFLAGS) $(TEST_CFLAGS) $(PKG_CFLAGS) -MMD -MP -MF $@.d \
	    $(LDFLAGS) -o $@ $< $(TEST_LIBS)

# ------------------------------------------------------------ source upkeep
# Every C file of the project: tracked ones and new ones not yet added
# (git's own ignore rules leave the build folders out), or, outside a git
# checkout, every one under the source folders.
ALL_C_SOURCES = $(sort $(wildcard $(shell { git ls-files --cached --others --exclude-standard \
                  '*.c' '*.h' || find core plugin tests tools -name '*.[ch]'; } 2>/dev/null)))
format:
	clang-format -i $(ALL_C_SOURCES)

# The files `make format` would change, changing none; fails if any.
format-check:
	@n=0; for f in $(ALL_C_SOURCES); do \
	  if ! clang-format --dry-run -Werror $$f >/dev/null 2>&1; then echo "  $$f"; n=$$((n + 1)); fi; \
	done; echo "format-check: $$n of $(words $(ALL_C_SOURCES)) files would change"; [ $$n -eq 0 ]

# clang-tidy over the project's own C sources (.clang-tidy: warnings are
# errors), each with its room's include paths as the build gives them
# (only those: a source's own folder is not one, or plugin/cli/features.h
# would stand in for the C library's <features.h>). Every file is checked
# and every finding shown; clang-tidy's "N warnings generated" counts of
# the system headers' suppressed warnings are left out.
LINT_SOURCES = $(CORE_SRC) $(FORMATS_SRC) $(LV2_SRC) $(CLI_SRC)
LINT_FLAGS   = -std=c11 -D_XOPEN_SOURCE=700 $(PUBLIC_INCLUDES) $(PKG_CFLAGS)
lint:
	@command -v clang-tidy >/dev/null || { echo "make lint needs clang-tidy" >&2; exit 1; }
	@failed=0; for f in $(LINT_SOURCES); do \
	  case $$f in core/*) room=-Icore ;; *) room=-Iplugin/formats ;; esac; \
	  if ! out=$$(clang-tidy --quiet $$f -- $$room $(LINT_FLAGS) 2>&1); then \
	    printf '%s\n' "$$out" | grep -v 'warnings* generated\.$$'; failed=$$((failed + 1)); \
	  fi; \
	done; \
	if [ $$failed -ne 0 ]; then echo "lint: $$failed of $(words $(LINT_SOURCES)) files have findings" >&2; exit 1; fi
	@echo "lint: clean ($(words $(LINT_SOURCES)) files)"

# ---------------------------------------------------------------- install
install: all
	install -d $(DESTDIR)$(LV2DIR)/plumb.lv2 $(DESTDIR)$(BINDIR) \
	    $(DESTDIR)$(LIBDIR)/pkgconfig $(DESTDIR)$(INCLUDEDIR)/plumb-$(VERSION_MAJOR)
	install -m 644 $(BUNDLE)/*.ttl $(DESTDIR)$(LV2DIR)/plumb.lv2/
	install -m 755 $(BUNDLE)/plumb.so $(DESTDIR)$(LV2DIR)/plumb.lv2/
	install -m 755 $(BUILD)/plumb $(DESTDIR)$(BINDIR)/plumb
	install -m 644 $(HEADERS) $(DESTDIR)$(INCLUDEDIR)/plumb-$(VERSION_MAJOR)/
	install -m 644 $(CORE_LIB) $(DESTDIR)$(LIBDIR)/
	install -m 755 $(SHARED_LIB) $(DESTDIR)$(LIBDIR)/
	ln -sf libplumb.so.$(VERSION) $(DESTDIR)$(LIBDIR)/$(SONAME)
	ln -sf $(SONAME) $(DESTDIR)$(LIBDIR)/libplumb.so
	$(PC_SED) core/plumb.pc.in > $(DESTDIR)$(LIBDIR)/pkgconfig/plumb.pc
	chmod 644 $(DESTDIR)$(LIBDIR)/pkgconfig/plumb.pc

install-user:
	@$(MAKE) --no-print-directory install PREFIX=$(HOME)/.local \
	    LV2DIR=$(HOME)/.lv2 DESTDIR=

uninstall:
	rm -rf $(DESTDIR)$(LV2DIR)/plumb.lv2 $(DESTDIR)$(BINDIR)/plumb \
	    $(DESTDIR)$(INCLUDEDIR)/plumb-$(VERSION_MAJOR) \
	    $(DESTDIR)$(LIBDIR)/libplumb.a $(DESTDIR)$(LIBDIR)/libplumb.so* \
	    $(DESTDIR)$(LIBDIR)/pkgconfig/plumb.pc

clean:
	rm -rf $(BUILD) build-sanitize build-fuzz

-include $(CORE_OBJ:.o=.d) $(FORMATS_OBJ:.o=.d) $(LV2_OBJ:.o=.d) $(CLI_OBJ:.o=.d)
-include $(TESTLIB_OBJ:.o=.d) $(TEST_BIN:=.d) $(TOOL_BIN:=.d)

# ------------------------------------------------------------ other hosts
# Ardour 7's headless tools (Debian package ardour, about 115 MB), too
# heavy for `make check`; see tests/hosts/workstation/ardour.sh.
check-hosts: all
	@sh tests/hosts/workstation/ardour.sh $(BUILD)

# ------------------------------------------------------------ reliability
# Fuzz harnesses (clang's libFuzzer) and the sanitizer build, in their
# own files.
-include tests/fuzz/fuzz.mk
-include tests/sanitize/sanitize.mk
