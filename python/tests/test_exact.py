"""Exact bound-state quantities through the package: Fraction where rational."""

import json
import subprocess
from decimal import Decimal, localcontext
from fractions import Fraction

import pytest

import kzero
from conftest import read_checks


def test_lyman_alpha_oscillator_strength_is_exact():
    # f(1s -> 2p) = 2^13 / 3^9 (Bethe & Salpeter, Quantum Mechanics of One-
    # and Two-Electron Atoms).
    f = kzero.oscillator(1, 0, 2, 1)
    assert isinstance(f, Fraction)
    assert f == Fraction(2**13, 3**9)


@pytest.mark.parametrize(
    "row", read_checks("oscillator_strengths.csv"),
    ids=lambda r: f"{r['n']}{r['l']}-{r['n2']}{r['l2']}",
)
def test_published_oscillator_strengths(row):
    # Source of each value: the `source` column of
    # data-checks/oscillator_strengths.csv (NIST ASD, Wiese & Fuhr 2009).
    f = kzero.oscillator(int(row["n"]), int(row["l"]), int(row["n2"]), int(row["l2"]))
    assert isinstance(f, Fraction)
    assert abs(f - Fraction(row["expected"])) <= Fraction(row["tolerance"])


def test_rational_radial_integral():
    # <n l| r |n l> = (3 n^2 - l (l + 1)) / 2 bohr (Bethe & Salpeter, Quantum Mechanics of One-
    # and Two-Electron Atoms, section 3).
    for n, l in [(1, 0), (2, 0), (2, 1), (5, 3)]:
        assert kzero.radial(n, l, n, l) == Fraction(3 * n * n - l * (l + 1), 2)
    # <1s| r^-1 |1s> = 1 (virial theorem; common practice).
    assert kzero.radial(1, 0, 1, 0, power=-1) == 1


def hydrogen_radial(mpmath, n, l):
    """R_nl(r) of hydrogen (Z = 1, bohr units), written out independently:
    sqrt((2/n)^3 (n-l-1)! / (2n (n+l)!)) e^{-r/n} (2r/n)^l L^{2l+1}_{n-l-1}(2r/n)."""
    norm = mpmath.sqrt((mpmath.mpf(2) / n) ** 3 * mpmath.factorial(n - l - 1)
                       / (2 * n * mpmath.factorial(n + l)))

    def r_nl(r):
        x = 2 * r / n
        return norm * mpmath.exp(-r / n) * x**l * mpmath.laguerre(n - l - 1, 2 * l + 1, x)

    return r_nl


def test_matrix_element_against_independent_quadrature():
    mpmath = pytest.importorskip("mpmath")
    cases = [(2, 1, 3, 0, 1), (3, 2, 4, 1, 1), (2, 0, 3, 1, 2), (4, 1, 3, 2, -1)]
    with mpmath.workdps(40):
        for n, l, n2, l2, k in cases:
            ra, rb = hydrogen_radial(mpmath, n, l), hydrogen_radial(mpmath, n2, l2)
            quad = mpmath.quad(lambda r: ra(r) * rb(r) * r ** (2 + k), [0, 5, 20, 60, mpmath.inf])
            got = kzero.radial(n, l, n2, l2, power=k)
            value = Decimal(got) if isinstance(got, int) else (
                Decimal(got.numerator) / Decimal(got.denominator)
                if isinstance(got, Fraction) else got.value)
            with localcontext() as ctx:
                ctx.prec = 50
                diff = abs(Decimal(mpmath.nstr(quad, 35)) - value)
            assert diff < Decimal("1e-18"), (n, l, n2, l2, k, got, quad)


def test_irrational_radial_integral_is_exact_text_and_decimal(kzero_bin):
    got = kzero.radial(2, 1, 3, 0, digits=30)
    assert isinstance(got, kzero.Exact)
    assert "sqrt" in got.exact and isinstance(got.value, Decimal)
    cli = json.loads(subprocess.run(
        [kzero_bin, "radial", "2", "1", "3", "0", "--digits", "30", "--json"],
        check=True, capture_output=True, text=True).stdout)
    assert got.exact == cli["exact"]
    assert got.value.as_tuple() == Decimal(cli["value"]).as_tuple()
    assert abs(float(got) - float(cli["value"])) < 1e-15


def test_oscillator_matches_the_binary(kzero_bin):
    cli = json.loads(subprocess.run(
        [kzero_bin, "oscillator", "3", "2", "4", "1", "--json"],
        check=True, capture_output=True, text=True).stdout)
    assert kzero.oscillator(3, 2, 4, 1) == Fraction(cli["exact"])


def cli_message(kzero_bin, args):
    p = subprocess.run([kzero_bin, *args], capture_output=True, text=True)
    assert p.returncode == 2, (args, p.stderr)
    return p.stderr.strip()[len("kzero: "):]


@pytest.mark.parametrize(
    "call,args",
    [
        (lambda: kzero.radial(1, 0, 1, 0, power=-5), ["radial", "1", "0", "1", "0", "--power", "-5"]),
        (lambda: kzero.radial(1, 1, 2, 0), ["radial", "1", "1", "2", "0"]),
        (lambda: kzero.oscillator(1, 0, 3, 2), ["oscillator", "1", "0", "3", "2"]),
        (lambda: kzero.oscillator(0, 0, 2, 1), ["oscillator", "0", "0", "2", "1"]),
    ],
)
def test_bad_input_raises_with_the_cli_message(kzero_bin, call, args):
    expected = cli_message(kzero_bin, args)
    with pytest.raises(kzero.InvalidInput) as e:
        call()
    assert str(e.value) == expected
