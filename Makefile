# Front door for the CMake build. Everything real happens in CMakeLists.txt;
# these targets only fix the build directories and the usual flags.
#
#   make            same as make build
#   make deps       install missing Debian packages (.ci/install-deps)
#   make build      configure (once) and build into $(BUILD)
#   make demo       build, then open the terminal explorer
#   make test       build, then run the test suite with ctest (all but the
#                   tests labelled slow)
#   make test-slow  build, then run the slow tests (label slow: deep
#                   reference checks such as free(2) at class 13)
#   make bench      build, then build and run the benchmarks
#   make asan       test suite under AddressSanitizer/UBSan in $(ASAN_BUILD),
#                   built with clang when installed (ASAN_CC=...)
#   make fuzz       the libFuzzer targets in $(FUZZ_BUILD)/fuzz (clang,
#                   libclang-rt-14-dev; installed here only when missing)
#   make install    install from $(BUILD) (PREFIX=..., DESTDIR=... honoured)
#   make clean      remove both build directories
#
# Extra configure flags: make build CMAKE_FLAGS='-DNILSTEP_WERROR=OFF'
# (they only take effect when the directory is configured the first time;
# run make clean or cmake -B $(BUILD) -D... to change an existing one).

BUILD ?= build
ASAN_BUILD ?= build-asan
FUZZ_BUILD ?= build-fuzz
JOBS ?= 2
CMAKE ?= cmake
CTEST ?= ctest
CMAKE_FLAGS ?=
# The sanitizer build prefers clang: its UBSan also flags an offset added to
# a null pointer (gcc's does not).  Only read when $(ASAN_BUILD) is first
# configured.
ASAN_CC ?= $(shell command -v clang 2>/dev/null || echo cc)
PREFIX ?=

# Keep make's "Entering directory" chatter out of CMake's build output.
MAKEFLAGS += --no-print-directory

.PHONY: all deps build demo test test-slow bench asan fuzz install clean

all: build

deps:
	@bash .ci/install-deps

build: deps
	@test -f $(BUILD)/CMakeCache.txt || \
	    $(CMAKE) -S . -B $(BUILD) -DCMAKE_BUILD_TYPE=RelWithDebInfo $(CMAKE_FLAGS)
	$(CMAKE) --build $(BUILD) -j $(JOBS)

demo: build
	./$(BUILD)/nilstep

test: build
	cd $(BUILD) && $(CTEST) --output-on-failure -j $(JOBS) -LE slow

test-slow: build
	cd $(BUILD) && $(CTEST) --output-on-failure -j $(JOBS) -L slow

bench: build
	$(CMAKE) --build $(BUILD) --target bench

asan: deps
	@test -f $(ASAN_BUILD)/CMakeCache.txt || \
	    CC=$(ASAN_CC) $(CMAKE) -S . -B $(ASAN_BUILD) -DNILSTEP_SANITIZE=ON \
	        -DCMAKE_BUILD_TYPE=Debug $(CMAKE_FLAGS)
	$(CMAKE) --build $(ASAN_BUILD) -j $(JOBS)
	cd $(ASAN_BUILD) && \
	    ASAN_OPTIONS=detect_leaks=1 \
	    UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1 \
	    $(CTEST) --output-on-failure -j $(JOBS) -LE slow

fuzz: deps
	@bash .ci/install-deps --fuzz
	@test -f $(FUZZ_BUILD)/CMakeCache.txt || \
	    CC=clang $(CMAKE) -S . -B $(FUZZ_BUILD) -DNILSTEP_FUZZ=ON \
	        -DCMAKE_BUILD_TYPE=RelWithDebInfo $(CMAKE_FLAGS)
	$(CMAKE) --build $(FUZZ_BUILD) -j $(JOBS) --target fuzz_parse fuzz_engine
	@echo "run e.g.: $(FUZZ_BUILD)/fuzz/fuzz_engine -max_total_time=600 -jobs=1 \\"
	@echo "          -max_len=512 tests/fuzz/corpus/engine  (see DEVELOPERS.md)"

install: build
	$(CMAKE) --install $(BUILD) $(if $(PREFIX),--prefix $(PREFIX))

clean:
	rm -rf $(BUILD) $(ASAN_BUILD) $(FUZZ_BUILD)
