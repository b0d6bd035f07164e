# arrank - build, test and demo.  See DEVELOPERS.md.
#
#   make            build libarrank.a and the arrank program
#   make test       install missing dependencies, build, run the whole suite
#   make demo       install missing dependencies, build, rank the demo campaign,
#                   draw its figures and write its report into plots/<campaign>/
#   make check      build and run the suite (no dependency step)
#   make check-layers  every module calls and includes only down (DEVELOPERS.md)
#   make test-asan  the suite under AddressSanitizer + UndefinedBehaviorSanitizer
#   make test-valgrind  the program on the demo under valgrind (no errors, no definite leaks)
#   make fuzz       each libFuzzer harness for FUZZ_SECONDS (default 30) seconds (clang)
#   make bench      speed against a SciPy reference and the file-reading floor (not a test)
#
# BUILD selects the object folder (default build/), so several configurations
# can live side by side.

BUILD      ?= build
CC         ?= cc
PKG_CONFIG ?= pkg-config
PREFIX     ?= /usr/local
DESTDIR    ?=

PKGS       := gsl udunits inih jansson nettle
WARN       := -Wall -Wextra -Wpedantic -Wshadow -Wformat=2
OPT        ?= -O2 -g
SAN        ?=
CPPFLAGS   += -Iinclude -D_POSIX_C_SOURCE=200809L
CFLAGS     ?=
ALL_CFLAGS := -std=c11 -pthread $(OPT) $(WARN) $(SAN) $(CFLAGS) -MMD -MP \
              $(shell $(PKG_CONFIG) --cflags $(PKGS) 2>/dev/null)
LDLIBS     := $(shell $(PKG_CONFIG) --libs $(PKGS) 2>/dev/null) -lcsv -lm -pthread
TEST_LIBS  := $(shell $(PKG_CONFIG) --libs cmocka 2>/dev/null)

LIB_SRC    := $(sort $(wildcard src/lib/*.c))
CLI_SRC    := $(sort $(wildcard src/cli/*.c))
TEST_SRC   := $(sort $(wildcard tests/test_*.c))
TOOL_SRC   := $(sort $(wildcard src/tools/*.c))

LIB_OBJ    := $(LIB_SRC:%.c=$(BUILD)/%.o)
CLI_OBJ    := $(CLI_SRC:%.c=$(BUILD)/%.o)
TEST_BIN   := $(TEST_SRC:tests/%.c=$(BUILD)/tests/%)
TOOL_BIN   := $(TOOL_SRC:src/tools/%.c=$(BUILD)/tools/%)

LIB        := $(BUILD)/libarrank.a
ARRANK     := $(BUILD)/arrank

DEMO       := campaigns/zeolite-ni-screen

.PHONY: all deps test check check-layers demo demo-data test-asan test-valgrind fuzz fuzz-build \
        bench clean install

all: $(LIB) $(ARRANK) $(TOOL_BIN)

deps:
	@sh src/tools/deps.sh

test:
	@sh src/tools/deps.sh --test
	@$(MAKE) --no-print-directory check

demo: deps
	@$(MAKE) --no-print-directory demo-run

check: all $(TEST_BIN)
	@BUILD=$(BUILD) sh tests/run.sh

# The report's date is the last commit of the demo data (SOURCE_DATE_EPOCH,
# reproducible-builds.org) unless the caller sets it, so a re-run with the same
# inputs leaves report.html unchanged.
demo-run: all
	$(ARRANK) rank $(DEMO) --json plots/$(notdir $(DEMO))/results.json \
	    --csv plots/$(notdir $(DEMO))/results.csv
	$(ARRANK) plot $(DEMO) --out plots/$(notdir $(DEMO))
	SOURCE_DATE_EPOCH="$${SOURCE_DATE_EPOCH:-$$(git log -1 --format=%ct -- $(DEMO) \
	    2>/dev/null)}" $(ARRANK) report $(DEMO) --out plots/$(notdir $(DEMO))

# Regenerate the demo campaign from its stated true parameters.
demo-data: $(BUILD)/tools/gen_demo
	$(BUILD)/tools/gen_demo $(DEMO)

test-asan:
	@LSAN_OPTIONS=suppressions=$(CURDIR)/tests/fuzz/lsan.supp ARRANK_SANITIZED=1 \
	    $(MAKE) --no-print-directory BUILD=$(BUILD)-asan OPT="-O1 -g" \
	    SAN="-fsanitize=address,undefined -fno-sanitize-recover=all -fno-omit-frame-pointer" check

# The program on the demo (and on a bad input) under valgrind's memcheck.
test-valgrind: all
	@sh tests/valgrind.sh $(ARRANK) $(DEMO)

# libFuzzer harnesses tests/fuzz/fuzz_*.c, built with clang in their own folder.
FUZZ_SECONDS ?= 30
FUZZ_BUILD   ?= $(BUILD)-fuzz
FUZZ_SAN     := -fsanitize=address,undefined -fno-sanitize-recover=all -fno-omit-frame-pointer
FUZZ_NAMES   := $(basename $(notdir $(sort $(wildcard tests/fuzz/fuzz_*.c))))
FUZZ_BIN     := $(FUZZ_NAMES:%=$(BUILD)/fuzz/%)

fuzz:
	@$(MAKE) --no-print-directory BUILD=$(FUZZ_BUILD) CC=clang OPT="-O1 -g" \
	    SAN="$(FUZZ_SAN) -fsanitize=fuzzer-no-link" fuzz-build
	@sh tests/fuzz/run.sh $(FUZZ_BUILD) $(FUZZ_SECONDS) $(FUZZ_NAMES)

fuzz-build: $(FUZZ_BIN)

$(BUILD)/fuzz/%: tests/fuzz/%.c tests/fuzz/fuzz_targets.h tests/fuzz/harness.h $(LIB)
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) $(ALL_CFLAGS) -fsanitize=fuzzer -o $@ $< $(LIB) $(LDLIBS)

# Every module calls and includes only down (the table in DEVELOPERS.md).
check-layers: $(LIB)
	@/usr/bin/python3 src/tools/check_layers.py --root . --objects $(BUILD)

# Speed: arrank against the SciPy reference and the floor (tests/bench/run.sh).
bench: all
	@sh tests/bench/run.sh $(BUILD)

$(LIB): $(LIB_OBJ)
	@mkdir -p $(dir $@)
	$(AR) rcs $@ $^

$(ARRANK): $(CLI_OBJ) $(LIB)
	$(CC) $(ALL_CFLAGS) -o $@ $(CLI_OBJ) $(LIB) $(LDLIBS)

# The tests find their reference data in this source tree's tests/data.
$(BUILD)/tests/%: tests/%.c $(LIB)
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) -DTESTS_DATA_DIR='"$(CURDIR)/tests/data"' $(ALL_CFLAGS) -o $@ $< \
	    $(LIB) $(LDLIBS) $(TEST_LIBS)

$(BUILD)/tools/%: src/tools/%.c $(LIB)
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) $(ALL_CFLAGS) -o $@ $< $(LIB) $(LDLIBS)

$(BUILD)/%.o: %.c
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) $(ALL_CFLAGS) -c -o $@ $<

install: all
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/lib $(DESTDIR)$(PREFIX)/include/arrank
	install -m 755 $(ARRANK) $(DESTDIR)$(PREFIX)/bin/arrank
	install -m 644 $(LIB) $(DESTDIR)$(PREFIX)/lib/libarrank.a
	install -m 644 include/arrank/*.h $(DESTDIR)$(PREFIX)/include/arrank/

clean:
	rm -rf build build-*

-include $(LIB_OBJ:.o=.d) $(CLI_OBJ:.o=.d) $(TEST_BIN:=.d)
