# Convenience wrapper around CMake.  The two commands of the README:
#   make demo   set up, build, and run the demo scenario end to end
#   make test   set up, build, and run the whole test suite (ctest)
BUILD ?= build
CMAKE_FLAGS ?=
MAKEFLAGS += --no-print-directory
JOBS ?= $(shell nproc 2>/dev/null || echo 2)

.PHONY: all deps configure build demo test clean sanitize bench-ingest bench-engine

all: build

deps:
	@sh .ci/deps

configure: deps
	@cmake -S . -B $(BUILD) $(CMAKE_FLAGS) >/dev/null

build: configure
	@cmake --build $(BUILD) -j $(JOBS)

demo: build
	@sh data/run_demo.sh $(BUILD)/scatterprop demo-out

test: build
	@cd $(BUILD) && ctest --output-on-failure -j $(JOBS)

# The same suite under AddressSanitizer and UndefinedBehaviorSanitizer.
sanitize:
	@$(MAKE) --no-print-directory test BUILD=build-sanitize \
	  CMAKE_FLAGS="-DSP_SANITIZE=ON -DCMAKE_BUILD_TYPE=Debug $(CMAKE_FLAGS)"

# Benchmarks print figures (tests/bench/README.md); not part of `make test`.
BENCH_DIR ?= /tmp/scatterprop-bench
bench-ingest: build
	@mkdir -p $(BENCH_DIR)
	@test -f $(BENCH_DIR)/ingest-10M.csv || $(BUILD)/tests/bench_ingest --generate $(BENCH_DIR)/ingest-10M.csv 10000000
	@$(BUILD)/tests/bench_ingest $(BENCH_DIR)/ingest-10M.csv

# Engine on the spring model, 10^7 samples, 1 and 2 threads, against a
# scalar C loop and numpy (tests/bench/bench_engine.py; Debian's python3).
BENCH_ENGINE_N ?= 10000000
bench-engine: build
	@/usr/bin/python3 tests/bench/bench_engine.py $(BUILD)/tests/bench_engine $(BENCH_ENGINE_N)

clean:
	rm -rf $(BUILD) build-sanitize demo-out
