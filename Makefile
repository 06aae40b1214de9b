# The two set-up commands of the README. Both are idempotent on a fresh Debian 12 machine.
.PHONY: demo test build bench clean

BUILD ?= build

build:
	scripts/setup.sh

# Set up, build and run the main job on the bundled demo recipe.
demo: build
	scripts/demo.sh

# Set up, build and run every test.
test: build
	cd $(BUILD) && ctest --output-on-failure -j 2

clean:
	rm -rf $(BUILD)

# Regenerate out_examples/ (demo summary, WAVs, truth, baseline score, validation report).
.PHONY: examples
examples: build
	STETHOGEN_BIN=$(BUILD)/stethogen scripts/examples.sh

# Benchmark (docs/performance.md): stage timings, thread scaling, peak memory, Python reference.
bench:
	BUILD=$(abspath $(BUILD)) scripts/bench.sh
