# Fuzz harnesses (clang's libFuzzer with ASan and UBSan), included by the
# Makefile. Everything is built in build-fuzz/ with clang, apart from the
# normal gcc build; see tests/fuzz/README.md.
#
#   make fuzz-build                  the harnesses, build-fuzz/fuzz_*
#   make fuzz [FUZZ_SECONDS=60]      each harness for FUZZ_SECONDS seconds
#   make fuzz FUZZ_HARNESSES=core    only some of them

CLANG          ?= clang-14
FUZZ_BUILD     ?= build-fuzz
FUZZ_SECONDS   ?= 60
FUZZ_RSS_MB    ?= 2048
FUZZ_TIMEOUT_S ?= 30
FUZZ_FLAGS     ?=
FUZZ_HARNESSES ?= core tuning log_read plugin
# Known, reported defects to look past (README.md); none by default.
FUZZ_WAIVE     ?=

FUZZ_SANITIZE := -fsanitize=address,undefined -fno-sanitize-recover=all \
                 -fno-omit-frame-pointer
# The project's language and floating-point flags (not -Werror: a warning
# only clang gives must not stop the fuzzing of code others are editing).
FUZZ_CFLAGS := -std=c11 -D_XOPEN_SOURCE=700 -O1 -g -Wall -Wextra \
               -fno-fast-math -ffp-contract=off $(FUZZ_SANITIZE) \
               -fsanitize=fuzzer-no-link -Icore $(PUBLIC_INCLUDES) -Iplugin/formats \
               $(shell pkg-config --cflags lv2 2>/dev/null)
FUZZ_HARNESS_CFLAGS := $(FUZZ_CFLAGS) -Werror -Wshadow -Wstrict-prototypes \
                       -Wmissing-prototypes -Itests/lib -Itests/fuzz
FUZZ_LIBS := $(shell pkg-config --libs fftw3f 2>/dev/null || echo -lfftw3f) \
             -lpthread -lm

FUZZ_CORE_OBJ := $(CORE_SRC:%.c=$(FUZZ_BUILD)/obj/%.o)
FUZZ_FORMATS_OBJ := $(FORMATS_SRC:%.c=$(FUZZ_BUILD)/obj/%.o)
FUZZ_LV2_OBJ  := $(LV2_SRC:%.c=$(FUZZ_BUILD)/obj/%.o) $(FUZZ_FORMATS_OBJ) \
                 $(FUZZ_BUILD)/obj/tests/lib/urid_table.o
FUZZ_CLI_TUNING_OBJ := $(FUZZ_BUILD)/obj/plugin/cli/tuning_file.o \
                       $(FUZZ_BUILD)/obj/plugin/cli/parse_value.o
# summary.c prints through progress.c's console_error, which the harness
# replaces (it would fill the fuzzer's output); terminal_text.c, where
# present, is what summary.c uses for the take labels.
FUZZ_CLI_LOG_OBJ := $(FUZZ_BUILD)/obj/plugin/formats/log_read.o \
                    $(FUZZ_BUILD)/obj/plugin/cli/summary.o \
                    $(FUZZ_BUILD)/obj/plugin/cli/terminal_text.o

FUZZ_BINS := $(FUZZ_HARNESSES:%=$(FUZZ_BUILD)/fuzz_%)

.PHONY: fuzz fuzz-build fuzz-regressions

fuzz-build: $(FUZZ_BINS)

fuzz: fuzz-build
	@PLUMB_FUZZ_WAIVE="$${PLUMB_FUZZ_WAIVE:-$(FUZZ_WAIVE)}" sh tests/fuzz/run.sh $(FUZZ_BUILD) $(FUZZ_SECONDS) $(FUZZ_RSS_MB) \
	    $(FUZZ_TIMEOUT_S) "$(FUZZ_FLAGS)" $(FUZZ_HARNESSES)

# Only the seeds and the saved inputs of tests/fuzz/regressions/, once each.
fuzz-regressions: fuzz-build
	@PLUMB_FUZZ_WAIVE="$${PLUMB_FUZZ_WAIVE:-$(FUZZ_WAIVE)}" sh tests/fuzz/run.sh $(FUZZ_BUILD) 0 $(FUZZ_RSS_MB) \
	    $(FUZZ_TIMEOUT_S) "$(FUZZ_FLAGS)" $(FUZZ_HARNESSES)

$(FUZZ_BUILD)/obj/%.o: %.c
	@mkdir -p $(dir $@)
	$(say) CLANG $<
	$(Q)$(CLANG) $(FUZZ_CFLAGS) -MMD -MP -c $< -o $@

$(FUZZ_BUILD)/harness/%.o: tests/fuzz/%.c
	@mkdir -p $(dir $@)
	$(say) CLANG $<
	$(Q)$(CLANG) $(FUZZ_HARNESS_CFLAGS) -MMD -MP -c $< -o $@

$(FUZZ_BUILD)/fuzz_core: $(FUZZ_BUILD)/harness/fuzz_core.o $(FUZZ_FORMATS_OBJ) $(FUZZ_CORE_OBJ)
	$(say) LINK $@
	$(Q)$(CLANG) -fsanitize=fuzzer $(FUZZ_SANITIZE) -o $@ $^ $(FUZZ_LIBS)

$(FUZZ_BUILD)/fuzz_tuning: $(FUZZ_BUILD)/harness/fuzz_tuning.o \
                           $(FUZZ_CLI_TUNING_OBJ) $(FUZZ_FORMATS_OBJ) $(FUZZ_CORE_OBJ)
	$(say) LINK $@
	$(Q)$(CLANG) -fsanitize=fuzzer $(FUZZ_SANITIZE) -o $@ $^ $(FUZZ_LIBS)

$(FUZZ_BUILD)/fuzz_log_read: $(FUZZ_BUILD)/harness/fuzz_log_read.o \
                             $(FUZZ_CLI_LOG_OBJ) $(filter-out %/log_read.o,$(FUZZ_FORMATS_OBJ)) \
                             $(FUZZ_CORE_OBJ)
	$(say) LINK $@
	$(Q)$(CLANG) -fsanitize=fuzzer $(FUZZ_SANITIZE) -o $@ $^ $(FUZZ_LIBS)

$(FUZZ_BUILD)/fuzz_plugin: $(FUZZ_BUILD)/harness/fuzz_plugin.o \
                           $(FUZZ_LV2_OBJ) $(FUZZ_CORE_OBJ)
	$(say) LINK $@
	$(Q)$(CLANG) -fsanitize=fuzzer $(FUZZ_SANITIZE) -o $@ $^ $(FUZZ_LIBS)

-include $(wildcard $(FUZZ_BUILD)/obj/*/*.d $(FUZZ_BUILD)/obj/*/*/*.d \
                    $(FUZZ_BUILD)/harness/*.d)
