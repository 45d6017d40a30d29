# psiflight - plain Makefile.  pkg-config supplies the flags; the module names
# are variables so a packager can point them elsewhere.
#
#   make          build the runner (build/psiflight) and the Lua module (build/psiflight.so)
#   make deps     install the missing Debian packages of the runtime set (as root)
#   make demo     the runtime set, build, run the flagship example
#   make test     the runtime, test and MPI sets, build, run every test
#   make annotations  editor type annotations of the Lua API (build/annotations/psiflight.lua)
#   make install  install into PREFIX (default /usr/local; DESTDIR for staging); make uninstall
#   make bench    speed report (ratios against raw FFTW, timed in the same run)
#   make asan     run the test suite under AddressSanitizer and UBSan (gcc, then clang)
#   make fuzz     run each fuzz harness FUZZ_SECONDS (default 60) with clang's libFuzzer

# PLplot's headers may come from .deps/ (scripts/fetch-plplot-headers.sh) rather
# than from libplplot-dev: pkg-config looks there first, in $(shell) calls and
# recipes alike (make 4.3 does not pass exported variables to $(shell)).
DEPS_PC   := $(CURDIR)/.deps/pkgconfig
export PKG_CONFIG_PATH := $(DEPS_PC)$(if $(PKG_CONFIG_PATH),:$(PKG_CONFIG_PATH))
PKG_CONFIG := PKG_CONFIG_PATH='$(PKG_CONFIG_PATH)' pkg-config

LUA_PC    ?= lua5.4
FFTW_PC   ?= fftw3
CMOCKA_PC ?= cmocka
FFTW_OMP_LIBS ?= -lfftw3_omp

CC      ?= cc
BUILD   ?= build
OPT     ?= -O2 -g
WARN    := -Wall -Wextra -Wshadow -Wstrict-prototypes -Wmissing-prototypes -Wpointer-arith \
           -Wcast-align -Wwrite-strings -Wundef -Wno-unused-parameter
# -fcx-limited-range: plain complex multiplication without the C99 NaN/Inf
# recovery calls, which would otherwise dominate the phase-multiply loops.
# clang 14 does not know the flag: its builds (make fuzz, the clang half of
# make asan) pass CX_RANGE= and only lose speed, not accuracy.
CX_RANGE ?= -fcx-limited-range
CFLAGS_BASE := -std=c11 -D_POSIX_C_SOURCE=200809L -fPIC -fopenmp $(CX_RANGE) $(WARN)
CFLAGS  ?= $(OPT)
SAN     ?=

FFTW_CFLAGS := $(shell $(PKG_CONFIG) --cflags $(FFTW_PC) 2>/dev/null)
FFTW_LIBS   := $(FFTW_OMP_LIBS) $(shell $(PKG_CONFIG) --libs $(FFTW_PC) 2>/dev/null)
LUA_CFLAGS  := $(shell $(PKG_CONFIG) --cflags $(LUA_PC) 2>/dev/null)
LUA_LIBS    := $(shell $(PKG_CONFIG) --libs $(LUA_PC) 2>/dev/null)
CMOCKA_CFLAGS := $(shell $(PKG_CONFIG) --cflags $(CMOCKA_PC) 2>/dev/null)
CMOCKA_LIBS   := $(shell $(PKG_CONFIG) --libs $(CMOCKA_PC) 2>/dev/null)
# Reference libraries the tests compare the engine against (never the engine).
TEST_PC     ?= gsl libcerf
TEST_CFLAGS := $(shell $(PKG_CONFIG) --cflags $(TEST_PC) 2>/dev/null)
TEST_LIBS   := $(shell $(PKG_CONFIG) --libs $(TEST_PC) 2>/dev/null)

# Runner: cJSON reads run manifests (sweeps); MPI is optional - without
# pkg-config's ompi-c (or with MPI_PC=none) sweeps run on one machine only.
CJSON_PC  ?= libcjson
CJSON_CFLAGS := $(shell $(PKG_CONFIG) --cflags $(CJSON_PC) 2>/dev/null)
CJSON_LIBS   := $(shell $(PKG_CONFIG) --libs $(CJSON_PC) 2>/dev/null || echo -lcjson)
MPI_PC    ?= ompi-c
MPI_LIBS  := $(shell $(PKG_CONFIG) --libs $(MPI_PC) 2>/dev/null)
MPI_CFLAGS := $(if $(MPI_LIBS),-DPFR_HAVE_MPI $(shell $(PKG_CONFIG) --cflags $(MPI_PC) 2>/dev/null))
# Distributed grids (engine/core/dist/, docs/distributed.md): FFTW's MPI
# layer over the same MPI.  Found when MPI is and <fftw3-mpi.h> compiles with
# it (Debian: libfftw3-mpi-dev, no pkg-config module); DIST=none turns it
# off.  Without it pf_dist.c compiles to a single-process stand-in.
DIST      ?= auto
FFTW_MPI_LIBS ?= -lfftw3_mpi
DIST_PROBE := $(shell printf '\043include <mpi.h>\n\043include <fftw3-mpi.h>\n' | \
  $(CC) -E $(shell $(PKG_CONFIG) --cflags $(MPI_PC) 2>/dev/null) - >/dev/null 2>&1 && echo yes)
DIST_OK   := $(if $(and $(MPI_LIBS),$(filter-out none,$(DIST))),$(DIST_PROBE))
DIST_CFLAGS := $(if $(DIST_OK),-DPF_HAVE_DIST $(shell $(PKG_CONFIG) --cflags $(MPI_PC) 2>/dev/null))
DIST_LIBS   := $(if $(DIST_OK),$(FFTW_MPI_LIBS) $(MPI_LIBS))
# Output layer (engine/io): HDF5 serial, PLplot, cJSON.  Only engine/io sees
# their headers; the core library stays free of them.
PLPLOT_PC ?= plplot
IO_PC     ?= hdf5-serial $(PLPLOT_PC) libcjson
IO_CFLAGS := $(shell $(PKG_CONFIG) --cflags $(IO_PC) 2>/dev/null)
# The HDF5 high-level library (dimension scales) has no pkg-config module of
# its own in Debian; it sits beside libhdf5.
IO_LIBS   := $(patsubst -lhdf5,-lhdf5_hl -lhdf5,$(shell $(PKG_CONFIG) --libs $(IO_PC) 2>/dev/null))

ALL_CFLAGS = $(CFLAGS_BASE) $(CFLAGS) $(SAN)
CORE_LIBS  = $(DIST_LIBS) $(FFTW_LIBS) -lm -fopenmp $(SAN)

# The core, the binding and the unit tests are grouped in domain folders with
# the same names in each layer (engine/core/flight, engine/lua/flight,
# tests/unit/flight; table in DEVELOPERS.md).  Every file includes the
# project's headers by bare name ("pf_wave.h"); each compile line gets the
# include folders of the layers it may use, so a file can move between
# domain folders without touching an include, and a header from a layer
# above (Lua's, HDF5's) is a build error in the core.
CORE_DIRS   := engine/core $(patsubst %/,%,$(sort $(wildcard engine/core/*/)))
LUA_DIRS    := engine/lua $(patsubst %/,%,$(sort $(wildcard engine/lua/*/)))
UNIT_DIRS   := tests/unit $(patsubst %/,%,$(sort $(wildcard tests/unit/*/)))
CORE_INC    := $(addprefix -I,$(CORE_DIRS))
IO_INC      := $(CORE_INC) -Iengine/io
LUA_INC     := $(IO_INC) $(addprefix -I,$(LUA_DIRS))
RUNNER_INC  := $(LUA_INC) -Iengine/runner
CORE_H      := $(wildcard $(addsuffix /*.h,$(CORE_DIRS)))
IO_H        := $(CORE_H) $(wildcard engine/io/*.h)
LUA_H       := $(IO_H) $(wildcard $(addsuffix /*.h,$(LUA_DIRS)))
RUNNER_H    := $(LUA_H) $(wildcard engine/runner/*.h)
UNIT_H      := $(IO_H) $(wildcard $(addsuffix /*.h,$(UNIT_DIRS)))

CORE_SRC   := $(sort $(wildcard $(addsuffix /*.c,$(CORE_DIRS))))
IO_SRC     := $(sort $(wildcard engine/io/*.c))
LUA_SRC    := $(sort $(wildcard $(addsuffix /*.c,$(LUA_DIRS))))
RUNNER_SRC := $(sort $(wildcard engine/runner/*.c))
UNIT_SRC   := $(sort $(wildcard $(addsuffix /test_*.c,$(UNIT_DIRS))))
UNIT_HELP  := $(filter-out $(UNIT_SRC),$(sort $(wildcard $(addsuffix /*.c,$(UNIT_DIRS)))))

CORE_OBJ   := $(CORE_SRC:%.c=$(BUILD)/%.o)
IO_OBJ     := $(IO_SRC:%.c=$(BUILD)/%.o)
LUA_OBJ    := $(LUA_SRC:%.c=$(BUILD)/%.o)
RUNNER_OBJ := $(RUNNER_SRC:%.c=$(BUILD)/%.o) $(BUILD)/gen/pfr_recipe_data.o
RECIPE_SRC := $(sort $(wildcard engine/recipes/*.lua))
# Unit test binaries stay flat (BUILD/tests/test_NAME, what tests/run-all.sh
# runs), so two domain folders may not hold tests of the same name.
UNIT_BIN   := $(addprefix $(BUILD)/tests/,$(basename $(notdir $(UNIT_SRC))))
$(if $(filter-out $(words $(UNIT_BIN)),$(words $(sort $(UNIT_BIN)))),$(error two unit tests share a name: $(sort $(UNIT_SRC))))
UNIT_HELP_OBJ := $(UNIT_HELP:%.c=$(BUILD)/%.o)

RUNNER := $(BUILD)/psiflight
MODULE := $(BUILD)/psiflight.so
CORE_LIB := $(BUILD)/libpsiflight-core.a
IO_LIB   := $(BUILD)/libpsiflight-io.a

.PHONY: all deps deps-test deps-mpi install uninstall annotations build test demo bench asan clean unit-tests lua-tests ref-tests fuzz fuzz-build fuzz-harnesses
.DEFAULT_GOAL := all

all: $(RUNNER) $(MODULE)
build: all

# Dependency sets (scripts/install-deps.sh, sizes in README.md): `make deps`
# installs what building and running need; the test set adds the reference
# libraries and tools, and Open MPI so that the suite covers MPI sweeps.
deps:
	@bash scripts/install-deps.sh runtime

deps-test:
	@bash scripts/install-deps.sh runtime test mpi

deps-mpi:
	@bash scripts/install-deps.sh runtime mpi

# Before the first compile: every pkg-config module the build needs, or one
# message naming the Debian packages and `make deps` (not a missing header).
BUILD_ENV := $(BUILD)/.build-env-ok
$(BUILD_ENV): scripts/check-build-env.sh
	@bash scripts/check-build-env.sh $(LUA_PC)=liblua5.4-dev $(FFTW_PC)=libfftw3-dev hdf5-serial=libhdf5-dev \
	  $(PLPLOT_PC)=libplplot17 $(CJSON_PC)=libcjson-dev
	@mkdir -p $(dir $@) && touch $@

# The core sees only its own folders (no Lua, no HDF5); only the files of
# engine/core/dist get the MPI flags.
$(BUILD)/engine/core/%.o: engine/core/%.c $(CORE_H) | $(BUILD_ENV)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(CORE_INC) $(FFTW_CFLAGS) $(if $(filter engine/core/dist/%,$<),$(DIST_CFLAGS)) -c $< -o $@

$(BUILD)/engine/io/%.o: engine/io/%.c $(IO_H) | $(BUILD_ENV)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(IO_INC) $(IO_CFLAGS) $(FFTW_CFLAGS) -c $< -o $@

# The core must not see Lua: it is compiled without the Lua include path.
$(BUILD)/engine/lua/%.o: engine/lua/%.c $(LUA_H) | $(BUILD_ENV)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(LUA_INC) $(LUA_CFLAGS) $(FFTW_CFLAGS) -c $< -o $@

$(BUILD)/engine/runner/%.o: engine/runner/%.c $(RUNNER_H) | $(BUILD_ENV)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(RUNNER_INC) $(LUA_CFLAGS) $(CJSON_CFLAGS) $(MPI_CFLAGS) -c $< -o $@

# The bundled recipe library: engine/recipes/*.lua compiled into the runner.
$(BUILD)/gen/pfr_recipe_data.c: $(RECIPE_SRC) scripts/embed-recipes.sh
	@mkdir -p $(dir $@)
	bash scripts/embed-recipes.sh $@ $(RECIPE_SRC)

$(BUILD)/gen/pfr_recipe_data.o: $(BUILD)/gen/pfr_recipe_data.c engine/runner/pfr_recipes.h
	$(CC) $(ALL_CFLAGS) -Iengine/runner -c $< -o $@

$(CORE_LIB): $(CORE_OBJ)
	@mkdir -p $(dir $@)
	rm -f $@
	ar rcs $@ $^

$(IO_LIB): $(IO_OBJ)
	@mkdir -p $(dir $@)
	rm -f $@
	ar rcs $@ $^

$(RUNNER): $(RUNNER_OBJ) $(LUA_OBJ) $(IO_LIB) $(CORE_LIB)
	$(CC) -o $@ $(RUNNER_OBJ) $(LUA_OBJ) $(IO_LIB) $(CORE_LIB) $(LUA_LIBS) $(IO_LIBS) $(CJSON_LIBS) $(MPI_LIBS) $(CORE_LIBS) -Wl,-E

# The Lua C module takes Lua's symbols from the interpreter that loads it.
$(MODULE): $(LUA_OBJ) $(IO_LIB) $(CORE_LIB)
	$(CC) -shared -o $@ $(LUA_OBJ) $(IO_LIB) $(CORE_LIB) $(IO_LIBS) $(CORE_LIBS)

# make install / make uninstall (docs/install.md): the runner, the Lua module
# where lua5.4 looks for C modules (Debian's own folder for PREFIX=/usr,
# PREFIX/lib/lua/5.4 otherwise, which lua5.4 searches for /usr/local), the
# core library with its headers and psiflight.pc, the man page generated by
# the runner (--help-man), the bundled recipes, the docs and examples.
# scripts/install-files.sh lists every installed file in
# DATADIR/psiflight/install-manifest.txt, which make uninstall follows.
PREFIX     ?= /usr/local
DESTDIR    ?=
BINDIR     ?= $(PREFIX)/bin
LIBDIR     ?= $(PREFIX)/lib
INCLUDEDIR ?= $(PREFIX)/include
PCDIR      ?= $(LIBDIR)/pkgconfig
DATADIR    ?= $(PREFIX)/share
MANDIR     ?= $(DATADIR)/man
DOCDIR     ?= $(DATADIR)/doc/psiflight
LUA_VERSION ?= 5.4
LUA_CMOD   ?= $(if $(filter /usr,$(PREFIX)),$(shell $(PKG_CONFIG) --variable=INSTALL_CMOD $(LUA_PC)),$(PREFIX)/lib/lua/$(LUA_VERSION))
INSTALL_ENV = PREFIX='$(PREFIX)' DESTDIR='$(DESTDIR)' BINDIR='$(BINDIR)' LIBDIR='$(LIBDIR)' INCLUDEDIR='$(INCLUDEDIR)' \
  PCDIR='$(PCDIR)' DATADIR='$(DATADIR)' MANDIR='$(MANDIR)' DOCDIR='$(DOCDIR)' LUA_CMOD='$(LUA_CMOD)'

# Editor completion (docs/editors.md): LuaLS annotations generated from the
# built module (what exists, which option keys) and the signatures table
# (parameter and return types, help).  The runner runs the generator, so no
# LUA_CPATH is needed and sanitizer builds work too.  Not part of `all`: a
# function added without a signature fails tests/runner/test_annotations.sh,
# not the build; make install writes what it can and warns.
ANNOTATIONS := $(BUILD)/annotations/psiflight.lua
ANNOTATE = PSIFLIGHT_SIGNATURES=scripts/lua-api-signatures.lua PSIFLIGHT_ANNOTATIONS=$(ANNOTATIONS) \
  $(RUNNER) run scripts/gen-annotations.lua --trusted --quiet

annotations: $(RUNNER)
	@mkdir -p $(dir $(ANNOTATIONS))
	@$(ANNOTATE)

install: all
	@mkdir -p $(dir $(ANNOTATIONS))
	@PSIFLIGHT_LENIENT=1 $(ANNOTATE)
	@$(INSTALL_ENV) ANNOTATIONS='$(ANNOTATIONS)' RUNNER='$(RUNNER)' MODULE='$(MODULE)' CORE_LIB='$(CORE_LIB)' PC_REQUIRES='$(FFTW_PC)' \
	  PC_LIBS='$(DIST_LIBS) $(FFTW_OMP_LIBS) -lm -fopenmp' bash scripts/install-files.sh install

uninstall:
	@$(INSTALL_ENV) bash scripts/install-files.sh uninstall

# The unit tests also need cmocka and the reference libraries.
TEST_ENV := $(BUILD)/.test-env-ok
$(TEST_ENV): scripts/check-build-env.sh | $(BUILD_ENV)
	@bash scripts/check-build-env.sh $(CMOCKA_PC)=libcmocka-dev gsl=libgsl-dev libcerf=libcerf-dev
	@mkdir -p $(dir $@) && touch $@

$(BUILD)/tests/unit/%.o: tests/unit/%.c $(UNIT_H) | $(TEST_ENV)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(IO_INC) $(addprefix -I,$(UNIT_DIRS)) $(FFTW_CFLAGS) $(IO_CFLAGS) $(CMOCKA_CFLAGS) $(TEST_CFLAGS) -c $< -o $@

# Unit tests may also exercise the output layer (engine/io).  One link rule
# per test: tests/unit/DOMAIN/test_NAME.c -> BUILD/tests/test_NAME.
define UNIT_LINK
$(BUILD)/tests/$(basename $(notdir $(1))): $(BUILD)/$(1:.c=.o) $$(UNIT_HELP_OBJ) $$(IO_LIB) $$(CORE_LIB)
	$$(CC) -o $$@ $$< $$(UNIT_HELP_OBJ) $$(IO_LIB) $$(CORE_LIB) $$(CMOCKA_LIBS) $$(TEST_LIBS) $$(IO_LIBS) $$(CORE_LIBS)
endef
$(foreach s,$(UNIT_SRC),$(eval $(call UNIT_LINK,$(s))))

unit-tests: $(UNIT_BIN)

test: deps-test
	@$(MAKE) --no-print-directory all unit-tests
	@bash tests/run-all.sh $(BUILD)

demo: deps
	@$(MAKE) --no-print-directory all
	@$(RUNNER) run examples/release_tof.lua --overwrite

# Each tests/bench/bench_NAME.c is one benchmark program; run-bench.sh runs
# them all and prints their ratios against raw FFTW.
BENCH_SRC := $(sort $(wildcard tests/bench/bench_*.c))
BENCH_BIN := $(BENCH_SRC:tests/bench/bench_%.c=$(BUILD)/bench/bench_%)

bench: deps
	@$(MAKE) --no-print-directory all $(BENCH_BIN)
	@bash tests/bench/run-bench.sh $(BUILD)

$(BUILD)/bench/bench_%: tests/bench/bench_%.c tests/bench/bench_util.h $(CORE_H) $(CORE_LIB)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(FFTW_CFLAGS) $(CORE_INC) -Itests/bench -o $@ $< $(CORE_LIB) $(CORE_LIBS)

asan: deps-test
	@$(MAKE) --no-print-directory BUILD=build-asan OPT="-O1 -g -fno-omit-frame-pointer" \
	  SAN="-fsanitize=address,undefined -fno-sanitize-recover=undefined" all unit-tests
	@ASAN_OPTIONS=detect_leaks=1 LSAN_OPTIONS=suppressions=$(CURDIR)/tests/lsan-suppressions.txt:print_suppressions=0 UBSAN_OPTIONS=print_stacktrace=1 bash tests/run-all.sh build-asan
	@# clang too: its UBSan has -fsanitize=float-cast-overflow, which gcc's lacks
	@# (a double out of range converted to an integer type).
	@$(MAKE) --no-print-directory BUILD=build-asan-clang CC=clang CX_RANGE= OPT="-O1 -g -fno-omit-frame-pointer" \
	  SAN="-fsanitize=address,undefined,float-cast-overflow -fno-sanitize-recover=all" all unit-tests
	@# Leaks are checked by the gcc half above: clang 14's LeakSanitizer crashes
	@# in its own tracer on Debian 12 ("Tracer caught signal 11", reading a
	@# dynamic-TLS entry glibc 2.36 marks as unallocated), which is a tool
	@# failure, not a finding.
	@ASAN_OPTIONS=detect_leaks=0 UBSAN_OPTIONS=print_stacktrace=1 bash tests/run-all.sh build-asan-clang

# Fuzzing (tests/fuzz, DEVELOPERS.md): one libFuzzer harness per parser of
# outside input, built with clang into build-fuzz/ (the engine's objects too,
# instrumented for coverage), each run FUZZ_SECONDS over its seed corpus.
FUZZ_CC      ?= clang
FUZZ_SECONDS ?= 60
FUZZ_SAN     := -fsanitize=address,undefined,float-cast-overflow -fno-sanitize-recover=all
FUZZ_SRC     := $(sort $(wildcard tests/fuzz/fuzz_*.c))
FUZZ_BIN     := $(FUZZ_SRC:tests/fuzz/%.c=$(BUILD)/fuzz/%)
# The runner's objects without its main().
RUNNER_LIB_OBJ := $(filter-out $(BUILD)/engine/runner/psiflight.o,$(RUNNER_OBJ))

fuzz-harnesses: $(FUZZ_BIN)

$(BUILD)/fuzz/fuzz_%: tests/fuzz/fuzz_%.c tests/fuzz/fuzz_util.h $(RUNNER_H) $(RUNNER_LIB_OBJ) $(LUA_OBJ) $(IO_LIB) $(CORE_LIB)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) -fsanitize=fuzzer $(RUNNER_INC) -Itests/fuzz $(LUA_CFLAGS) $(IO_CFLAGS) $(CJSON_CFLAGS) $(FFTW_CFLAGS) -o $@ $< \
	  $(RUNNER_LIB_OBJ) $(LUA_OBJ) $(IO_LIB) $(CORE_LIB) $(LUA_LIBS) $(IO_LIBS) $(CJSON_LIBS) $(MPI_LIBS) $(CORE_LIBS) -fsanitize=fuzzer -Wl,-E

fuzz-build:
	@$(MAKE) --no-print-directory BUILD=build-fuzz CC=$(FUZZ_CC) CX_RANGE= OPT="-O1 -g -fno-omit-frame-pointer" \
	  SAN="-fsanitize=fuzzer-no-link $(FUZZ_SAN)" fuzz-harnesses

fuzz: deps-test
	@$(MAKE) --no-print-directory fuzz-build
	@bash tests/fuzz/run-fuzz.sh build-fuzz $(FUZZ_SECONDS)

clean:
	rm -rf build build-asan build-asan-clang build-fuzz
