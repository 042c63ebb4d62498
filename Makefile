# Thin wrapper: the scripts in scripts/ are the real commands (README, DEVELOPERS.md).
.PHONY: all test test-full demo bench format format-check tidy deps clean

all: test

test:
	scripts/test

test-full:
	scripts/test --full

demo:
	scripts/demo

bench:
	scripts/bench

format:
	scripts/format

format-check:
	scripts/check-format

tidy:
	scripts/tidy

deps:
	scripts/install-deps

clean:
	rm -rf build build-sanitize
