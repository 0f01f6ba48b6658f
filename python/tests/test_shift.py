"""kzero.shift: measured Lamb shifts and the binary's JSON."""

import json
import subprocess
from decimal import Decimal
from fractions import Fraction

import pytest

import kzero
from conftest import read_checks


@pytest.mark.parametrize("row", read_checks("lamb_shift.csv"), ids=lambda r: r["name"])
def test_measured_intervals(row):
    # Measured values and their sources: data-checks/lamb_shift.csv (the
    # `source` column; e.g. Lundeen & Pipkin, Phys. Rev. Lett. 46, 232 (1981)
    # for hydrogen 2S1/2 - 2P1/2). Passes within the quadrature sum of both
    # levels' truncation uncertainties and the measurement uncertainty, as
    # `kzero check` judges it.
    def level(prefix):
        return kzero.shift(int(row[f"{prefix}_n"]), int(row[f"{prefix}_l"]),
                           Fraction(int(row[f"{prefix}_j2"]), 2), nucleus=row["nucleus"])
    up, low = level("upper"), level("lower")
    interval = up["total_mhz"] - low["total_mhz"]
    allowance = (up["uncertainty_mhz"] ** 2 + low["uncertainty_mhz"] ** 2
                 + Decimal(row["measured_unc_mhz"]) ** 2).sqrt()
    assert abs(interval - Decimal(row["measured_mhz"])) <= allowance, (interval, allowance)


def test_same_as_the_binary_json(kzero_bin):
    cli = json.loads(subprocess.run(
        [kzero_bin, "shift", "2", "1", "3/2", "--nucleus", "D", "--json"],
        check=True, capture_output=True, text=True).stdout)
    for j in ["3/2", Fraction(3, 2), 1.5]:
        d = kzero.shift(2, 1, j, nucleus="D")
        assert d["level"] == cli["level"]
        assert d["total_mhz"] == Decimal(cli["total_mhz"])
        assert d["uncertainty_mhz"] == Decimal(cli["uncertainty_mhz"])
        assert [t["name"] for t in d["terms"]] == [t["name"] for t in cli["terms"]]
        for mine, theirs in zip(d["terms"], cli["terms"]):
            assert mine["mhz"] == Decimal(theirs["mhz"])
            assert mine["coefficient"] == Decimal(theirs["coefficient"])
        assert d["ln_k0"]["value"] == Decimal(cli["ln_k0"]["value"])
        assert d["nucleus"] == cli["nucleus"]


def test_custom_nucleus_matches_the_binary(kzero_bin):
    cli = json.loads(subprocess.run(
        [kzero_bin, "shift", "1", "0", "1/2", "--z", "3", "--mass", "12781.5", "--json"],
        check=True, capture_output=True, text=True).stdout)
    d = kzero.shift(1, 0, "1/2", z=3, mass=12781.5)
    assert d["total_mhz"] == Decimal(cli["total_mhz"])
    assert d["nucleus"] == cli["nucleus"]


@pytest.mark.parametrize(
    "kwargs,args",
    [
        (dict(n=2, l=0, j="3/2"), ["2", "0", "3/2"]),
        (dict(n=2, l=0, j="1/2", nucleus="Xe"), ["2", "0", "1/2", "--nucleus", "Xe"]),
        (dict(n=2, l=0, j="1/2", z=2), ["2", "0", "1/2", "--z", "2"]),
        (dict(n=2, l=0, j="1/2", nucleus="D", z=2), ["2", "0", "1/2", "--nucleus", "D", "--z", "2"]),
        (dict(n=2, l=0, j="1/2", mass=3.0), ["2", "0", "1/2", "--mass", "3.0"]),
        (dict(n=2, l=0, j="1/2", mass="heavy"), ["2", "0", "1/2", "--mass", "heavy"]),
    ],
)
def test_bad_input_raises_with_the_cli_message(kzero_bin, kwargs, args):
    p = subprocess.run([kzero_bin, "shift", *args], capture_output=True, text=True)
    assert p.returncode == 2, p.stderr
    expected = p.stderr.strip().removeprefix("kzero: ")
    for option, keyword in [("--nucleus", "nucleus"), ("--mass M", "mass"), ("--mass", "mass"),
                            ("--radius", "radius"), ("--z", "z")]:
        expected = expected.replace(option, keyword)
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.shift(**kwargs)
    assert str(e.value) == expected
