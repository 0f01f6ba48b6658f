# kzero: the two entry points of the README, plus the checks CI runs.
# Every target prepares a fresh machine first (m4 for the GMP/MPFR build).

CARGO ?= cargo

.PHONY: setup demo test python-test lint doc ci bench

setup:
	@sh scripts/ensure-m4.sh

# The main job: a Bethe-logarithm table for n <= 3 at 20 digits.
demo: setup
	$(CARGO) run --release --quiet -- table --n-max 3 --digits 20

# The whole test suite, optimized (heavy numerics), then the Python package's
# tests (built into .venv-test; see scripts/python-test.sh).
test: setup
	$(CARGO) test --release --workspace
	sh scripts/python-test.sh

# Only the Python package: build it into .venv-test and run pytest.
python-test: setup
	$(CARGO) build --release --bin kzero
	sh scripts/python-test.sh

lint: setup
	$(CARGO) fmt --all -- --check
	$(CARGO) clippy --workspace --all-targets -- -D warnings

doc: setup
	RUSTDOCFLAGS="-D warnings" $(CARGO) doc --workspace --no-deps

ci: lint doc test

bench: setup
	$(CARGO) bench
