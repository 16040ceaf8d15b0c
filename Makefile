# tzero -- plain GNU Makefile.
#
#   make                 build build/libtzero.a and build/tzero
#   make check           every test (runs `make deps` first only when pkg-config
#                        misses a package); make sanitize: the same under ASan+UBSan
#   make deps            install the missing Debian packages (scripts/install-deps)
#   make install         tzero, its man pages, libtzero.a, include/tzero/*.h and
#                        tzero.pc under $(DESTDIR)$(PREFIX) (default /usr/local);
#                        make uninstall removes exactly those files
#   WERROR=              build with warnings left as warnings (default -Werror)
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

# Each pkg-config package checked on its own, so a missing one is named with its
# Debian package instead of failing as a compiler error or undefined references.
# DEB_<name> is the Debian package, SHOW_<name> the name people know it by.
DEB_libcjson = libcjson-dev
DEB_fftw3f = libfftw3-dev
DEB_sndfile = libsndfile1-dev
SHOW_sndfile = libsndfile
DEB_libpng = libpng-dev
DEB_samplerate = libsamplerate0-dev
SHOW_samplerate = libsamplerate
DEB_libcrypto = libssl-dev
DEB_check = check
DEB_cairo = libcairo2-dev
MISSING_BUILD := $(strip $(foreach p,$(PKGS),$(if $(shell pkg-config --exists $(p) 2>/dev/null && echo y),,$(p))))
MISSING_TEST := $(if $(shell pkg-config --exists check 2>/dev/null && echo y),,check)
# Goals that need no package (they install them first, or touch no compiler),
# and the goals that also need Check (the unit suites).
NO_PKG_GOALS = deps check sanitize demo bench clean uninstall
TEST_GOALS = check-run unit
MISSING = $(strip $(MISSING_BUILD) $(if $(filter $(TEST_GOALS),$(MAKECMDGOALS)),$(MISSING_TEST)))
ifneq ($(MISSING),)
ifneq ($(filter-out $(NO_PKG_GOALS),$(or $(MAKECMDGOALS),all)),)
$(foreach p,$(MISSING),$(info missing: $(or $(SHOW_$(p)),$(p)) (Debian package $(or $(DEB_$(p)),unknown: pkg-config name $(p))); run `make deps`))
$(error $(words $(MISSING)) package(s) missing)
endif
endif

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
# Fuzz targets, one per parser (tests/fuzz/fuzz_NAME.c). `make fuzz` links them
# with clang's libFuzzer (scripts/fuzz.sh); `make check` links each with the
# plain driver tests/fuzz/replay.c and replays the saved crashing inputs
# (tests/data/fuzz-regress/NAME/) and the seeds (tests/data/fuzz-seeds/NAME/).
FUZZ_NAMES = $(patsubst tests/fuzz/fuzz_%.c,%,$(wildcard tests/fuzz/fuzz_*.c))
REPLAY_BIN = $(FUZZ_NAMES:%=$(B)/fuzz/replay_%)
FUZZ_SECONDS ?= 60

# Every exported symbol of the library carries one of the module prefixes.
# (one per line, sorted: add yours in its place)
PREFIX_LIST = \
  audio \
  bins \
  compare \
  condition \
  deliver \
  digest \
  edits \
  fileio \
  firstbreak \
  fit \
  gathers \
  flow \
  geometry \
  job \
  json \
  layout \
  limits \
  lsq \
  merge \
  migrate \
  mute \
  nmo \
  page \
  picture \
  poststack \
  qc \
  refraction \
  residual \
  segy \
  semblance \
  sps \
  spectrum \
  stack \
  statics \
  survey \
  synth \
  table \
  tz \
  velocity \

empty :=
space := $(empty) $(empty)
PREFIXES = $(subst $(space),|,$(strip $(PREFIX_LIST)))

.PHONY: all check check-run unit e2e xcheck check-symbols sanitize demo demo-run bench \
        bench-run install uninstall clean deps fuzz
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

$(B)/fuzz/replay_%: tests/fuzz/fuzz_%.c tests/fuzz/replay.c tests/fuzz/fuzz_util.h $(B)/libtzero.a
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CPPFLAGS) $(ALL_CFLAGS) -o $@ $< tests/fuzz/replay.c $(B)/libtzero.a $(LDLIBS_ALL)

$(B)/bench/%: bench/%.c $(B)/libtzero.a
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CPPFLAGS) $(ALL_CFLAGS) -MMD -MP -o $@ $< $(B)/libtzero.a $(LDLIBS_ALL)

# The one command CI and humans run: packages are installed only when pkg-config
# misses one (a machine without apt where everything is found goes straight on).
check: $(if $(MISSING_BUILD)$(MISSING_TEST),deps)
	@$(MAKE) --no-print-directory check-run

check-run: all $(UNIT_BIN) $(DRIVER_BIN) $(REPLAY_BIN) check-symbols
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
sanitize: $(if $(MISSING_BUILD)$(MISSING_TEST),deps)
	@LSAN_OPTIONS="suppressions=$(CURDIR)/tests/lsan.supp:print_suppressions=0$${LSAN_OPTIONS:+:$$LSAN_OPTIONS}" \
	  $(MAKE) --no-print-directory B=build/san SANITIZE=address,undefined OPT="-O1 -g" check-run

# Coverage-guided fuzzing (clang, libFuzzer, ASan, UBSan): each target runs
# FUZZ_SECONDS (default 60); FUZZ_TARGETS="segy job" picks some. Not part of
# `make check` or CI; crashing inputs land in tests/data/fuzz-regress/NAME/.
fuzz: all
	@FUZZ_SECONDS=$(FUZZ_SECONDS) FUZZ_TARGETS="$(or $(FUZZ_TARGETS),$(FUZZ_NAMES))" \
	  PKG_LIBS="$(LDLIBS_ALL)" PKG_CFLAGS="$(PKG_CFLAGS)" TZERO=$(B)/tzero scripts/fuzz.sh

demo: $(if $(MISSING_BUILD)$(MISSING_TEST),deps)
	@$(MAKE) --no-print-directory demo-run

demo-run: all
	@B=$(B) demo/run.sh

bench: $(if $(MISSING_BUILD)$(MISSING_TEST),deps)
	@$(MAKE) --no-print-directory bench-run

bench-run: all $(BENCH_BIN)
	@B=$(B) bench/run.sh

HEADERS  = $(wildcard include/tzero/*.h)
MANPAGES = $(wildcard docs/*.1)
LIBDIR   = $(PREFIX)/lib
INCDIR   = $(PREFIX)/include

install: all
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/share/man/man1 \
	  $(DESTDIR)$(LIBDIR)/pkgconfig $(DESTDIR)$(INCDIR)/tzero
	install -m 755 $(B)/tzero $(DESTDIR)$(PREFIX)/bin/tzero
	install -m 644 $(MANPAGES) $(DESTDIR)$(PREFIX)/share/man/man1/
	install -m 644 $(B)/libtzero.a $(DESTDIR)$(LIBDIR)/libtzero.a
	install -m 644 $(HEADERS) $(DESTDIR)$(INCDIR)/tzero/
	printf '%s\n' 'prefix=$(PREFIX)' 'libdir=$(LIBDIR)' 'includedir=$(INCDIR)' '' \
	  'Name: tzero' 'Description: 2D seismic reflection processing library (SEG-Y, CMP, NMO, stack)' \
	  'Version: 0.1' 'Requires.private: $(PKGS)' 'Libs: -L$${libdir} -ltzero' \
	  'Libs.private: -lm -pthread' 'Cflags: -I$${includedir}' \
	  >$(DESTDIR)$(LIBDIR)/pkgconfig/tzero.pc
	chmod 644 $(DESTDIR)$(LIBDIR)/pkgconfig/tzero.pc

# Removes what install wrote (and the tzero header folder when it is empty).
uninstall:
	rm -f $(DESTDIR)$(PREFIX)/bin/tzero $(DESTDIR)$(LIBDIR)/libtzero.a \
	  $(DESTDIR)$(LIBDIR)/pkgconfig/tzero.pc \
	  $(addprefix $(DESTDIR)$(PREFIX)/share/man/man1/,$(notdir $(MANPAGES))) \
	  $(addprefix $(DESTDIR)$(INCDIR)/tzero/,$(notdir $(HEADERS)))
	-rmdir $(DESTDIR)$(INCDIR)/tzero 2>/dev/null

clean:
	rm -rf build

-include $(LIB_OBJ:.o=.d) $(CLI_OBJ:.o=.d) $(UNIT_BIN:=.d) $(BENCH_BIN:=.d)
