"""kzero.sweep against the binary's sweep."""

import json
import subprocess
from decimal import Decimal

import pytest

import kzero


def test_sweep_matches_the_binary(kzero_bin):
    cli = json.loads(subprocess.run(
        [kzero_bin, "sweep", "3", "1", "--digits", "10,15,25", "--json"],
        check=True, capture_output=True, text=True).stdout)
    rows = kzero.sweep(3, 1, digits=(25, 10, 15))
    assert [r["digits"] for r in rows] == [10, 15, 25]
    assert len(rows) == len(cli["rows"])
    for mine, theirs in zip(rows, cli["rows"]):
        assert mine["digits"] == theirs["digits"]
        assert mine["ln_k0"].as_tuple() == Decimal(theirs["ln_k0"]).as_tuple()
        assert mine["abs_err"].as_tuple() == Decimal(theirs["abs_err"]).as_tuple()
        if theirs["actual_err"] is None:
            assert mine["actual_err"] is None
        else:
            assert mine["actual_err"].as_tuple() == Decimal(theirs["actual_err"]).as_tuple()
        assert mine["covered"] == theirs["covered"]
        assert (mine["bits"], mine["nodes"], mine["terms"]) == (
            theirs["bits"], theirs["nodes"], theirs["terms"])
        assert isinstance(mine["value"], kzero.Value)
    # Every estimate covers the actual error of its rung.
    assert all(r["covered"] for r in rows[:-1])


def test_sweep_refuses_both_methods(kzero_bin):
    p = subprocess.run([kzero_bin, "sweep", "2", "0", "--method", "both"],
                       capture_output=True, text=True)
    assert p.returncode == 2
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.sweep(2, 0, method="both")
    assert str(e.value) == p.stderr.strip()[len("kzero: "):]
