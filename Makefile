# tram - build, test, demo and install.
#
#   make            build build/tram, build/libtram.a, build/libtram.so
#   make test       install missing Debian packages, build, run every test
#   make demo       install missing Debian packages, build, solve the demo
#   make install    PREFIX=/usr/local DESTDIR=
#
# Dependencies come from Debian by package name (see DEB_PKGS); the deps
# target installs the missing ones with apt-get when run as root and
# otherwise says what to install.

PREFIX  ?= /usr/local
DESTDIR ?=
CC      ?= cc
PYTHON  := /usr/bin/python3

DEB_PKGS := liblapacke-dev libopenblas-dev libpng-dev libcjson-dev libcmocka-dev \
            libcairo2-dev libfontconfig-dev pkg-config python3-numpy python3-scipy \
            clang libclang-rt-14-dev libjpeg-dev python3-pytest poppler-utils \
            g++ libfast-float-dev libmd-dev
# only for make coverage and make valgrind
COV_PKGS := gcovr
VG_PKGS  := valgrind
PC_LIBS  := lapacke openblas libcjson cairo fontconfig libpng libjpeg libmd
PC_TEST  := cmocka libcjson

WARN    := -Wall -Wextra -Wshadow -Wconversion -Werror
BASEFLAGS := -std=c11 -D_POSIX_C_SOURCE=200809L $(WARN) -Iinclude -Isrc
OPT     ?= -O2 -g
PKG_CFLAGS = $(shell pkg-config --cflags $(PC_LIBS))
PKG_LIBS   = $(shell pkg-config --libs $(PC_LIBS)) -lm -lpthread
TEST_CFLAGS = $(shell pkg-config --cflags $(PC_TEST))
TEST_LIBS   = $(shell pkg-config --libs $(PC_TEST))

B       ?= build
LIB_SRC := $(sort $(filter-out src/cli/%,$(wildcard src/*/*.c)))
# C++ only as the shim to the header-only fast_float (src/io/number_shim.cc)
LIB_CXX_SRC := $(sort $(wildcard src/*/*.cc))
CXX     ?= g++
CXXFLAGS_TRAM := -std=c++11 -fno-exceptions -fno-rtti $(WARN) -Iinclude -Isrc
CLI_SRC := $(sort $(wildcard src/cli/*.c))
TEST_SRC := $(sort $(wildcard tests/test_*.c))
LIB_OBJ := $(patsubst src/%.c,$(B)/obj/%.o,$(LIB_SRC)) $(patsubst src/%.cc,$(B)/obj/%.o,$(LIB_CXX_SRC))
CLI_OBJ := $(patsubst src/cli/%.c,$(B)/obj/cli/%.o,$(CLI_SRC))
TESTS   := $(patsubst tests/%.c,$(B)/tests/%,$(TEST_SRC))
HEADERS := $(wildcard include/tram/*.h) $(wildcard src/*/*.h)

FUZZ_SRC   := $(sort $(wildcard fuzz/fuzz_*.c))
FUZZ_NAMES := $(patsubst fuzz/fuzz_%.c,%,$(FUZZ_SRC))
FUZZ_SECONDS ?= 60
# libFuzzer's seed: 0 lets it choose one (printed in build-fuzz/NAME.log);
# make test fixes it so that its short run is repeatable.
FUZZ_SEED ?= 0

.PHONY: all deps layers test unit python-tests cli-tests ref-tests asan clang-check demo install install-check install-check-example clean tools bench \
        fuzz fuzz-lib fuzz-bin fuzz-replay coverage valgrind valgrind-run

all: $(B)/tram $(B)/libtram.a $(B)/libtram.so

# NEED: the packages to make sure of (default: those of build and test).
NEED ?= $(DEB_PKGS)
deps:
	@missing=""; \
	for p in $(NEED); do \
	  dpkg-query -W -f='$${Status}' $$p 2>/dev/null | grep -q 'ok installed' || missing="$$missing $$p"; \
	done; \
	if [ -n "$$missing" ]; then \
	  if [ "$$(id -u)" = 0 ]; then \
	    echo "deps: installing$$missing"; \
	    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq $$missing; \
	  else \
	    echo "tram needs these Debian packages:$$missing" >&2; \
	    echo "install them with: sudo apt-get install$$missing" >&2; exit 1; \
	  fi; \
	fi

$(B)/obj/%.o: src/%.c $(HEADERS)
	@mkdir -p $(dir $@)
	@echo "  CC      $<"
	@$(CC) $(BASEFLAGS) $(OPT) $(EXTRA_CFLAGS) -fPIC -fvisibility=hidden -DTRAM_BUILDING_LIBRARY $(PKG_CFLAGS) -c $< -o $@

$(B)/obj/%.o: src/%.cc $(HEADERS)
	@mkdir -p $(dir $@)
	@echo "  CXX     $<"
	@$(CXX) $(CXXFLAGS_TRAM) $(OPT) $(EXTRA_CFLAGS) -fPIC -fvisibility=hidden -DTRAM_BUILDING_LIBRARY -c $< -o $@

$(B)/obj/cli/%.o: src/cli/%.c $(HEADERS)
	@mkdir -p $(dir $@)
	@echo "  CC      $<"
	@$(CC) $(BASEFLAGS) $(OPT) $(EXTRA_CFLAGS) -Iinclude $(PKG_CFLAGS) -c $< -o $@

$(B)/libtram.a: $(LIB_OBJ)
	@mkdir -p $(B)
	rm -f $@; ar rcs $@ $^

$(B)/libtram.so: $(LIB_OBJ)
	$(CC) -shared -Wl,-soname,libtram.so.0 $(EXTRA_LDFLAGS) -o $@ $^ $(PKG_LIBS)
	ln -sf libtram.so $(B)/libtram.so.0   # the soname, for programs linked against build/

$(B)/tram: $(CLI_OBJ) $(B)/libtram.a
	$(CC) $(EXTRA_LDFLAGS) -o $@ $(CLI_OBJ) $(B)/libtram.a $(PKG_LIBS)

# The test renderer (tools/render/, not part of libtram) is linked into
# every test, benchmark and tool that may use it.
RENDER_OBJ := $(B)/obj/tools/render.o $(B)/obj/tools/render_sets.o
$(B)/obj/tools/%.o: tools/render/%.c tools/render/render.h tools/render/render_internal.h $(HEADERS)
	@mkdir -p $(dir $@)
	@echo "  CC      $<"
	@$(CC) $(BASEFLAGS) -Itools $(OPT) $(EXTRA_CFLAGS) $(PKG_CFLAGS) -c $< -o $@

$(B)/tests/%: tests/%.c tests/test_util.h $(B)/libtram.a $(RENDER_OBJ)
	@mkdir -p $(dir $@)
	@echo "  CC      $<"
	@$(CC) $(BASEFLAGS) $(OPT) $(EXTRA_CFLAGS) -Itests -Itools $(PKG_CFLAGS) $(TEST_CFLAGS) $< -o $@ \
	  $(RENDER_OBJ) $(B)/libtram.a $(EXTRA_LDFLAGS) $(TEST_LIBS) $(PKG_LIBS)

$(B)/refhelper: tests/ref/refhelper.c $(B)/libtram.a
	@echo "  CC      $<"
	@$(CC) $(BASEFLAGS) $(OPT) $(EXTRA_CFLAGS) $(PKG_CFLAGS) $< -o $@ $(B)/libtram.a $(EXTRA_LDFLAGS) $(PKG_LIBS)

$(B)/render_ref: tests/ref/render_ref.c $(RENDER_OBJ) $(B)/libtram.a
	@echo "  CC      $<"
	@$(CC) $(BASEFLAGS) -Itools $(OPT) $(EXTRA_CFLAGS) $(PKG_CFLAGS) $< -o $@ $(RENDER_OBJ) $(B)/libtram.a $(EXTRA_LDFLAGS) $(PKG_LIBS)

tools: $(B)/gen_demo $(B)/gen_images
$(B)/gen_images: tools/gen_images.c $(RENDER_OBJ) $(B)/libtram.a
	@echo "  CC      $<"
	@$(CC) $(BASEFLAGS) -Itools $(OPT) $(EXTRA_CFLAGS) $(PKG_CFLAGS) $< -o $@ $(RENDER_OBJ) $(B)/libtram.a $(EXTRA_LDFLAGS) $(PKG_LIBS)
$(B)/gen_demo: tools/gen_demo.c $(B)/libtram.a
	@echo "  CC      $<"
	@$(CC) $(BASEFLAGS) $(OPT) $(EXTRA_CFLAGS) $(PKG_CFLAGS) $< -o $@ $(B)/libtram.a $(EXTRA_LDFLAGS) $(PKG_LIBS)

# Fuzz harnesses with a plain main() that replays files (any compiler).
$(B)/fuzz/replay_%: fuzz/fuzz_%.c fuzz/replay.c fuzz/fuzz_common.h $(B)/libtram.a
	@mkdir -p $(dir $@)
	@echo "  CC      $<"
	@$(CC) $(BASEFLAGS) $(OPT) $(EXTRA_CFLAGS) $(PKG_CFLAGS) fuzz/fuzz_$*.c fuzz/replay.c -o $@ \
	  $(B)/libtram.a $(EXTRA_LDFLAGS) $(PKG_LIBS)

# Replay every corpus file of every harness (past crashes stay fixed).
# strict_string_checks: ASan checks whole strings handed to str* functions,
# so a search that could run past an unterminated buffer is caught.
fuzz-replay: $(patsubst %,$(B)/fuzz/replay_%,$(FUZZ_NAMES))
	@set -e; for n in $(FUZZ_NAMES); do \
	  ASAN_OPTIONS=strict_string_checks=1 $(B)/fuzz/replay_$$n fuzz/corpus/$$n; done

# libFuzzer (clang): the library built with coverage instrumentation and
# ASan/UBSan in build-fuzz/, each harness run FUZZ_SECONDS over a working
# copy of its corpus; new crashes land in build-fuzz/crashes/.
FUZZ_SAN := -fsanitize=address,undefined -fno-sanitize-recover=all
fuzz-lib:
	@$(MAKE) --no-print-directory B=build-fuzz CC=clang CXX=clang++ OPT="-O1 -g" \
	  EXTRA_CFLAGS="$(FUZZ_SAN) -fsanitize=fuzzer-no-link" build-fuzz/libtram.a
fuzz-bin: fuzz-lib
	@set -e; for n in $(FUZZ_NAMES); do \
	  echo "  CLANG   fuzz/fuzz_$$n.c"; \
	  clang $(BASEFLAGS) -O1 -g $(FUZZ_SAN) -fsanitize=fuzzer $(PKG_CFLAGS) fuzz/fuzz_$$n.c \
	    -o build-fuzz/fuzz_$$n build-fuzz/libtram.a $(PKG_LIBS); \
	done

fuzz: deps fuzz-bin
	@mkdir -p build-fuzz/crashes
	@failed=""; for n in $(FUZZ_NAMES); do \
	  mkdir -p build-fuzz/corpus/$$n; \
	  dict=""; [ -f fuzz/$$n.dict ] && dict="-dict=fuzz/$$n.dict"; \
	  if ASAN_OPTIONS=strict_string_checks=1 build-fuzz/fuzz_$$n build-fuzz/corpus/$$n fuzz/corpus/$$n $$dict -max_len=16384 \
	       -max_total_time=$(FUZZ_SECONDS) -timeout=10 -seed=$(FUZZ_SEED) -print_final_stats=1 \
	       -artifact_prefix=build-fuzz/crashes/$$n- 2>build-fuzz/$$n.log; then \
	    echo "fuzz $$n: $(FUZZ_SECONDS) s, $$(sed -n 's/^stat::number_of_executed_units: *//p' build-fuzz/$$n.log) runs, $$(grep -o 'cov: [0-9]*' build-fuzz/$$n.log | tail -1), no crash"; \
	  else \
	    grep -E 'ERROR|runtime error|SUMMARY|Test unit written' build-fuzz/$$n.log | head -5; \
	    echo "fuzz $$n: CRASH (input kept in build-fuzz/crashes/, log build-fuzz/$$n.log)"; \
	    failed="$$failed $$n"; \
	  fi; \
	done; \
	if [ -n "$$failed" ]; then echo "fuzz: crashes in$$failed"; exit 1; fi

# Line and branch coverage of src/ (gcovr) over the unit, command-line and
# corpus-replay tests, built with --coverage in build-cov/.  docs/coverage.md
# says what is not covered and why.
coverage:
	@$(MAKE) --no-print-directory deps NEED="$(DEB_PKGS) $(COV_PKGS)"
	@rm -rf build-cov
	@$(MAKE) --no-print-directory B=build-cov OPT="-O0 -g" EXTRA_CFLAGS="--coverage" \
	  EXTRA_LDFLAGS="--coverage" unit cli-tests fuzz-replay >build-cov.log 2>&1 \
	  || { tail -30 build-cov.log; exit 1; }
	@mv build-cov.log build-cov/tests.log
	@gcovr -r . --filter 'src/' --object-directory build-cov --branches \
	  --txt build-cov/coverage-branches.txt >/dev/null
	@gcovr -r . --filter 'src/' --object-directory build-cov \
	  --txt build-cov/coverage.txt --print-summary | tail -3
	@echo "per file: build-cov/coverage.txt (lines), build-cov/coverage-branches.txt (branches)"

# The unit tests under valgrind's memcheck: no invalid access, no leak.
VALGRIND := valgrind --quiet --error-exitcode=99 --leak-check=full --errors-for-leak-kinds=definite,indirect \
            --suppressions=tests/valgrind.supp
valgrind:
	@$(MAKE) --no-print-directory deps NEED="$(DEB_PKGS) $(VG_PKGS)"
	@$(MAKE) --no-print-directory valgrind-run
valgrind-run: $(TESTS)
	@set -e; for t in $(TESTS); do \
	  echo "== valgrind $$t"; \
	  OPENBLAS_NUM_THREADS=1 TRAM_ALLOC_SAMPLES=25 $(VALGRIND) $$t >$$t.valgrind.log 2>&1 \
	    || { tail -40 $$t.valgrind.log; echo "valgrind: $$t failed"; exit 1; }; \
	  grep -E '^\[  (PASSED|FAILED)' $$t.valgrind.log; \
	done; echo "valgrind: $(words $(TESTS)) passed, 0 failed"

# Benchmarks (not tests): make bench.  Each program writes its own JSON
# array; bench/merge.py joins them into $(B)/bench.json.
BENCHES := register solve records render detect
$(B)/bench_%: bench/bench_%.c bench/bench_util.h $(B)/libtram.a $(RENDER_OBJ)
	@echo "  CC      $<"
	@$(CC) $(BASEFLAGS) -Itools -O2 $(PKG_CFLAGS) $< -o $@ $(RENDER_OBJ) $(B)/libtram.a $(PKG_LIBS)

# the detection benchmark renders its 5 MP scene with the test renderer
$(B)/bench_detect: bench/bench_detect.c bench/bench_util.h $(B)/libtram.a $(RENDER_OBJ)
	@echo "  CC      $<"
	@$(CC) $(BASEFLAGS) -Itools -O2 $(PKG_CFLAGS) $< -o $@ $(RENDER_OBJ) $(B)/libtram.a $(PKG_LIBS)

# A benchmark that misses a goal by more than the noise exits 1: the others
# still run and the results are merged, then make bench fails.
bench: deps $(patsubst %,$(B)/bench_%,$(BENCHES))
	@rc=0; \
	$(B)/bench_register $(B)/bench_register.json bench/ref_register_numpy.py $(B)/bench_pairs.bin || rc=1; \
	$(B)/bench_solve $(B)/bench_solve.json || rc=1; \
	$(B)/bench_records $(B)/bench_records.json $(B) || rc=1; \
	$(B)/bench_render $(B)/bench_render.json || rc=1; \
	$(B)/bench_detect $(B)/bench_detect.json $(B) || rc=1; \
	$(PYTHON) bench/merge.py $(B)/bench.json $(patsubst %,$(B)/bench_%.json,$(BENCHES)) || rc=1; \
	if [ $$rc -ne 0 ]; then echo "bench: a benchmark failed or missed a goal (above)"; fi; exit $$rc

# Unit tests (cmocka), one binary per module, two at a time (UNIT_JOBS; the
# CI machine has 2 cores).  Each writes $(B)/tests/NAME.log; the logs are shown
# in order afterwards.  TEST_ENV holds what every test run shares: BLAS
# single-threaded (the problems are small; two runs share the cores), and for
# the sanitizer build TRAM_TEST_SANITIZER=1, which skips the Monte Carlo
# figure tests (they prove rates in the plain build; their code paths run
# under the sanitizers in the other tests).  Both builds fail an even sample
# of 300 allocations per call in tests/test_alloc.c (every one in calls that
# make fewer); in the sanitizer build LeakSanitizer also checks each of those
# error paths.  Failing every allocation of the solves under the sanitizers
# took minutes per call on the CI machine.
UNIT_JOBS ?= 2
TEST_ENV  ?= OPENBLAS_NUM_THREADS=1 TRAM_ALLOC_SAMPLES=300 TRAM_TEST_OUT=$(abspath $(B))/tests/out
UNIT_LOGS := $(patsubst %,%.log,$(TESTS))
$(B)/tests/%.log: $(B)/tests/%
	@rc=0; $(TEST_ENV) $< >$@.part 2>&1 || rc=$$?; \
	  if [ $$rc -ne 0 ]; then cat $@.part; echo "unit: $< failed (exit $$rc)"; exit 1; fi; mv $@.part $@
unit: $(TESTS)
	@rm -f $(UNIT_LOGS)
	@$(MAKE) --no-print-directory -j$(UNIT_JOBS) $(UNIT_LOGS)
	@for t in $(TESTS); do echo "== $$t"; cat $$t.log; done; \
	p=$$(cat $(UNIT_LOGS) | sed -n 's/^\[  PASSED  \] \([0-9]*\) test.*/\1/p' | awk '{s+=$$1} END {print s+0}'); \
	k=$$(cat $(UNIT_LOGS) | sed -n 's/^\[  SKIPPED \] \([0-9]*\) test.*/\1/p' | awk '{s+=$$1} END {print s+0}'); \
	echo "unit: $$p passed, 0 failed, $$k skipped"

# Command-line tests: exit codes, file:line:column messages, empty stdout.
# The demo's rendered images (GEN_IMAGES, tests/cli/demo.sh) are left out of
# the sanitizer build: the same commands run there on the smaller scenes.
cli-tests: $(B)/tram $(B)/gen_demo $(if $(findstring sanitize,$(EXTRA_CFLAGS)),,$(B)/gen_images)
	@$(TEST_ENV) TRAM=$(abspath $(B)/tram) GEN_DEMO=$(abspath $(B)/gen_demo) \
	  GEN_IMAGES=$(if $(findstring sanitize,$(EXTRA_CFLAGS)),,$(abspath $(B)/gen_images)) sh tests/cli/run.sh

# Reference checks against SciPy / NumPy (Debian's python3-scipy).
# check_render_scipy.py reads the detections test_pixel_render writes into
# $(B)/tests/out (TRAM_TEST_OUT).
ref-tests: $(B)/refhelper $(B)/tram $(B)/render_ref $(B)/libtram.so $(B)/tests/test_pixel_render.log
	$(TEST_ENV) $(PYTHON) tests/ref/check_rotation_scipy.py $(B)/refhelper
	$(TEST_ENV) $(PYTHON) tests/ref/check_solve_scipy.py $(B)/tram
	$(TEST_ENV) $(PYTHON) tests/ref/check_scale_scipy.py $(B)/tram
	$(TEST_ENV) $(PYTHON) tests/ref/check_stats_scipy.py $(B)/refhelper
	$(TEST_ENV) $(PYTHON) tests/ref/check_chain_scipy.py $(B)/tram
	$(TEST_ENV) $(PYTHON) tests/ref/check_register_scipy.py $(B)/tram
	$(TEST_ENV) $(PYTHON) tests/ref/check_pixels_scipy.py $(B)/tram
	$(TEST_ENV) $(PYTHON) tests/ref/check_render_numpy.py $(B)/render_ref
	$(TEST_ENV) $(PYTHON) tests/ref/check_render_scipy.py $(B)/tram $(abspath $(B))/tests/out
	$(TEST_ENV) $(PYTHON) tests/ref/check_intrinsics_scipy.py $(B)/tram
	$(TEST_ENV) $(PYTHON) tests/ref/check_plan_numpy.py $(B)/tram
	$(TEST_ENV) $(PYTHON) tests/ref/check_report_scipy.py $(B)/tram
	$(TEST_ENV) $(PYTHON) tests/ref/check_euler_cov_scipy.py $(B)/tram
	$(TEST_ENV) $(PYTHON) tests/ref/check_tool_numpy.py $(B)/tram
	$(TEST_ENV) TRAM_LIBRARY=$(abspath $(B)/libtram.so) PYTHONPATH=$(abspath python) \
	  $(PYTHON) tests/ref/check_noise_scipy.py

# The Python package (python/tram) against the command, SciPy and its docs.
python-tests: $(B)/tram $(B)/libtram.so
	@$(TEST_ENV) TRAM=$(abspath $(B)/tram) TRAM_LIBRARY=$(abspath $(B)/libtram.so) PYTHONPATH=$(abspath python) \
	  $(PYTHON) -m pytest -q -p no:cacheprovider tests/python

asan:
	$(MAKE) B=build-asan OPT="-O1 -g -fno-omit-frame-pointer" \
	  EXTRA_CFLAGS="-fsanitize=address,undefined -fno-sanitize-recover=all" \
	  EXTRA_LDFLAGS="-fsanitize=address,undefined" \
	  TEST_ENV="OPENBLAS_NUM_THREADS=1 TRAM_ALLOC_SAMPLES=300 TRAM_TEST_SANITIZER=1" unit cli-tests fuzz-replay

clang-check:
	@if command -v clang >/dev/null 2>&1; then \
	  $(MAKE) B=build-clang CC=clang CXX=clang++ all; \
	else echo "clang not installed: clang build skipped"; fi

# The layering of src/ (docs/architecture.md), from the #include lines.
layers:
	@sh tools/check_layers.sh

test:
	@$(MAKE) --no-print-directory deps
	@$(MAKE) --no-print-directory layers
	@$(MAKE) --no-print-directory all
	@$(MAKE) --no-print-directory clang-check
	@$(MAKE) --no-print-directory unit
	@$(MAKE) --no-print-directory cli-tests
	@$(MAKE) --no-print-directory ref-tests
	@$(MAKE) --no-print-directory python-tests
	@$(MAKE) --no-print-directory install-check
	@$(MAKE) --no-print-directory asan
	@$(MAKE) --no-print-directory fuzz FUZZ_SECONDS=5 FUZZ_SEED=20261202
	@echo "make test: all suites passed"

demo:
	@$(MAKE) --no-print-directory deps
	@$(MAKE) --no-print-directory all $(B)/gen_images
	@GEN_IMAGES=$(B)/gen_images DEMO_IMAGES_OUT=$(B)/demo-images sh datasets/demo/run_demo.sh $(B)/tram

# Where Debian's python3 finds packages under PREFIX: /usr/lib/python3/dist-packages
# for /usr, PREFIX/lib/python3.X/dist-packages otherwise (Debian's /usr/local layout).
PYDIR = $(if $(filter /usr,$(PREFIX)),$(PREFIX)/lib/python3/dist-packages,$(PREFIX)/lib/$(shell $(PYTHON) -c 'import sys; print("python3.%d" % sys.version_info[1])')/dist-packages)

install: all
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/lib $(DESTDIR)$(PREFIX)/include/tram \
	  $(DESTDIR)$(PREFIX)/lib/pkgconfig $(DESTDIR)$(PREFIX)/share/man/man1
	install -m 755 $(B)/tram $(DESTDIR)$(PREFIX)/bin/tram
	install -m 644 $(B)/libtram.a $(DESTDIR)$(PREFIX)/lib/libtram.a
	install -m 755 $(B)/libtram.so $(DESTDIR)$(PREFIX)/lib/libtram.so.0
	ln -sf libtram.so.0 $(DESTDIR)$(PREFIX)/lib/libtram.so
	install -m 644 include/tram/*.h $(DESTDIR)$(PREFIX)/include/tram/
	install -m 644 docs/tram.1 $(DESTDIR)$(PREFIX)/share/man/man1/tram.1
	install -d $(DESTDIR)$(PREFIX)/share/doc/tram
	install -m 644 docs/*.md $(DESTDIR)$(PREFIX)/share/doc/tram/
	install -d $(DESTDIR)$(PYDIR)/tram
	install -m 644 python/tram/*.py $(DESTDIR)$(PYDIR)/tram/
	sed -e 's|@PREFIX@|$(PREFIX)|g' -e 's|@VERSION@|$(shell sed -n 's/.*TRAM_VERSION_STRING "\(.*\)"/\1/p' include/tram/common.h)|g' \
	  tram.pc.in > $(DESTDIR)$(PREFIX)/lib/pkgconfig/tram.pc

# Install into a staging directory and build a program against the
# installed headers and library through the installed tram.pc.
install-check: all
	@rm -rf $(B)/stage
	@$(MAKE) --no-print-directory install PREFIX=/usr DESTDIR=$(abspath $(B)/stage) >/dev/null
	@printf '#include <tram/tram.h>\n#include <stdio.h>\nint main(void){tram_se3 T;tram_se3_identity(&T);printf("%%s %%g\\n",tram_version(),T.m[3][3]);return 0;}\n' > $(B)/stage/check.c
	@PKG_CONFIG_SYSROOT_DIR=$(abspath $(B)/stage) PKG_CONFIG_LIBDIR=$(abspath $(B)/stage)/usr/lib/pkgconfig:/usr/lib/x86_64-linux-gnu/pkgconfig:/usr/share/pkgconfig \
	  $(CC) $(B)/stage/check.c -o $(B)/stage/check $$(PKG_CONFIG_SYSROOT_DIR=$(abspath $(B)/stage) PKG_CONFIG_LIBDIR=$(abspath $(B)/stage)/usr/lib/pkgconfig:/usr/lib/x86_64-linux-gnu/pkgconfig:/usr/share/pkgconfig pkg-config --cflags --libs --static tram)
	@$(MAKE) --no-print-directory install-check-example
	@LD_LIBRARY_PATH=$(abspath $(B)/stage)/usr/lib $(B)/stage/check | grep -q '^[0-9.]* 1$$' && test -x $(B)/stage/usr/bin/tram && test -f $(B)/stage/usr/share/man/man1/tram.1 \
	  && cd / && env -u TRAM_LIBRARY PYTHONPATH=$(abspath $(B)/stage)/usr/lib/python3/dist-packages $(PYTHON) -c \
	    'import tram, sys; r = tram.solve(sys.argv[1]); assert r.trustworthy; print("installed package:", tram.version(), tram._lib.lib._name)' \
	    $(abspath datasets/demo/wrist_camera.csv) | grep -q "stage/usr/lib/libtram.so.0" \
	  && echo "install-check: 3 passed, 0 failed"

# docs/library.md's program (docs/examples/solve_mount.c), built against the
# staged install through its tram.pc and run on the demo's wrist camera.
STAGE_PC = PKG_CONFIG_SYSROOT_DIR=$(abspath $(B)/stage) PKG_CONFIG_LIBDIR=$(abspath $(B)/stage)/usr/lib/pkgconfig:/usr/lib/x86_64-linux-gnu/pkgconfig:/usr/share/pkgconfig
install-check-example:
	@$(CC) -std=c11 $(WARN) docs/examples/solve_mount.c -o $(B)/stage/solve_mount \
	  $$($(STAGE_PC) pkg-config --cflags --libs tram)
	@LD_LIBRARY_PATH=$(abspath $(B)/stage)/usr/lib $(B)/stage/solve_mount datasets/demo/wrist_camera.csv \
	  | grep -q '^T_flange_sensor translation .*NOT verified on the cell'

clean:
	rm -rf build build-asan build-clang build-fuzz build-cov
