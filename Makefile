# biaslint: plain Makefile. `make` builds build/biaslint; `make test` runs the cmocka suite and the
# integration tests; `make sanitize` runs the same suite under ASan+UBSan; `make demo` sets up and runs
# the demo; `make deps` installs the Debian packages the build, tests and demo need.

CC      ?= gcc
BUILD   ?= build
PKGS    := libpcre2-8
CPPFLAGS += -Iinclude -I$(BUILD)/gen -D_POSIX_C_SOURCE=200809L -D_FILE_OFFSET_BITS=64
CFLAGS  ?= -O2 -g
CFLAGS  += -std=c11 -Wall -Wextra -Werror -Wshadow -Wconversion -Wno-sign-conversion
PCFLAGS := $(shell pkg-config --cflags $(PKGS) 2>/dev/null)
PLIBS   := $(shell pkg-config --libs $(PKGS) 2>/dev/null || echo -lpcre2-8)
LDLIBS  += $(PLIBS) -lcsv -lm -lpthread
CMOCKA_CFLAGS := $(shell pkg-config --cflags cmocka 2>/dev/null)
CMOCKA_LIBS   := $(shell pkg-config --libs cmocka 2>/dev/null || echo -lcmocka)

VERSION := 0.1.0
CPPFLAGS += -DBIASLINT_VERSION='"$(VERSION)"'

LIB_SRC  := $(filter-out src/main.c,$(wildcard src/*.c))
LIB_OBJ  := $(LIB_SRC:src/%.c=$(BUILD)/obj/%.o) $(BUILD)/obj/defaults_rules.o
TEST_SRC := $(wildcard tests/test_*.c)
TEST_BIN := $(TEST_SRC:tests/%.c=$(BUILD)/tests/%)

.PHONY: all test unit integration sanitize demo deps clean bench bench-design bench-lut install hostile valgrind fuzz fuzz-bins

all: $(BUILD)/biaslint

$(BUILD)/obj/%.o: src/%.c | $(BUILD)/gen/defaults_rules.h
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) $(PCFLAGS) $(CFLAGS) -MMD -MP -c -o $@ $<

# The default rules file is compiled into the binary, so biaslint works wherever it is copied.
$(BUILD)/gen/defaults_rules.c: rules/defaults.rules
	@mkdir -p $(dir $@)
	{ printf '/* generated from rules/defaults.rules: do not edit */\n#include "defaults_rules.h"\n'; \
	  printf 'const char rule_defaults_text[] =\n'; \
	  sed -e 's/\\/\\\\/g' -e 's/"/\\"/g' -e 's/^/"/' -e 's/$$/\\n"/' $<; \
	  printf ';\n'; } > $@
$(BUILD)/gen/defaults_rules.h:
	@mkdir -p $(dir $@)
	printf '#ifndef DEFAULTS_RULES_H\n#define DEFAULTS_RULES_H\nextern const char rule_defaults_text[];\n#endif\n' > $@
$(BUILD)/obj/defaults_rules.o: $(BUILD)/gen/defaults_rules.c $(BUILD)/gen/defaults_rules.h
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) $(CFLAGS) -c -o $@ $<

$(BUILD)/libbiaslint.a: $(LIB_OBJ)
	$(AR) rcs $@ $^

$(BUILD)/biaslint: $(BUILD)/obj/main.o $(BUILD)/libbiaslint.a
	$(CC) $(CFLAGS) $(LDFLAGS) -o $@ $^ $(LDLIBS)

$(BUILD)/tests/%: tests/%.c $(BUILD)/libbiaslint.a tests/testutil.h
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) $(PCFLAGS) $(CMOCKA_CFLAGS) $(CFLAGS) -Wno-conversion -Wno-format-truncation -MMD -MP -o $@ $< $(BUILD)/libbiaslint.a $(CMOCKA_LIBS) $(LDLIBS)

unit: $(TEST_BIN)
	@fail=0; for t in $(TEST_BIN); do \
	  (cd tests && BIASLINT=../$(BUILD)/biaslint ../$$t) || fail=1; done; \
	  exit $$fail

integration: $(BUILD)/biaslint
	BIASLINT=$(BUILD)/biaslint bash tests/integration.sh
	BUILD=$(BUILD) bash tests/readme.sh

# Hostile input and the guarantees (tests/hostile.sh): bad-input cases, round trips, limits.
hostile: $(BUILD)/biaslint
	BIASLINT=$(BUILD)/biaslint bash tests/hostile.sh

test: all unit integration hostile

# Performance (tests/bench/bench.sh, not part of test): generated designs of 10k to 1M MOSFETs timed
# against `wc -l` on the same files and a Python peer, with peak RSS and the floors; inputs in build/bench/.
# Both benchmarks run even when the first misses a floor; the status says whether either did.
bench: $(BUILD)/biaslint $(BUILD)/tests/bench_lut
	@st=0; bash tests/bench/bench.sh $(BUILD) || st=1; \
	  $(MAKE) --no-print-directory bench-lut || st=1; exit $$st
bench-design: $(BUILD)/biaslint
	bash tests/bench/bench.sh $(BUILD)

# Lookup tables (tests/bench/bench_lut.c, run from tests/): characterize time against ngspice alone on
# the same deck, gm/ID accuracy against ngspice at off-grid points, interpolation speed, with the
# floors. BENCH_LUT=quick for a shorter run.
bench-lut: $(BUILD)/biaslint $(BUILD)/tests/bench_lut
	cd tests && ../$(BUILD)/tests/bench_lut ../$(BUILD)/biaslint $(BENCH_LUT)
$(BUILD)/tests/bench_lut: tests/bench/bench_lut.c tests/lutref.h $(BUILD)/libbiaslint.a
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) -Itests $(CFLAGS) -Wno-conversion -o $@ $< $(BUILD)/libbiaslint.a $(LDLIBS)

# The whole suite again, under AddressSanitizer and UndefinedBehaviorSanitizer, in its own build tree.
sanitize:
	$(MAKE) BUILD=build/sanitize CFLAGS="-O1 -g -fsanitize=address,undefined -fno-omit-frame-pointer -fno-sanitize-recover=all" \
	  LDFLAGS="-fsanitize=address,undefined" test

# The integration and hostile-input tests with every biaslint run under valgrind memcheck; any error
# or leak fails the run (logs in build/valgrind/).
VALGRIND_FLAGS := -q --error-exitcode=99 --leak-check=full --show-leak-kinds=all --errors-for-leak-kinds=all
valgrind: $(BUILD)/biaslint
	rm -rf build/valgrind && mkdir -p build/valgrind
	printf '#!/bin/sh\nexec valgrind $(VALGRIND_FLAGS) --log-file=%s/vg.%%p.log %s "$$@"\n' \
	  "$(CURDIR)/build/valgrind" "$(CURDIR)/$(BUILD)/biaslint" >build/valgrind/biaslint
	chmod +x build/valgrind/biaslint
	BIASLINT=build/valgrind/biaslint bash tests/integration.sh
	BIASLINT=build/valgrind/biaslint bash tests/hostile.sh
	@if grep -l . build/valgrind/vg.*.log; then echo "valgrind: errors or leaks in the logs above"; exit 1; fi; \
	  echo "valgrind: $$(ls build/valgrind/vg.*.log | wc -l) runs, no errors, no leaks"

# Fuzzing (tests/fuzz): one libFuzzer target per reader, built with clang under ASan+UBSan in
# build/fuzz, seed corpora made from the files in tests/. `make fuzz FUZZ_SECONDS=N` runs each target
# N seconds in turn (N = 0: each input of the corpus once); results are appended to
# build/fuzz/stats.txt. FUZZ_SAN=undefined builds the targets without ASan in build/fuzz-ub, three to
# four times faster, for long runs on the same corpus; replay the corpus under ASan afterwards
# (FUZZ_SECONDS=0).
FUZZ_CC      ?= clang
FUZZ_SECONDS ?= 60
FUZZ_TARGETS ?= netlist expr show raw csv rules lut json sweep
FUZZ_SAN     ?= address,undefined
FUZZ_BIN     := build/fuzz$(if $(findstring address,$(FUZZ_SAN)),,-ub)
FUZZ_CFLAGS  := -O1 -g -fno-omit-frame-pointer -fsanitize=$(FUZZ_SAN) -fno-sanitize-recover=all \
                -std=c11 -Wall -Wextra -Werror -Wshadow -Wconversion -Wno-sign-conversion -DICACHE_BITS=8
fuzz:
	$(MAKE) BUILD=$(FUZZ_BIN) CC=$(FUZZ_CC) CFLAGS="$(FUZZ_CFLAGS) -fsanitize=fuzzer-no-link" fuzz-bins
	sh tests/fuzz/mkcorpus.sh build/fuzz/corpus
	FUZZ_BIN=$(FUZZ_BIN) FUZZ_LABEL=$(FUZZ_SAN) sh tests/fuzz/run.sh build/fuzz $(FUZZ_SECONDS) $(FUZZ_TARGETS)
fuzz-bins: $(FUZZ_TARGETS:%=$(BUILD)/fuzz_%)
$(BUILD)/fuzz_%: tests/fuzz/fuzz_%.c tests/fuzz/fuzz.h $(BUILD)/libbiaslint.a
	$(CC) $(CPPFLAGS) $(PCFLAGS) $(CFLAGS) -fsanitize=fuzzer -o $@ $< $(BUILD)/libbiaslint.a $(LDLIBS)

# Installs only what is missing, and says what it does.
DEBS := gcc make pkg-config libcsv-dev libpcre2-dev libcmocka-dev ngspice
deps:
	@missing=""; for p in $(DEBS); do dpkg-query -W -f='$${Status}' $$p 2>/dev/null | grep -q 'ok installed' || missing="$$missing $$p"; done; \
	if [ -z "$$missing" ]; then echo "deps: all needed Debian packages are installed ($(DEBS))"; exit 0; fi; \
	echo "deps: installing missing Debian packages:$$missing"; \
	if [ "$$(id -u)" = 0 ]; then SUDO=; elif command -v sudo >/dev/null; then SUDO=sudo; \
	else echo "deps: not root and no sudo: install$$missing by hand" >&2; exit 1; fi; \
	$$SUDO apt-get update && DEBIAN_FRONTEND=noninteractive $$SUDO apt-get install -y --no-install-recommends $$missing

demo: deps
	$(MAKE) all
	bash netlists-demo/run-demo.sh $(BUILD)

# make install PREFIX=/usr/local DESTDIR=: the binary, the manual page, the default rules (they are
# compiled in as well; the copy is for reading and for starting a rule file of your own) and the
# bash completion script.
PREFIX ?= /usr/local
DESTDIR ?=
install: $(BUILD)/biaslint
	install -Dm755 $(BUILD)/biaslint $(DESTDIR)$(PREFIX)/bin/biaslint
	install -Dm644 src/biaslint.1 $(DESTDIR)$(PREFIX)/share/man/man1/biaslint.1
	install -Dm644 rules/defaults.rules $(DESTDIR)$(PREFIX)/share/biaslint/rules/defaults.rules
	install -Dm644 src/biaslint.bash $(DESTDIR)$(PREFIX)/share/bash-completion/completions/biaslint

clean:
	rm -rf build

-include $(wildcard $(BUILD)/obj/*.d $(BUILD)/tests/*.d)
