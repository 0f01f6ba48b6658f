"""Shared helpers of the Python package's tests."""

import csv
import os
import shutil
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
DATA = ROOT / "data-checks"


def read_checks(name):
    """The rows of a data-checks CSV file (comment lines skipped) as dicts."""
    with open(DATA / name, newline="", encoding="utf-8") as f:
        lines = [line for line in f if not line.startswith("#")]
    return list(csv.DictReader(lines))


@pytest.fixture(scope="session")
def kzero_bin():
    """Path of the kzero binary of the same build (KZERO_BIN, or target/release)."""
    candidates = [os.environ.get("KZERO_BIN")]
    target = os.environ.get("CARGO_TARGET_DIR") or str(ROOT / "target")
    candidates.append(str(Path(target) / "release" / "kzero"))
    candidates.append(shutil.which("kzero"))
    for c in candidates:
        if c and os.path.isfile(c) and os.access(c, os.X_OK):
            return c
    pytest.fail(
        "the kzero binary was not found (build it with `cargo build --release` "
        "or set KZERO_BIN); the comparison with the binary cannot be skipped"
    )
