# kzero: the two entry points of the README, plus the checks CI runs.
# Every target prepares a fresh machine first (m4 for the GMP/MPFR build).

CARGO ?= cargo

.PHONY: setup demo test lint doc ci bench

setup:
	@sh scripts/ensure-m4.sh

# The main job: a Bethe-logarithm table for n <= 3 at 20 digits.
demo: setup
	$(CARGO) run --release --quiet -- table --n-max 3 --digits 20

# The whole test suite, optimized (heavy numerics).
test: setup
	$(CARGO) test --release --workspace

lint: setup
	$(CARGO) fmt --all -- --check
	$(CARGO) clippy --workspace --all-targets -- -D warnings

doc: setup
	RUSTDOCFLAGS="-D warnings" $(CARGO) doc --workspace --no-deps

ci: lint doc test

bench: setup
	$(CARGO) bench
