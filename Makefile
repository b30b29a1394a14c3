# epiwell — build, demo, tests, benchmark, install.  `make deps`, `make demo` and `make check`
# install missing Debian packages first (as root) or print the apt-get line to run; a plain
# `make` only builds.
CC      ?= cc
PREFIX  ?= /usr/local
SANITIZE ?= 0
WERROR  ?= 0
BUILD   := build
OPT     := -O2
ifeq ($(SANITIZE),1)
  BUILD := build/sanitize
  OPT   := -O1 -fsanitize=address,undefined -fno-omit-frame-pointer -fno-sanitize-recover=undefined
endif

# what the library builds with (LAPACKE: the k·p solvers; also the tests' references) and
# links against: cairo and LAPACKE only for their headers, opened when a PNG is drawn or a
# k·p computation starts (src/dynlib.h, src/lapack_dyn.h)
PKGS      := superlu libconfig zlib cairo lapacke lapack
LINK_PKGS := superlu libconfig zlib
TEST_PKGS := lapacke lapack cmocka
# deferred (=): evaluated only when a compile or link runs, after any deps step
PKG_CFLAGS = $(shell pkg-config --cflags $(PKGS))
PKG_LIBS   = $(shell pkg-config --libs $(LINK_PKGS)) -lblas -ldl -lm
TEST_LIBS  = $(shell pkg-config --libs $(TEST_PKGS))
CFLAGS    += -std=c11 -Wall -Wextra -Wpedantic -g $(OPT) -fopenmp -D_POSIX_C_SOURCE=200809L \
             -DEW_PREFIX='"$(PREFIX)"' -MMD -MP
ifeq ($(WERROR),1)
  CFLAGS  += -Wformat=2 -Werror
endif
LDFLAGS   += $(filter -fsanitize=%,$(OPT)) -fopenmp
# Library objects are position-independent (one set serves libepiwell.a and libepiwell.so)
# with hidden visibility: the shared library exports exactly what epiwell.h marks EW_API.
LIB_CFLAGS := -fPIC -fvisibility=hidden

# the version, from the one place it is written (epiwell.h's numeric macros)
ver = $(shell sed -n 's/^\#define EW_VERSION_$(1) \([0-9][0-9]*\)$$/\1/p' src/epiwell.h)
VERSION_MAJOR := $(call ver,MAJOR)
VERSION       := $(VERSION_MAJOR).$(call ver,MINOR).$(call ver,PATCH)
SONAME        := libepiwell.so.$(VERSION_MAJOR)
SHLIB         := $(BUILD)/libepiwell.so.$(VERSION)

# src/cli*.c make the command; everything else is the library
CLI_SRC := $(wildcard src/cli*.c)
CLI_OBJ := $(patsubst src/%.c,$(BUILD)/obj/%.o,$(CLI_SRC))
LIB_SRC := $(filter-out $(CLI_SRC),$(wildcard src/*.c))
LIB_OBJ := $(patsubst src/%.c,$(BUILD)/obj/%.o,$(LIB_SRC))
TESTS   := $(patsubst tests/%.c,$(BUILD)/tests/%,$(wildcard tests/test_*.c))

.PHONY: all deps deps-check demo check bench install clean python FORCE
all: $(BUILD)/epiwell $(BUILD)/libepiwell.so

# Only deps, demo and check install packages (as root) or print the apt-get line; a plain
# build just says what is missing.
deps:
	@sh .ci/deps.sh
deps-check:
	@sh .ci/deps.sh check

# The compiled-in catalogue prefix (and the flags) are part of every object: rebuild when
# `make PREFIX=…` changes them.
$(BUILD)/flags: FORCE
	@mkdir -p $(BUILD)
	@echo '$(CC) $(CFLAGS) $(LIB_CFLAGS) $(PREFIX)' | cmp -s - $@ || echo '$(CC) $(CFLAGS) $(LIB_CFLAGS) $(PREFIX)' > $@
$(BUILD)/pkgs-ok:
	@pkg-config --exists $(PKGS) || { echo "epiwell: missing build packages; run 'make deps' (as root) first" >&2; exit 1; }
	@mkdir -p $(BUILD) && touch $@

$(BUILD)/obj/%.o: src/%.c $(BUILD)/flags | $(BUILD)/pkgs-ok
	@mkdir -p $(dir $@)
	$(CC) $(CFLAGS) $(if $(filter $(CLI_OBJ),$@),,$(LIB_CFLAGS)) $(PKG_CFLAGS) -c $< -o $@

$(BUILD)/libepiwell.a: $(LIB_OBJ)
	rm -f $@
	ar rcs $@ $^

# libepiwell.so.X.Y.Z with soname libepiwell.so.X; -z defs: every dependency is named here
$(SHLIB): $(LIB_OBJ) src/libepiwell.map
	$(CC) -shared -Wl,-soname,$(SONAME) -Wl,-z,defs -Wl,--version-script=src/libepiwell.map \
	  $(LDFLAGS) -o $@ $(LIB_OBJ) $(PKG_LIBS)
$(BUILD)/$(SONAME): $(SHLIB)
	ln -sf $(notdir $<) $@
$(BUILD)/libepiwell.so: $(BUILD)/$(SONAME)
	ln -sf $(notdir $<) $@

# build/python/epiwell: the package, told where this build's library is (the installed
# package finds the installed library instead: src/python/epiwell/_lib.py)
PY_SRC := $(wildcard src/python/epiwell/*.py)
python: $(BUILD)/python/epiwell/_build_path.py $(patsubst src/python/%,$(BUILD)/python/%,$(PY_SRC))
$(BUILD)/python/epiwell/%.py: src/python/epiwell/%.py
	@mkdir -p $(dir $@)
	cp $< $@
$(BUILD)/python/epiwell/_build_path.py: $(BUILD)/libepiwell.so $(BUILD)/flags
	@mkdir -p $(dir $@)
	echo 'LIBRARY = "$(CURDIR)/$(BUILD)/$(SONAME)"' > $@

$(BUILD)/epiwell: $(CLI_OBJ) $(BUILD)/libepiwell.a
	$(CC) $(LDFLAGS) -o $@ $^ $(PKG_LIBS)

$(BUILD)/tests/%: tests/%.c $(BUILD)/libepiwell.a $(BUILD)/flags
	@mkdir -p $(dir $@)
	$(CC) $(CFLAGS) $(PKG_CFLAGS) -Isrc -o $@ $< $(BUILD)/libepiwell.a $(LDFLAGS) \
	  $(PKG_LIBS) $(TEST_LIBS)

-include $(wildcard $(BUILD)/obj/*.d $(BUILD)/tests/*.d $(BUILD)/*.d)

demo: deps
	@$(MAKE) --no-print-directory $(BUILD)/epiwell
	$(BUILD)/epiwell solve examples/detector_well.cfg

# public_includes.sh first: the command must be a client of epiwell.h alone (issue 11)
check: deps-check
	@CC='$(CC)' sh tests/public_includes.sh
	@$(MAKE) --no-print-directory $(BUILD)/epiwell $(BUILD)/libepiwell.so python $(TESTS)
	@sh tests/run_all.sh $(BUILD)

$(BUILD)/bench: tests/bench.c $(BUILD)/libepiwell.a $(BUILD)/flags
	$(CC) $(CFLAGS) $(PKG_CFLAGS) -Isrc -o $@ $< $(BUILD)/libepiwell.a $(LDFLAGS) $(PKG_LIBS) \
	  $(TEST_LIBS)

# the helper-thread paths of one solve, for tests/threads_tsan.sh (built there with
# BUILD=build/tsan and ThreadSanitizer)
$(BUILD)/threads_drive: tests/threads_drive.c $(BUILD)/libepiwell.a $(BUILD)/flags
	$(CC) $(CFLAGS) $(PKG_CFLAGS) -Isrc -o $@ $< $(BUILD)/libepiwell.a $(LDFLAGS) $(PKG_LIBS)

bench: deps-check
	@$(MAKE) --no-print-directory $(BUILD)/bench $(BUILD)/epiwell
	$(BUILD)/bench $(BUILD)/epiwell

install: $(BUILD)/epiwell $(BUILD)/libepiwell.a $(BUILD)/libepiwell.so
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/lib/pkgconfig \
	  $(DESTDIR)$(PREFIX)/include $(DESTDIR)$(PREFIX)/share/epiwell/materials \
	  $(DESTDIR)$(PREFIX)/share/man/man1
	install -m 755 $(BUILD)/epiwell $(DESTDIR)$(PREFIX)/bin/
	install -m 644 $(BUILD)/libepiwell.a $(DESTDIR)$(PREFIX)/lib/
	install -m 755 $(SHLIB) $(DESTDIR)$(PREFIX)/lib/
	ln -sf $(notdir $(SHLIB)) $(DESTDIR)$(PREFIX)/lib/$(SONAME)
	ln -sf $(SONAME) $(DESTDIR)$(PREFIX)/lib/libepiwell.so
	install -m 644 src/epiwell.h $(DESTDIR)$(PREFIX)/include/
	install -m 644 materials/*.cfg $(DESTDIR)$(PREFIX)/share/epiwell/materials/
	install -m 644 src/epiwell.1 $(DESTDIR)$(PREFIX)/share/man/man1/
	sed -e 's|@PREFIX@|$(PREFIX)|g' -e 's|@VERSION@|$(VERSION)|g' src/epiwell.pc.in \
	  > $(DESTDIR)$(PREFIX)/lib/pkgconfig/epiwell.pc

clean:
	rm -rf build

# ---- robustness: `make fuzz` and `make valgrind` (tests/fuzz_stack.c, tests/valgrind.supp) ----
# fuzz: libFuzzer over ew_stack_read_string + ew_solve (coarse grid) + every writer and the
# library's option parsers (tests/fuzz_stack.c), built with clang under ASan/UBSan in
# build/fuzz/; the writers' files go to a private directory under $TMPDIR (or /tmp).  Seeds: tests/fuzz/corpus (curated, replayed by `make check`
# through tests/test_robust.c); new corpus entries go to build/fuzz/corpus; a crash is written
# to tests/fuzz/regressions/ — keep it there, it becomes a regression test.
FUZZ_CC    ?= clang
FUZZ_RUNS  ?= 1000000
FUZZ_ARGS  ?=
FUZZ_BUILD := build/fuzz
FUZZ_SAN   := -fsanitize=address,undefined -fno-sanitize-recover=undefined -fno-omit-frame-pointer
FUZZ_CFLAGS = -std=c11 -Wall -Wextra -Wpedantic -g -O1 $(FUZZ_SAN) -D_POSIX_C_SOURCE=200809L \
              -DEW_PREFIX='"$(PREFIX)"' $(PKG_CFLAGS)
FUZZ_OBJ   := $(patsubst src/%.c,$(FUZZ_BUILD)/obj/%.o,$(LIB_SRC))
.PHONY: fuzz valgrind
$(FUZZ_BUILD)/obj/%.o: src/%.c $(BUILD)/flags | $(BUILD)/pkgs-ok
	@mkdir -p $(dir $@)
	$(FUZZ_CC) $(FUZZ_CFLAGS) -fsanitize=fuzzer-no-link -c $< -o $@
$(FUZZ_BUILD)/fuzz_stack: tests/fuzz_stack.c $(FUZZ_OBJ)
	$(FUZZ_CC) $(FUZZ_CFLAGS) -fsanitize=fuzzer -Isrc -o $@ $< $(FUZZ_OBJ) $(PKG_LIBS)
fuzz: $(FUZZ_BUILD)/fuzz_stack
	@mkdir -p $(FUZZ_BUILD)/corpus tests/fuzz/regressions
	EPIWELL_MATERIALS=$(CURDIR)/materials $(FUZZ_BUILD)/fuzz_stack -runs=$(FUZZ_RUNS) \
	  -max_len=4096 -timeout=10 -rss_limit_mb=2048 -print_final_stats=1 \
	  -dict=tests/fuzz/stack.dict -artifact_prefix=tests/fuzz/regressions/ $(FUZZ_ARGS) \
	  $(FUZZ_BUILD)/corpus tests/fuzz/corpus
# the replay test includes the fuzz entry point
$(BUILD)/tests/test_robust: tests/fuzz_stack.c

# valgrind: memcheck on the demo and on error paths (stack-file syntax error, unknown key,
# catalogue error); any leak or memory error fails.  Needs the plain build, not SANITIZE=1.
VALGRIND := valgrind --leak-check=full --errors-for-leak-kinds=definite,indirect,possible \
            --error-exitcode=99 --suppressions=tests/valgrind.supp --quiet
valgrind: build/epiwell
	@command -v valgrind >/dev/null || { echo "valgrind not found: apt-get install valgrind"; exit 1; }
	$(VALGRIND) build/epiwell solve examples/detector_well.cfg >/dev/null
	$(VALGRIND) build/epiwell solve examples/double_well.cfg --json -o $(CURDIR)/build/valgrind-out --gzip >/dev/null
	$(VALGRIND) build/epiwell solve tests/data/cli/syntax_error.cfg 2>/dev/null; test $$? -eq 2
	$(VALGRIND) build/epiwell solve tests/data/cli/unknown_key.cfg 2>/dev/null; test $$? -eq 2
	$(VALGRIND) build/epiwell solve tests/fuzz/regressions/leak-libconfig-discarded-empty-string.cfg 2>/dev/null; test $$? -eq 2
	EPIWELL_MATERIALS=/nonexistent $(VALGRIND) build/epiwell solve examples/detector_well.cfg 2>/dev/null; test $$? -eq 3
	@rm -rf build/valgrind-out
	@echo "valgrind: no leaks or memory errors"
# ---- end of robustness block -------------------------------------------------------------
