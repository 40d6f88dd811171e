# SPDX-License-Identifier: GPL-3.0-or-later
# Vernier: LV2 plugins and the `vernier` host. GNU make.
#
#   make            build/vernier.lv2/ (the bundle) and build/vernier (the host)
#   make check      install missing Debian packages, build, run every test
#   make demo       install missing Debian packages, build, run the demo
#   make bench      speed table (ns/sample, ratios against memcpy and a raw copy)
#   make install    PREFIX, DESTDIR, LV2DIR (default $(PREFIX)/lib/lv2)

PREFIX   ?= /usr/local
BINDIR   ?= $(PREFIX)/bin
MANDIR   ?= $(PREFIX)/share/man
LV2DIR   ?= $(PREFIX)/lib/lv2
DESTDIR  ?=

.DEFAULT_GOAL := all
VERSION  := 0.1.0
BUILD    := build
BUNDLE   := $(BUILD)/vernier.lv2
PYTHON   := /usr/bin/python3

CC       ?= cc
PKG_CONFIG ?= pkg-config
CFLAGS   ?= -O2 -g
# Warnings are errors in CI (CI=true) and whenever WERROR=1.
WARN     := -Wall -Wextra -Wshadow -Wstrict-prototypes \
            $(if $(or $(CI),$(WERROR)),-Werror)
STD      := -std=gnu11
# GCC's -O2 vectoriser (cost model very-cheap) does not add the run-time
# overlap check that in-place-safe loops need; this lets it, and the plain
# gain and polarity loops then run at memcpy speed. The host gets it too
# (measure's level scan and the sample conversions are such loops).
DSP_OPT  := -fvect-cost-model=dynamic
SAN      := -fsanitize=address,undefined -fno-omit-frame-pointer \
            -fno-sanitize-recover=undefined

# Recursive (=) so pkg-config runs after `deps` has installed what it needs.
LV2_CFLAGS    = $(shell $(PKG_CONFIG) --cflags lv2)
HOST_CFLAGS   = $(shell $(PKG_CONFIG) --cflags lilv-0 sndfile fftw3 fftw3f)
HOST_LIBS     = $(shell $(PKG_CONFIG) --libs lilv-0 sndfile fftw3 fftw3f) -lm
# The plugins' FFT convolution (the Phase Rotator's Hilbert FIR) uses FFTW's
# single-precision library.
PLUGIN_CFLAGS = $(shell $(PKG_CONFIG) --cflags lv2 fftw3f)
PLUGIN_LIBS   = $(shell $(PKG_CONFIG) --libs fftw3f) -lm
CMOCKA_CFLAGS = $(shell $(PKG_CONFIG) --cflags cmocka)
CMOCKA_LIBS   = $(shell $(PKG_CONFIG) --libs cmocka)

DSP_SRC     := $(wildcard plugins/dsp/*.c)
PLUGIN_SRC  := plugins/bundle.c $(wildcard plugins/*/[a-z]*.c)
PLUGIN_SRC  := $(filter-out $(DSP_SRC),$(PLUGIN_SRC)) $(DSP_SRC)
HOST_SRC    := $(wildcard host/*.c)
TTL         := $(filter-out ttl/manifest.ttl.in,$(wildcard ttl/*.ttl))
# clang and libclang-rt-14-dev: libFuzzer for the fuzz targets; valgrind:
# the memcheck pass over the tests.
DEBIAN_PACKAGES := build-essential pkg-config lv2-dev liblilv-dev lilv-utils sordi \
                   libsndfile1-dev libfftw3-dev libcmocka-dev python3-scipy \
                   clang libclang-rt-14-dev valgrind

# A build variant: $(1) name, $(2) folder of the host, $(3) folder of the
# bundle, $(4) extra flags. LV2_PATH entries are folders of bundles, and lilv
# takes every entry of such a folder for a bundle, so tests point it at a
# folder that holds bundles only: build/lv2 (a link to build/vernier.lv2) or
# build/asan/lv2.
define variant
$(1)_DIR    := $(2)
$(1)_CFLAGS  = $(CFLAGS) $(STD) $(WARN) $(4)
$(1)_LDFLAGS = $(LDFLAGS) $(4)

$(3)/vernier.so: $(PLUGIN_SRC) $(wildcard plugins/*.h plugins/dsp/*.h) | $(3)
	$$(CC) $$($(1)_CFLAGS) $(DSP_OPT) $$(PLUGIN_CFLAGS) -fPIC -shared -fvisibility=hidden \
	  -Wl,--no-undefined -o $$@ $(PLUGIN_SRC) $$($(1)_LDFLAGS) $$(PLUGIN_LIBS)

$(3)/manifest.ttl: ttl/manifest.ttl.in | $(3)
	sed 's/@BINARY@/vernier.so/g' $$< > $$@

$(3)/%.ttl: ttl/%.ttl | $(3)
	cp $$< $$@

$(2)/vernier: $(HOST_SRC) $(wildcard host/*.h plugins/dsp/*.h) $(DSP_SRC)
	@mkdir -p $$(@D)
	$$(CC) $$($(1)_CFLAGS) $(DSP_OPT) $$(HOST_CFLAGS) -DVERNIER_VERSION='"$(VERSION)"' \
	  -o $$@ $(HOST_SRC) $(DSP_SRC) $$($(1)_LDFLAGS) $$(HOST_LIBS)

$(3):
	mkdir -p $$@

$(1)_BUNDLE := $(3)/vernier.so $(3)/manifest.ttl \
               $(patsubst ttl/%,$(3)/%,$(TTL))
endef

$(eval $(call variant,PLAIN,$(BUILD),$(BUNDLE),))
$(eval $(call variant,ASAN,$(BUILD)/asan,$(BUILD)/asan/lv2/vernier.lv2,$(SAN)))

.PHONY: all check check-run demo demo-run bench bench-run install uninstall \
        clean deps format

all: $(PLAIN_BUNDLE) $(BUILD)/vernier $(BUILD)/lv2/vernier.lv2

$(BUILD)/lv2/vernier.lv2: | $(BUNDLE)
	mkdir -p $(@D) && ln -sfn ../vernier.lv2 $@

# ---------------------------------------------------------------- tests ----
UNIT_TESTS := $(patsubst tests/unit/%.c,$(BUILD)/asan/tests/%,$(wildcard tests/unit/test_*.c))
TEST_BUNDLES := $(patsubst tests/bundles/%,$(BUILD)/test-bundles/%,$(wildcard tests/bundles/*.lv2))

$(BUILD)/asan/tests/%: tests/unit/%.c $(PLUGIN_SRC) $(wildcard tests/unit/*.h plugins/*.h plugins/dsp/*.h)
	@mkdir -p $(@D)
	$(CC) $(ASAN_CFLAGS) $(PLUGIN_CFLAGS) $(CMOCKA_CFLAGS) -Iplugins -o $@ $< \
	  $(PLUGIN_SRC) $(ASAN_LDFLAGS) $(CMOCKA_LIBS) $(PLUGIN_LIBS)

# Test bundles: each tests/bundles/<case>.lv2 folder is copied; a <case>.c in
# it is built into the .so its manifest names (<case>.so).
$(BUILD)/test-bundles/%.lv2: tests/bundles/%.lv2 $(wildcard tests/bundles/*/*)
	@rm -rf $@ && mkdir -p $@
	cp $</*.ttl $@/ 2>/dev/null || true
	if [ -f $</$*.c ]; then $(CC) $(PLAIN_CFLAGS) $(LV2_CFLAGS) -fPIC -shared \
	  -o $@/$*.so $</$*.c -lm; fi

# Broken bundles (tests/bundles/broken/<case>.lv2): built the same way, into
# their own folder, which only tests/host/broken_bundles.sh puts on LV2_PATH
# (on every suite's path they would put lilv's complaints on every stderr).
BROKEN_BUNDLES := $(patsubst tests/bundles/broken/%,$(BUILD)/broken-bundles/%,\
                    $(wildcard tests/bundles/broken/*.lv2))
$(BUILD)/broken-bundles/%.lv2: tests/bundles/broken/%.lv2 $(wildcard tests/bundles/broken/*/* tests/bundles/broken/*.h)
	@rm -rf $@ && mkdir -p $@
	cp $</*.ttl $@/ 2>/dev/null || true
	if [ -f $</$*.c ]; then $(CC) $(PLAIN_CFLAGS) $(LV2_CFLAGS) -fPIC -shared \
	  -o $@/$*.so $</$*.c -lm; fi
check-run: $(BROKEN_BUNDLES)

# Real-time safety host (tests/rt, run by tests/rt/rt.sh): the plugin sources
# linked with a shim that counts malloc, mutex and system calls inside run().
# Plain gcc at -O1 -g, never ASan, which intercepts malloc itself.
RT_HOST := $(BUILD)/rt/rt_host
$(RT_HOST): $(wildcard tests/rt/*.c tests/rt/*.h) tests/unit/descriptor.h \
  $(PLUGIN_SRC) $(wildcard plugins/*.h plugins/dsp/*.h)
	@mkdir -p $(@D)
	$(CC) -O1 -g $(STD) $(WARN) $(PLUGIN_CFLAGS) \
	  $(shell $(PKG_CONFIG) --cflags lilv-0) -Iplugins -Itests/unit -o $@ \
	  $(wildcard tests/rt/*.c) $(PLUGIN_SRC) $(LDFLAGS) \
	  $(shell $(PKG_CONFIG) --libs lilv-0) $(PLUGIN_LIBS) -ldl
check-run: $(RT_HOST)

# `make check-valgrind`: the suite under valgrind memcheck (tests/valgrind.sh
# says what it runs and why). The cmocka tests are built once more without
# sanitizers (ASan and valgrind do not mix), at -O1 -g so that reports name
# lines; the host is the plain build/vernier. check-valgrind-full runs every
# shell suite, not only the subset.
PLAIN_TESTS := $(patsubst tests/unit/%.c,$(BUILD)/plain-tests/%,$(wildcard tests/unit/test_*.c))

$(BUILD)/plain-tests/%: tests/unit/%.c $(PLUGIN_SRC) $(wildcard tests/unit/*.h plugins/*.h plugins/dsp/*.h)
	@mkdir -p $(@D)
	$(CC) -O1 -g $(STD) $(WARN) $(PLUGIN_CFLAGS) $(CMOCKA_CFLAGS) -Iplugins -o $@ $< \
	  $(PLUGIN_SRC) $(LDFLAGS) $(CMOCKA_LIBS) $(PLUGIN_LIBS)

.PHONY: check-valgrind check-valgrind-full
check-valgrind: all $(PLAIN_TESTS) $(TEST_BUNDLES) $(BROKEN_BUNDLES)
	BUILD=$(BUILD) PYTHON=$(PYTHON) sh tests/valgrind.sh $(PLAIN_TESTS)

check-valgrind-full: all $(PLAIN_TESTS) $(TEST_BUNDLES) $(BROKEN_BUNDLES)
	BUILD=$(BUILD) PYTHON=$(PYTHON) VALGRIND_FULL=1 sh tests/valgrind.sh $(PLAIN_TESTS)

# Fuzz targets (tests/fuzz/fuzz_*.c): libFuzzer with ASan and UBSan, which
# only clang has. The host and DSP sources are compiled once into objects
# under build/fuzz/obj and linked into each target (host/main.c left out:
# libFuzzer brings its own main). tests/host/fuzz.sh runs them.
FUZZ_CC      := clang
# glibc defines C11's CMPLX for GCC only; clang has the same builtin.
FUZZ_FLAGS   := -g -O1 $(STD) $(WARN) -fsanitize=fuzzer-no-link,address,undefined \
                -fno-sanitize-recover=undefined -fno-omit-frame-pointer \
                '-DCMPLX(x,y)=__builtin_complex((double)(x),(double)(y))'
FUZZ_SRC     := $(filter-out host/main.c,$(HOST_SRC)) $(DSP_SRC)
FUZZ_OBJ     := $(patsubst %.c,$(BUILD)/fuzz/obj/%.o,$(FUZZ_SRC))
FUZZ_TARGETS := $(patsubst tests/fuzz/%.c,$(BUILD)/fuzz/%,$(wildcard tests/fuzz/fuzz_*.c))

.SECONDARY: $(FUZZ_OBJ)
$(BUILD)/fuzz/obj/%.o: %.c $(wildcard host/*.h plugins/*.h plugins/dsp/*.h)
	@mkdir -p $(@D)
	$(FUZZ_CC) $(FUZZ_FLAGS) $(HOST_CFLAGS) $(PLUGIN_CFLAGS) -c -o $@ $<

$(BUILD)/fuzz/fuzz_%: tests/fuzz/fuzz_%.c $(wildcard tests/fuzz/*.h) $(FUZZ_OBJ)
	$(FUZZ_CC) $(FUZZ_FLAGS) -fsanitize=fuzzer $(HOST_CFLAGS) -iquote host -iquote plugins \
	  -o $@ $< $(FUZZ_OBJ) $(HOST_LIBS)
check-run: $(FUZZ_TARGETS)

check: deps
	+$(MAKE) --no-print-directory check-run

check-run: all $(ASAN_BUNDLE) $(BUILD)/asan/vernier $(UNIT_TESTS) $(TEST_BUNDLES)
	BUILD=$(BUILD) PYTHON=$(PYTHON) sh tests/run.sh $(UNIT_TESTS)

# The headless-Ardour suite alone (tests/outside/ardour.sh; also part of
# check). It needs Debian's ardour package, which deps does not install:
# it is large and optional; .ci/run installs it.
.PHONY: check-daw
check-daw: deps
	+$(MAKE) --no-print-directory all
	BUILD=$(BUILD) PYTHON=$(PYTHON) VERNIER_SUITES=outside/ardour sh tests/run.sh

# ----------------------------------------------------------------- demo ----
demo: deps
	+$(MAKE) --no-print-directory demo-run

# The host finds the bundle beside itself too, but LV2_PATH makes sure it
# is the one just built, not one installed on the machine.
demo-run: all
	LV2_PATH=$(abspath $(BUILD)/lv2) $(BUILD)/vernier demo $(BUILD)/demo

# ---------------------------------------------------------------- bench ----
$(BUILD)/bench/bench_dsp: tests/bench/bench_dsp.c $(wildcard tests/bench/*.h) \
  $(PLUGIN_SRC) $(wildcard plugins/*.h plugins/dsp/*.h)
	@mkdir -p $(@D)
	$(CC) $(PLAIN_CFLAGS) -O2 $(DSP_OPT) $(PLUGIN_CFLAGS) -Iplugins -o $@ $< \
	  $(PLUGIN_SRC) $(PLUGIN_LIBS)

$(BUILD)/bench/raw_copy: tests/bench/raw_copy.c
	@mkdir -p $(@D)
	$(CC) $(PLAIN_CFLAGS) $(HOST_CFLAGS) -o $@ $< $(HOST_LIBS)

$(BUILD)/bench/raw_read: tests/bench/raw_read.c
	@mkdir -p $(@D)
	$(CC) $(PLAIN_CFLAGS) $(HOST_CFLAGS) -o $@ $< $(HOST_LIBS)

bench: deps
	+$(MAKE) --no-print-directory bench-run

bench-run: all $(BUILD)/bench/bench_dsp $(BUILD)/bench/raw_copy $(BUILD)/bench/raw_read
	BUILD=$(BUILD) sh tests/bench/bench.sh

# -------------------------------------------------------------- install ----
install: all
	install -d $(DESTDIR)$(BINDIR) $(DESTDIR)$(MANDIR)/man1 \
	  $(DESTDIR)$(LV2DIR)/vernier.lv2
	install -m 755 $(BUILD)/vernier $(DESTDIR)$(BINDIR)/vernier
	install -m 644 host/vernier.1 $(DESTDIR)$(MANDIR)/man1/vernier.1
	install -m 755 $(BUNDLE)/vernier.so $(DESTDIR)$(LV2DIR)/vernier.lv2/
	install -m 644 $(BUNDLE)/*.ttl $(DESTDIR)$(LV2DIR)/vernier.lv2/

uninstall:
	rm -f $(DESTDIR)$(BINDIR)/vernier $(DESTDIR)$(MANDIR)/man1/vernier.1
	rm -rf $(DESTDIR)$(LV2DIR)/vernier.lv2

clean:
	rm -rf $(BUILD)

format:
	clang-format -i $(wildcard plugins/*.[ch] plugins/*/*.[ch] host/*.[ch] \
	  tests/*/*.[ch])

# Install the Debian packages the build and the tests need, when missing.
deps:
	@if ! command -v dpkg-query >/dev/null 2>&1; then \
	  echo "deps: not a Debian system; install by hand: $(DEBIAN_PACKAGES)"; \
	  exit 0; fi; \
	missing=; for p in $(DEBIAN_PACKAGES); do \
	  dpkg-query -W -f='$${Status}\n' $$p 2>/dev/null | \
	    grep -q 'install ok installed' || missing="$$missing $$p"; done; \
	if [ -n "$$missing" ]; then \
	  sudo=; [ "$$(id -u)" -eq 0 ] || sudo=sudo; \
	  echo "deps: installing$$missing"; \
	  $$sudo apt-get update -qq && \
	  DEBIAN_FRONTEND=noninteractive $$sudo apt-get install -y -qq $$missing; \
	fi
