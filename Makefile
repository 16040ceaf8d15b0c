# tzero -- plain GNU Makefile. `make check` and `make demo` install missing
# packages first (scripts/install-deps), then build and run.
#
# Flavours get their own build folder: make SANITIZE=address,undefined B=build/san

PKGS      = libcjson fftw3f sndfile samplerate libcrypto cairo
B        ?= build
CC       ?= cc
PREFIX   ?= /usr/local
DESTDIR  ?=
WERROR   ?= -Werror
OPT      ?= -O2 -g
WARN      = -std=c11 -Wall -Wextra -Wshadow -Wstrict-prototypes -Wmissing-prototypes \
            -Wno-unused-parameter $(WERROR)
PYTHON   ?= /usr/bin/python3

ifdef SANITIZE
SANFLAGS  = -fsanitize=$(SANITIZE) -fno-sanitize-recover=all -fno-omit-frame-pointer
endif

PKG_CFLAGS = $(shell pkg-config --cflags $(PKGS) 2>/dev/null)
PKG_LIBS   = $(shell pkg-config --libs $(PKGS) 2>/dev/null)
CHECK_LIBS = $(shell pkg-config --libs check 2>/dev/null)
CHECK_CFLAGS = $(shell pkg-config --cflags check 2>/dev/null)

# The library and the tests see src/ (private headers as "stage/name.h"); the
# front end sees the public headers only.
ALL_CPPFLAGS = -D_GNU_SOURCE -Iinclude -Isrc $(PKG_CFLAGS) $(CPPFLAGS)
CLI_CPPFLAGS = -D_GNU_SOURCE -Iinclude $(PKG_CFLAGS) $(CPPFLAGS)
ALL_CFLAGS   = $(WARN) $(OPT) -pthread $(SANFLAGS) $(CFLAGS)
ALL_LDFLAGS  = -pthread $(SANFLAGS) $(LDFLAGS)
LDLIBS_ALL   = $(PKG_LIBS) -lm $(LDLIBS)

# One folder per pipeline stage under src/ (util, io, geometry, velocity, signal,
# moveout, stack, qc, synth, job, ...); src/cli/ is the front end.
STAGES   = $(filter-out src/cli/,$(sort $(dir $(wildcard src/*/))))
LIB_SRC  = $(wildcard $(addsuffix *.c,$(STAGES)))
CLI_SRC  = $(wildcard src/cli/*.c)
UNIT_SRC = $(wildcard tests/unit/check_*.c)
BENCH_SRC = $(wildcard bench/*.c)
LIB_OBJ  = $(LIB_SRC:src/%.c=$(B)/obj/%.o)
CLI_OBJ  = $(CLI_SRC:src/cli/%.c=$(B)/obj/cli/%.o)
UNIT_BIN = $(UNIT_SRC:tests/unit/%.c=$(B)/tests/%)
# Small drivers the cross-checks run (tests/unit/*_driver.c; not Check suites).
DRIVER_BIN = $(patsubst tests/unit/%.c,$(B)/tests/%,$(wildcard tests/unit/*_driver.c))
BENCH_BIN = $(BENCH_SRC:bench/%.c=$(B)/bench/%)

# Every exported symbol of the library carries one of the module prefixes.
# (one per line, sorted: add yours in its place)
PREFIX_LIST = \
  audio \
  bins \
  compare \
  condition \
  digest \
  fileio \
  firstbreak \
  fit \
  flow \
  geometry \
  job \
  json \
  layout \
  limits \
  lsq \
  merge \
  nmo \
  picture \
  qc \
  refraction \
  residual \
  segy \
  semblance \
  stack \
  survey \
  synth \
  table \
  tz \
  velocity \

empty :=
space := $(empty) $(empty)
PREFIXES = $(subst $(space),|,$(strip $(PREFIX_LIST)))

.PHONY: all check check-run unit e2e xcheck check-symbols sanitize demo demo-run bench \
        bench-run install clean deps
all: $(B)/libtzero.a $(B)/tzero

deps:
	@scripts/install-deps

$(B)/obj/%.o: src/%.c
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CPPFLAGS) $(ALL_CFLAGS) -MMD -MP -c $< -o $@

$(B)/obj/cli/%.o: src/cli/%.c
	@mkdir -p $(dir $@)
	$(CC) $(CLI_CPPFLAGS) $(ALL_CFLAGS) -MMD -MP -c $< -o $@

$(B)/libtzero.a: $(LIB_OBJ)
	@mkdir -p $(dir $@)
	rm -f $@
	ar rcs $@ $^

$(B)/tzero: $(CLI_OBJ) $(B)/libtzero.a
	$(CC) $(ALL_LDFLAGS) -o $@ $(CLI_OBJ) $(B)/libtzero.a $(LDLIBS_ALL)

$(B)/tests/%: tests/unit/%.c $(B)/libtzero.a tests/unit/unit.h
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CPPFLAGS) $(CHECK_CFLAGS) $(ALL_CFLAGS) -MMD -MP -o $@ $< $(B)/libtzero.a \
	  $(CHECK_LIBS) $(LDLIBS_ALL)

$(B)/bench/%: bench/%.c $(B)/libtzero.a
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CPPFLAGS) $(ALL_CFLAGS) -MMD -MP -o $@ $< $(B)/libtzero.a $(LDLIBS_ALL)

# The one command CI and humans run.
check: deps
	@$(MAKE) --no-print-directory check-run

check-run: all $(UNIT_BIN) $(DRIVER_BIN) check-symbols
	@B=$(B) PYTHON=$(PYTHON) tests/run.sh

check-symbols: $(B)/libtzero.a
	@bad=$$(nm -g --defined-only $< | awk 'NF==3 {print $$3}' | grep -Ev '^($(PREFIXES))_|^__odr_asan|^__asan' || true); \
	if [ -n "$$bad" ]; then echo "symbols without a module prefix:"; echo "$$bad"; exit 1; fi

unit: all $(UNIT_BIN)
	@B=$(B) PYTHON=$(PYTHON) tests/run.sh unit

e2e: all
	@B=$(B) PYTHON=$(PYTHON) tests/run.sh e2e

xcheck: all $(DRIVER_BIN)
	@B=$(B) PYTHON=$(PYTHON) tests/run.sh xcheck

# ASan + UBSan build running the whole suite (tests/lsan.supp: caches that
# system libraries keep for the life of the process).
sanitize: deps
	@LSAN_OPTIONS="suppressions=$(CURDIR)/tests/lsan.supp$${LSAN_OPTIONS:+:$$LSAN_OPTIONS}" \
	  $(MAKE) --no-print-directory B=build/san SANITIZE=address,undefined OPT="-O1 -g" check-run

demo: deps
	@$(MAKE) --no-print-directory demo-run

demo-run: all
	@B=$(B) demo/run.sh

bench: deps
	@$(MAKE) --no-print-directory bench-run

bench-run: all $(BENCH_BIN)
	@B=$(B) bench/run.sh

install: all
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/share/man/man1
	install -m 755 $(B)/tzero $(DESTDIR)$(PREFIX)/bin/tzero
	install -m 644 docs/*.1 $(DESTDIR)$(PREFIX)/share/man/man1/

clean:
	rm -rf build

-include $(LIB_OBJ:.o=.d) $(CLI_OBJ:.o=.d) $(UNIT_BIN:=.d) $(BENCH_BIN:=.d)
