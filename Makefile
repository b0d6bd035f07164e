# arrank - build, test and demo.  See DEVELOPERS.md.
#
#   make            build libarrank.a and the arrank program
#   make test       install missing dependencies, build, run the whole suite
#   make demo       install missing dependencies, build, rank the demo campaign,
#                   draw its figures and write its report into plots/<campaign>/;
#                   rank it with its second batch and compare the two
#   make check      build and run the suite (no dependency step)
#   make check-layers  every module calls and includes only down (DEVELOPERS.md)
#   make test-asan  the suite under AddressSanitizer + UndefinedBehaviorSanitizer
#   make test-valgrind  the program on the demo under valgrind (no errors, no definite leaks)
#   make fuzz       each libFuzzer harness, then the pipeline fuzzer, for FUZZ_SECONDS
#                   (default 30) seconds each (clang, sanitizers)
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
DEMO2      := campaigns/zeolite-ni-batch2

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
	@echo "== the second batch ranked with the first: each rate against its own batch's reference"
	$(ARRANK) rank $(DEMO) $(DEMO2) --json plots/$(notdir $(DEMO2))/merged.json \
	    --csv plots/$(notdir $(DEMO2))/merged.csv
	@echo "== the samples tested in both batches, compared against the reference tested in both"
	$(ARRANK) compare $(DEMO) $(DEMO2) --reference 'ZN-01 H-beta' --out plots/$(notdir $(DEMO2))
	@echo "== the next runs planned for the three-way tie at the top (reactor limit 300 degC)"
	$(ARRANK) plan $(DEMO) --max-temperature 300C --budget 24 --out plots/$(notdir $(DEMO))

# Regenerate the demo campaign from its stated true parameters.
demo-data: $(BUILD)/tools/gen_demo
	$(BUILD)/tools/gen_demo $(DEMO)
	$(BUILD)/tools/gen_demo --batch2 $(DEMO2)

test-asan:
	@LSAN_OPTIONS=suppressions=$(CURDIR)/tests/fuzz/lsan.supp ARRANK_SANITIZED=1 \
	    $(MAKE) --no-print-directory BUILD=$(BUILD)-asan OPT="-O1 -g" \
	    SAN="-fsanitize=address,undefined -fno-sanitize-recover=all -fno-omit-frame-pointer" check

# The program on the demo (and on a bad input) under valgrind's memcheck.
test-valgrind: all
	@sh tests/valgrind.sh $(ARRANK) $(DEMO)

# libFuzzer harnesses tests/fuzz/fuzz_*.c, built with clang in their own folder,
# then the pipeline fuzzer (tests/fuzz/pipeline.py: random campaigns through
# fit, rank, check, plot and report) on the arrank program built in the same
# folder with the same sanitizers; each for FUZZ_SECONDS.  FUZZ_SEED fixes the
# pipeline's seed (default: the time, printed).  Failing campaigns are kept in
# FUZZ_BUILD/pipeline-failures/, crashes in FUZZ_BUILD/fuzz-artifacts/.
FUZZ_SECONDS ?= 30
FUZZ_SEED    ?=
FUZZ_BUILD   ?= $(BUILD)-fuzz
FUZZ_SAN     := -fsanitize=address,undefined -fno-sanitize-recover=all -fno-omit-frame-pointer
FUZZ_NAMES   := $(basename $(notdir $(sort $(wildcard tests/fuzz/fuzz_*.c))))
FUZZ_BIN     := $(FUZZ_NAMES:%=$(BUILD)/fuzz/%)

fuzz:
	@$(MAKE) --no-print-directory BUILD=$(FUZZ_BUILD) CC=clang OPT="-O1 -g" \
	    SAN="$(FUZZ_SAN) -fsanitize=fuzzer-no-link" fuzz-build
	@st=0; sh tests/fuzz/run.sh $(FUZZ_BUILD) $(FUZZ_SECONDS) $(FUZZ_NAMES) || st=1; \
	    echo "fuzz: pipeline for $(FUZZ_SECONDS)s"; \
	    /usr/bin/python3 tests/fuzz/pipeline.py $(FUZZ_BUILD)/arrank $(FUZZ_SECONDS) \
	        $(FUZZ_SEED) || { st=1; echo "fuzz: pipeline FAILED, see above"; }; \
	    exit $$st

fuzz-build: $(FUZZ_BIN) $(ARRANK)

$(BUILD)/fuzz/%: tests/fuzz/%.c tests/fuzz/fuzz_targets.h tests/fuzz/harness.h $(LIB)
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) $(ALL_CFLAGS) -fsanitize=fuzzer -o $@ $< $(LIB) $(LDLIBS)

# Every module calls and includes only down (the table in DEVELOPERS.md).
check-layers: $(LIB)
	@/usr/bin/python3 src/tools/check_layers.py --root . --objects $(BUILD)

# Speed: arrank against the SciPy reference and the floor (tests/bench/run.sh).
bench: all
	@sh tests/bench/run.sh $(BUILD)

# Made anew each time, so that a module removed from src/lib leaves no stale
# member behind.
$(LIB): $(LIB_OBJ)
	@mkdir -p $(dir $@)
	@rm -f $@
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

# Installed like a Unix tool (README "Installing"): the program, its manual
# page and bash completion (both made from the program's own --help texts),
# the static and the shared library with its soname, the public headers and
# a pkg-config file.  PREFIX and DESTDIR as usual.
VERSION    := $(shell sed -n 's/^\#define ARRANK_VERSION "\(.*\)"/\1/p' include/arrank/version.h)
SOVERSION  := 0
PIC_OBJ    := $(LIB_SRC:%.c=$(BUILD)/pic/%.o)
SHLIB      := $(BUILD)/libarrank.so.$(VERSION)
MAN_DATE   := $(shell git log -1 --format=%ct 2>/dev/null)

$(BUILD)/pic/%.o: %.c
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) $(ALL_CFLAGS) -fPIC -c -o $@ $<

$(SHLIB): $(PIC_OBJ)
	$(CC) $(ALL_CFLAGS) -shared -Wl,-soname,libarrank.so.$(SOVERSION) -o $@ $(PIC_OBJ) $(LDLIBS)

$(BUILD)/arrank.1: $(ARRANK) src/tools/mkman.sh
	SOURCE_DATE_EPOCH="$${SOURCE_DATE_EPOCH:-$(MAN_DATE)}" sh src/tools/mkman.sh $(ARRANK) >$@.tmp
	mv $@.tmp $@

$(BUILD)/arrank.bash: $(ARRANK) src/tools/mkcompletion.sh
	sh src/tools/mkcompletion.sh $(ARRANK) >$@.tmp
	mv $@.tmp $@

$(BUILD)/arrank.pc: Makefile include/arrank/version.h
	@mkdir -p $(dir $@)
	printf '%s\n' 'prefix=$(PREFIX)' 'exec_prefix=$${prefix}' 'libdir=$${exec_prefix}/lib' \
	    'includedir=$${prefix}/include' '' 'Name: arrank' \
	    'Description: Arrhenius fits, diagnostics and rankings for catalyst screening campaigns' \
	    'Version: $(VERSION)' 'Requires.private: $(PKGS)' 'Libs: -L$${libdir} -larrank' \
	    'Libs.private: -lcsv -lm -pthread' 'Cflags: -I$${includedir}' >$@

install: all $(SHLIB) $(BUILD)/arrank.1 $(BUILD)/arrank.bash $(BUILD)/arrank.pc
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/lib/pkgconfig \
	    $(DESTDIR)$(PREFIX)/include/arrank $(DESTDIR)$(PREFIX)/share/man/man1 \
	    $(DESTDIR)$(PREFIX)/share/bash-completion/completions
	install -m 755 $(ARRANK) $(DESTDIR)$(PREFIX)/bin/arrank
	install -m 644 $(LIB) $(DESTDIR)$(PREFIX)/lib/libarrank.a
	install -m 755 $(SHLIB) $(DESTDIR)$(PREFIX)/lib/
	ln -sf libarrank.so.$(VERSION) $(DESTDIR)$(PREFIX)/lib/libarrank.so.$(SOVERSION)
	ln -sf libarrank.so.$(SOVERSION) $(DESTDIR)$(PREFIX)/lib/libarrank.so
	install -m 644 include/arrank/*.h $(DESTDIR)$(PREFIX)/include/arrank/
	install -m 644 $(BUILD)/arrank.pc $(DESTDIR)$(PREFIX)/lib/pkgconfig/arrank.pc
	install -m 644 $(BUILD)/arrank.1 $(DESTDIR)$(PREFIX)/share/man/man1/arrank.1
	install -m 644 $(BUILD)/arrank.bash \
	    $(DESTDIR)$(PREFIX)/share/bash-completion/completions/arrank

clean:
	rm -rf build build-*

-include $(LIB_OBJ:.o=.d) $(CLI_OBJ:.o=.d) $(TEST_BIN:=.d) $(PIC_OBJ:.o=.d)
