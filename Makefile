# epiwell — build, demo, tests, benchmark, install.  `make demo` and `make check` install
# missing Debian packages first (as root) or print the apt-get line to run.
CC      ?= cc
PREFIX  ?= /usr/local
SANITIZE ?= 0
BUILD   := build
OPT     := -O2
ifeq ($(SANITIZE),1)
  BUILD := build/sanitize
  OPT   := -O1 -fsanitize=address,undefined -fno-omit-frame-pointer -fno-sanitize-recover=undefined
endif

PKGS      := superlu libconfig zlib lapacke lapack cairo
# deferred (=): evaluated only after the deps step has run
PKG_CFLAGS = $(shell pkg-config --cflags $(PKGS))
PKG_LIBS   = $(shell pkg-config --libs $(PKGS)) -lblas -lm
CFLAGS    += -std=c11 -Wall -Wextra -Wpedantic -g $(OPT) -fopenmp -D_POSIX_C_SOURCE=200809L \
             -DEW_PREFIX='"$(PREFIX)"'
LDFLAGS   += $(filter -fsanitize=%,$(OPT)) -fopenmp

# src/cli*.c make the command; everything else is the library
CLI_SRC := $(wildcard src/cli*.c)
CLI_OBJ := $(patsubst src/%.c,$(BUILD)/obj/%.o,$(CLI_SRC))
LIB_SRC := $(filter-out $(CLI_SRC),$(wildcard src/*.c))
LIB_OBJ := $(patsubst src/%.c,$(BUILD)/obj/%.o,$(LIB_SRC))
TESTS   := $(patsubst tests/%.c,$(BUILD)/tests/%,$(wildcard tests/test_*.c))

.PHONY: all deps deps-check demo check bench install clean
all: $(BUILD)/epiwell

deps:
	@sh .ci/deps.sh
deps-check:
	@sh .ci/deps.sh check

$(BUILD)/obj/%.o: src/%.c src/*.h | deps
	@mkdir -p $(dir $@)
	$(CC) $(CFLAGS) $(PKG_CFLAGS) -c $< -o $@

$(BUILD)/libepiwell.a: $(LIB_OBJ)
	ar rcs $@ $^

$(BUILD)/epiwell: $(CLI_OBJ) $(BUILD)/libepiwell.a
	$(CC) $(LDFLAGS) -o $@ $^ $(PKG_LIBS)

$(BUILD)/tests/%: tests/%.c tests/*.h $(BUILD)/libepiwell.a | deps-check
	@mkdir -p $(dir $@)
	$(CC) $(CFLAGS) $(PKG_CFLAGS) -Isrc -o $@ $< $(BUILD)/libepiwell.a $(LDFLAGS) \
	  $(PKG_LIBS) $$(pkg-config --libs cmocka)

demo: $(BUILD)/epiwell
	$(BUILD)/epiwell solve examples/detector_well.cfg

check: $(BUILD)/epiwell $(TESTS)
	@sh tests/run_all.sh $(BUILD)

$(BUILD)/bench: tests/bench.c $(BUILD)/libepiwell.a | deps
	$(CC) $(CFLAGS) $(PKG_CFLAGS) -Isrc -o $@ $< $(BUILD)/libepiwell.a $(LDFLAGS) $(PKG_LIBS)

bench: $(BUILD)/bench $(BUILD)/epiwell
	$(BUILD)/bench $(BUILD)/epiwell

install: $(BUILD)/epiwell $(BUILD)/libepiwell.a
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/lib/pkgconfig \
	  $(DESTDIR)$(PREFIX)/include $(DESTDIR)$(PREFIX)/share/epiwell/materials \
	  $(DESTDIR)$(PREFIX)/share/man/man1
	install -m 755 $(BUILD)/epiwell $(DESTDIR)$(PREFIX)/bin/
	install -m 644 $(BUILD)/libepiwell.a $(DESTDIR)$(PREFIX)/lib/
	install -m 644 src/epiwell.h $(DESTDIR)$(PREFIX)/include/
	install -m 644 materials/*.cfg $(DESTDIR)$(PREFIX)/share/epiwell/materials/
	install -m 644 src/epiwell.1 $(DESTDIR)$(PREFIX)/share/man/man1/
	sed -e 's|@PREFIX@|$(PREFIX)|g' -e 's|@VERSION@|0.1.0|g' src/epiwell.pc.in \
	  > $(DESTDIR)$(PREFIX)/lib/pkgconfig/epiwell.pc

clean:
	rm -rf build
