"""kzero.sums: the logarithmic dipole sums through the Python package.

Outside values, exact sum rules, the bridge to ln k0, the binary's JSON and
its error messages.
"""

import json
import re
import subprocess
from decimal import Decimal
from fractions import Fraction

import pytest

import kzero
from conftest import read_checks


def cli_json(kzero_bin, args):
    out = subprocess.run([kzero_bin, "sums", *args, "--json"],
                         check=True, capture_output=True, text=True).stdout
    return json.loads(out)


def same_digits(mine, text):
    """A Decimal (or None) has exactly the digits of the binary's string."""
    if text is None:
        return mine is None
    return mine is not None and mine.as_tuple() == Decimal(text).as_tuple()


ROW_KEYS = ["S", "S_err", "L", "L_err", "ln_I", "ln_I_err", "I_eV", "I_eV_err"]


def assert_rows_match(rows, cli_rows):
    assert [r.k for r in rows] == [r["k"] for r in cli_rows]
    for mine, theirs in zip(rows, cli_rows):
        for key in ROW_KEYS:
            assert same_digits(getattr(mine, key), theirs[key]), (mine.k, key)


@pytest.mark.parametrize(
    "kwargs,args",
    [
        (dict(n=1, l=0), ["1", "0"]),
        (dict(n=3, l=1, k=[-1, 0, 2], digits=12), ["3", "1", "--k=-1,0,2", "--digits", "12"]),
        (dict(n=5, l=2, k=-3, digits=25, method="spectral"),
         ["5", "2", "--k=-3", "--digits", "25", "--method", "spectral"]),
        (dict(n=4, l=0, k=[0, 1], method="spectral", gauge="velocity", nucleus="D"),
         ["4", "0", "--k", "0,1", "--method", "spectral", "--gauge", "velocity",
          "--nucleus", "D"]),
        (dict(n=2, l=1, k=[-2, 0], z=2, mass=float("inf")),
         ["2", "1", "--k=-2,0", "--z", "2", "--mass", "inf"]),
        (dict(n=1, l=0, k=0, nucleus="He4"), ["1", "0", "--k", "0", "--nucleus", "He4"]),
    ],
)
def test_same_values_and_strings_as_the_binary(kzero_bin, kwargs, args):
    cli = cli_json(kzero_bin, args)
    s = kzero.sums(**kwargs)
    assert isinstance(s, kzero.Sums)
    for key in ["n", "l", "digits", "method", "nucleus", "z", "bits", "nodes"]:
        assert getattr(s, key) == cli[key], key
    assert s.gauge == cli.get("gauge")
    assert same_digits(s.energy_unit_eV, cli["energy_unit_eV"])
    assert same_digits(s.energy_unit_eV_err, cli["energy_unit_eV_err"])
    assert_rows_match(s.rows, cli["rows"])
    assert s.rows_spectral is None and s.consistent is None


def test_both_methods_match_the_binary(kzero_bin):
    cli = cli_json(kzero_bin, ["3", "2", "--method", "both", "--digits", "18"])
    s = kzero.sums(3, 2, digits=18, method="both")
    assert (s.method, s.gauge) == ("both", "length") == (cli["method"], cli["gauge"])
    assert s.consistent is True is cli["consistent"]
    assert_rows_match(s.rows, cli["rows"])
    assert_rows_match(s.rows_spectral, cli["rows_spectral"])


def test_defaults_fields_and_types():
    s = kzero.sums(2, 1, digits=15)
    assert kzero.SUM_POWERS == (-4, -3, -2, -1, 0, 1, 2)
    assert [r.k for r in s] == list(kzero.SUM_POWERS) and len(s) == 7
    assert (s.n, s.l, s.digits, s.method, s.gauge, s.nucleus, s.z) == (2, 1, 15, "green", None, "H", 1)
    for r in s:
        assert (r.n, r.l) == (2, 1)
        for key in ["S", "S_err", "L", "L_err"]:
            assert isinstance(getattr(r, key), Decimal), key
        # D + 2 decimals, and every estimate meets the absolute goal.
        assert -r.S.as_tuple().exponent == 17 and -r.L.as_tuple().exponent == 17
        assert r.S_err < Decimal("1e-15") and r.L_err < Decimal("1e-15")
    # S(2) vanishes for l >= 1, so ln I(2) and I(2) are not defined.
    assert s[2].S == 0 and s[2].ln_I is None and s[2].I_eV is None and s[2].I_eV_err is None
    assert isinstance(s[0].ln_I, Decimal) and isinstance(s[0].I_eV, Decimal)
    with pytest.raises(KeyError):
        s.row(3)
    rows = kzero.to_rows(s)
    assert list(rows[0]) == ["n", "l", "k", "S", "S_err", "L", "L_err", "ln_I", "ln_I_err",
                             "I_eV", "I_eV_err"]
    assert rows[4]["S"] == s[0].S
    assert str(s).startswith("Dipole sums of (2,1)")
    assert "k = 2: S = 0.00000000000000000 +- 0, " in str(s)
    assert kzero.sums(2, 1, k=[0], method="spectral").gauge == "length"
    # The unit: CODATA 2018 R_inf h c = 13.605693122994(26) eV times the
    # proton's m_r/m_e (m_p/m_e = 1836.15267343, CODATA 2018); its printed
    # error covers the 2.6e-11 eV uncertainty.
    unit = Decimal("13.605693122994") / (1 + 1 / Decimal("1836.15267343"))
    assert abs(s.energy_unit_eV - unit) <= s.energy_unit_eV_err
    assert Decimal("2.6e-11") <= s.energy_unit_eV_err < Decimal("3e-11")


@pytest.mark.parametrize("row", read_checks("dipole_sums.csv"),
                         ids=lambda r: f"{r['quantity']}-{r['n']}{'spdf'[int(r['l'])]}-k{r['k']}")
def test_outside_values(row):
    # Sources (the `source` column and the header of data-checks/dipole_sums.csv):
    # 4 S(-2) of 1s = 9/2 bohr^3, the static polarizability (Bethe & Salpeter,
    # Quantum Mechanics of One- and Two-Electron Atoms (1957)); S(0) = 1
    # (Thomas-Reiche-Kuhn, common practice); I(0) of 1s = 1.1018 Ry
    # (Inokuti, Rev. Mod. Phys. 43, 297 (1971), from memory); I(2) of 2s =
    # k0(2s) = 16.646(7) Ry (Bethe, Brown & Stehn, Phys. Rev. 77, 370 (1950)).
    n, l, k = int(row["n"]), int(row["l"]), int(row["k"])
    r = kzero.sums(n, l, k=k, digits=20)[k]
    expected, tol = Decimal(row["expected"]), Decimal(row["tolerance"])
    if row["quantity"] == "dipole_sum_s":
        assert abs(r.S - expected) <= tol + r.S_err, (r.S, expected)
    else:
        assert row["quantity"] == "mean_excitation_ry"
        assert abs(r.ln_I.exp() - expected) <= tol, (r.ln_I.exp(), expected)


def test_polarizability_and_mean_excitation_energy_of_1s():
    # Static dipole polarizability of hydrogen 1s: 9/2 bohr^3 (Bethe &
    # Salpeter (1957)). With f = (2/3) d |<r>|^2 and D = 2 d (d in hartree),
    # alpha = sum f / d^2 = 4 sum f / D^2 = 4 S(-2) (docs/physics.md, section 8).
    s = kzero.sums(1, 0, k=[-2, 0], digits=30, mass="inf")
    assert abs(4 * Fraction(s[-2].S) - Fraction(9, 2)) <= 4 * Fraction(s[-2].S_err)
    # Mean excitation energy of atomic hydrogen in the stopping formula,
    # about 14.99 eV (Inokuti, Rev. Mod. Phys. 43, 297 (1971), from memory),
    # with an infinitely heavy nucleus.
    assert abs(s[0].I_eV - Decimal("14.99")) < Decimal("0.01")
    # The proton's reduced mass lowers it by the factor m_r/m_e.
    h = kzero.sums(1, 0, k=0, digits=30)
    ratio = h[0].I_eV / s[0].I_eV
    assert abs(ratio - h.energy_unit_eV / s.energy_unit_eV) < Decimal("1e-11")
    assert abs(ratio - 1 / (1 + Decimal(1) / Decimal("1836.15267343"))) < Decimal("1e-11")


STATES = [(1, 0), (2, 0), (2, 1), (3, 2), (4, 1), (7, 3), (12, 0), (12, 11), (25, 4), (40, 39)]


@pytest.mark.parametrize("n,l", STATES)
def test_exact_sum_rules(n, l):
    # Exact members of the family (docs/physics.md, section 8.1): S(0) = 1
    # (Thomas-Reiche-Kuhn, common practice), S(1) = 4/(3 n^2),
    # S(2) = 16/(3 n^3) for l = 0 and 0 for l >= 1. Every printed value is
    # within its printed error of the exact number.
    s = kzero.sums(n, l, k=[0, 1, 2], digits=15)
    exact = {0: Fraction(1), 1: Fraction(4, 3 * n * n),
             2: Fraction(16, 3 * n ** 3) if l == 0 else Fraction(0)}
    for k, want in exact.items():
        assert abs(Fraction(s[k].S) - want) <= Fraction(s[k].S_err), (k, s[k].S)


def squared(x):
    """The exact square of kzero.radial's result (a Fraction or c*sqrt(r))."""
    if isinstance(x, Fraction):
        return x * x
    m = re.fullmatch(r"(-?\d+(?:/\d+)?)\*sqrt\((\d+(?:/\d+)?)\)", x.exact)
    assert m, x.exact
    return Fraction(m.group(1)) ** 2 * Fraction(m.group(2))


@pytest.mark.parametrize("n,l", [(1, 0), (2, 0), (2, 1), (3, 1), (4, 2), (6, 5), (9, 3)])
def test_s_minus_one_from_the_closure_of_r(n, l):
    # S(-1) = (<r^2> - sum_L w_L |<n L|r|n l>|^2) / 3 (closure over all m
    # without the same-n states; weights w_(l+1) = (l+1)/(2l+1),
    # w_(l-1) = l/(2l+1)), from kzero.radial's exact integrals: a route that
    # shares nothing with the sums but the exact states.
    r2 = kzero.radial(n, l, n, l, power=2)
    same_n = Fraction(0)
    for big_l, w in [(l + 1, Fraction(l + 1, 2 * l + 1)), (l - 1, Fraction(l, 2 * l + 1))]:
        if 0 <= big_l < n:
            same_n += w * squared(kzero.radial(n, big_l, n, l, power=1))
    want = (r2 - same_n) / 3
    r = kzero.sums(n, l, k=-1, digits=20)[-1]
    assert abs(Fraction(r.S) - want) <= Fraction(r.S_err), (r.S, float(want))


def published_ln_k0():
    return [r for r in read_checks("bethe_logarithms.csv") if r["quantity"] == "ln_k0"]


@pytest.mark.parametrize("row", published_ln_k0(), ids=lambda r: f"{r['n']}{'spdf'[int(r['l'])]}")
def test_l2_is_ln_k0_of_the_published_states(row):
    # L(2) = 16 ln k0 / (3 n^3) (docs/physics.md, section 8); published ln k0:
    # the `source` column of data-checks/bethe_logarithms.csv (Drake &
    # Swainson, Phys. Rev. A 41, 1243 (1990), via CODATA 2018).
    n, l = int(row["n"]), int(row["l"])
    r = kzero.sums(n, l, k=2, digits=20)[2]
    scale = Decimal(3 * n ** 3) / 16
    tol = Decimal(row["tolerance"]) + r.L_err * scale
    assert abs(r.L * scale - Decimal(row["expected"])) <= tol


@pytest.mark.parametrize("n,l", [(2, 1), (5, 0), (9, 4)])
def test_l2_against_kzero_ln_k0(n, l):
    r = kzero.sums(n, l, k=2, digits=25)[2]
    v = kzero.ln_k0(n, l, digits=25)
    c = Fraction(16, 3 * n ** 3)
    assert abs(Fraction(r.L) - c * Fraction(v.value)) <= Fraction(r.L_err) + c * Fraction(v.abs_err)


@pytest.mark.parametrize("n,l,method", [(2, 0, "green"), (4, 3, "spectral")])
def test_estimates_cover_a_more_precise_run(n, l, method):
    low = kzero.sums(n, l, digits=20, method=method)
    high = kzero.sums(n, l, digits=40, method=method)
    for a, b in zip(low, high):
        assert abs(a.S - b.S) <= a.S_err + b.S_err, a.k
        assert abs(a.L - b.L) <= a.L_err + b.L_err, a.k
        if a.ln_I is not None:
            assert abs(a.ln_I - b.ln_I) <= a.ln_I_err + b.ln_I_err, a.k


def cli_error(kzero_bin, args):
    p = subprocess.run([kzero_bin, "sums", *args], capture_output=True, text=True)
    assert p.returncode == 2, (args, p.stderr)
    msg = p.stderr.strip()
    assert msg.startswith("kzero: ")
    return msg[len("kzero: "):]


def keyword_message(msg, option, keyword):
    """The command line's message of a refused option value, in the package's
    words (keyword name, no pointer to --help)."""
    assert option in msg, msg
    return msg.replace(option, keyword).removesuffix(" (see kzero --help)")


@pytest.mark.parametrize(
    "kwargs,args",
    [
        (dict(n=0, l=0), ["0", "0"]),
        (dict(n=2, l=2), ["2", "2"]),
        (dict(n=3, l=-1, method="spectral"), ["3", "-1", "--method", "spectral"]),
        (dict(n=10 ** 6, l=0), [str(10 ** 6), "0"]),
        (dict(n=2, l=1, k=3), ["2", "1", "--k", "3"]),
        (dict(n=2, l=1, k=[0, -5]), ["2", "1", "--k=0,-5"]),
        (dict(n=2, l=0, nucleus="Xe"), ["2", "0", "--nucleus", "Xe"]),
        (dict(n=2, l=0, z=2), ["2", "0", "--z", "2"]),
        (dict(n=2, l=0, mass=3.0), ["2", "0", "--mass", "3.0"]),
    ],
)
def test_bad_input_raises_with_the_cli_message(kzero_bin, kwargs, args):
    expected = cli_error(kzero_bin, args)
    for option, keyword in [("--nucleus", "nucleus"), ("--mass M", "mass"), ("--mass", "mass"),
                            ("--z", "z")]:
        expected = expected.replace(option, keyword)
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.sums(**kwargs)
    assert str(e.value) == expected
    assert isinstance(e.value, ValueError)


@pytest.mark.parametrize("k", [10 ** 20, -(10 ** 20)])
def test_powers_beyond_64_bits(kzero_bin, k):
    expected = keyword_message(cli_error(kzero_bin, ["2", "1", f"--k={k}"]), "'--k <LIST>'", "'k'")
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.sums(2, 1, k=[0, k])
    assert str(e.value) == expected


def test_empty_list_of_powers():
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.sums(2, 1, k=[])
    assert str(e.value) == "no power k was requested"


@pytest.mark.parametrize("digits", [4, 201])
def test_digits_out_of_range(kzero_bin, digits):
    expected = keyword_message(cli_error(kzero_bin, ["2", "0", f"--digits={digits}"]),
                               "'--digits <D>'", "'digits'")
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.sums(2, 0, digits=digits)
    assert str(e.value) == expected


def test_unknown_method_and_gauge(kzero_bin):
    expected = keyword_message(cli_error(kzero_bin, ["2", "0", "--method", "fast"]),
                               "'--method <METHOD>'", "'method'")
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.sums(2, 0, method="fast")
    assert str(e.value) == expected
    expected = keyword_message(cli_error(kzero_bin, ["2", "0", "--method", "spectral",
                                                     "--gauge", "radial"]),
                               "'--gauge <GAUGE>'", "'gauge'")
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.sums(2, 0, method="spectral", gauge="radial")
    assert str(e.value) == expected


def test_gauge_with_the_green_method_is_refused(kzero_bin):
    msg = cli_error(kzero_bin, ["2", "0", "--gauge", "length"])
    expected = msg.replace("--gauge", "gauge").replace("--method", "method")
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.sums(2, 0, gauge="length")
    assert str(e.value) == expected


def test_a_disagreement_raises_methods_disagree_with_the_sums(monkeypatch):
    # The two methods agree on every state, so the native result is replaced
    # by one that carries a disagreement message (invented numbers, in the
    # engine's wording).
    text, message = kzero._kzero.sums(2, 1, [0], 10, "both", None, None, None, None)
    assert message is None
    message = ("methods disagree at (n=2, l=1) on L(0): green -1.234567890123 +- 1.1e-12 "
               "vs spectral -1.234567890200 +- 1.1e-12")
    monkeypatch.setattr(kzero._kzero, "sums", lambda *args: (text, message))
    with pytest.raises(kzero.MethodsDisagree) as e:
        kzero.sums(2, 1, k=0, digits=10, method="both")
    assert str(e.value) == message
    assert isinstance(e.value, RuntimeError)
    assert isinstance(e.value.value, kzero.Sums) and e.value.value.rows_spectral is not None


def test_the_readme_session_replays():
    # The README's session of kzero.sums is real output: replayed here as a
    # doctest, so it cannot drift from what the package prints.
    import doctest

    from conftest import ROOT

    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    marker = "digits as `kzero sums --json`"
    assert marker in readme
    after = readme[readme.index(marker):]
    block = after[after.index("```\n") + 4:]
    block = block[: block.index("```")]
    assert block.count(">>> ") >= 8, block
    test = doctest.DocTestParser().get_doctest(block, {"kzero": kzero}, "README", "README.md", 0)
    runner = doctest.DocTestRunner(optionflags=doctest.ELLIPSIS)
    runner.run(test)
    result = runner.summarize(verbose=False)
    assert result.attempted >= 8 and result.failed == 0, result


BIG = 10 ** 30


@pytest.mark.parametrize(
    "kwargs,args,option,keyword",
    [
        (dict(n=BIG, l=0), [str(BIG), "0"], "'<N>'", "'n'"),
        (dict(n=2, l=-BIG), ["2", "--", str(-BIG)], "'<L>'", "'l'"),
        (dict(n=2, l=0, digits=BIG), ["2", "0", f"--digits={BIG}"], "'--digits <D>'", "'digits'"),
        (dict(n=2, l=0, z=BIG), ["2", "0", f"--z={BIG}"], "'--z <Z>'", "'z'"),
    ],
)
def test_integers_beyond_64_bits(kzero_bin, kwargs, args, option, keyword):
    expected = keyword_message(cli_error(kzero_bin, args), option, keyword)
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.sums(**kwargs)
    assert str(e.value) == expected


def test_non_integers_are_type_errors():
    for kwargs in [dict(n=2.0, l=0), dict(n=2, l=0, k=[0.5]), dict(n=2, l=0, digits=20.0)]:
        with pytest.raises(TypeError):
            kzero.sums(**kwargs)


# Tables of the dipole sums: kzero.table(..., sums=...)


def cli_table(kzero_bin, args):
    out = subprocess.run([kzero_bin, "table", *args, "--json", "--quiet"],
                         check=True, capture_output=True, text=True).stdout
    return json.loads(out)


@pytest.mark.parametrize(
    "kwargs,args",
    [
        (dict(n_max=3, sums=[-2, 0, 2], digits=15, threads=2),
         ["--n-max", "3", "--sums=-2,0,2", "--digits", "15", "--threads", "2"]),
        (dict(n_min=4, n_max=5, l=[1, 4], sums="all", method="both", digits=12, threads=1),
         ["--n-min", "4", "--n-max", "5", "--l", "1,4", "--sums", "all", "--method", "both",
          "--digits", "12", "--threads", "1"]),
    ],
)
def test_table_of_sums_matches_the_binary(kzero_bin, kwargs, args):
    cli = cli_table(kzero_bin, args)["rows"]
    tables = kzero.table(**kwargs)
    assert all(isinstance(s, kzero.Sums) for s in tables)
    mine = [(s, r, i) for s in tables for i, r in enumerate(s.rows)]
    assert [(s.n, s.l, r.k) for s, r, _ in mine] == [(r["n"], r["l"], r["k"]) for r in cli]
    for (s, r, i), theirs in zip(mine, cli):
        for key in ["S", "S_err", "L", "L_err", "ln_I", "ln_I_err"]:
            assert same_digits(getattr(r, key), theirs[key]), (s.n, s.l, r.k, key)
        assert (s.method, s.digits, s.bits) == (theirs["method"], theirs["digits"], theirs["bits"])
        if s.method == "both":
            sp = s.rows_spectral[i]
            for key in ["S", "S_err", "L", "L_err"]:
                assert same_digits(getattr(sp, key), theirs[f"{key}_spectral"]), key


def test_table_of_sums_equals_single_calls():
    tables = kzero.table(states=[(3, 2), (1, 0), (3, 2), (2, 1)], sums=[-1, 0], digits=12,
                         nucleus="D")
    assert [(s.n, s.l) for s in tables] == [(1, 0), (2, 1), (3, 2)]
    for s in tables:
        one = kzero.sums(s.n, s.l, k=[0, -1], digits=12, nucleus="D")
        assert kzero.to_rows(s) == kzero.to_rows(one)
        assert (s.nucleus, s.energy_unit_eV) == ("D", one.energy_unit_eV)
    # One plain dict per state and k, in table order.
    rows = kzero.to_rows(tables)
    assert [(r["n"], r["l"], r["k"]) for r in rows] == [
        (n, l, k) for n, l in [(1, 0), (2, 1), (3, 2)] for k in (-1, 0)]


def test_table_of_sums_bad_input(kzero_bin):
    def cli(args):
        p = subprocess.run([kzero_bin, "table", *args], capture_output=True, text=True)
        assert p.returncode == 2, p.stderr
        return p.stderr.strip().removeprefix("kzero: ").replace("--sums", "sums")

    for sums, arg in [([0, 3], "0,3"), (-5, "-5")]:
        with pytest.raises(kzero.InvalidInput) as e:
            kzero.table(n_max=2, sums=sums)
        assert str(e.value) == cli(["--n-max", "2", "--sums", arg])
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.table(n_max=2, sums=0, gauge="length")
    assert str(e.value) == cli(["--n-max", "2", "--sums", "0", "--gauge", "length"]).replace(
        "--gauge", "gauge").replace("--method", "method")
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.table(states=[(1, 0), (2, 2)], sums=0)
    assert str(e.value) == "invalid state (n=2, l=2): need n >= 1 and 0 <= l < n"
    for bad in ["x", "0,1"]:
        with pytest.raises(kzero.InvalidInput, match="is not a list of powers k"):
            kzero.table(n_max=2, sums=bad)
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.table(n_max=2, sums=[])
    assert str(e.value) == "sums: no power k was requested"
    # The nucleus only sets the unit of I(k): refused without sums.
    with pytest.raises(kzero.InvalidInput, match="give them with sums"):
        kzero.table(n_max=2, nucleus="D")


def test_a_disagreeing_table_of_sums_raises_with_every_state(monkeypatch):
    # Invented disagreement (the methods agree on every state), in the engine's wording.
    real = kzero._kzero.sums_table([(1, 0), (2, 1)], [0], 10, "both", None, None, None, None, None)
    message = ("methods disagree at (n=2, l=1) on L(0): green -1.234567890123 +- 1.1e-12 "
               "vs spectral -1.234567890200 +- 1.1e-12")
    fake = [real[0], (real[1][0], message)]
    monkeypatch.setattr(kzero._kzero, "sums_table", lambda *args: fake)
    with pytest.raises(kzero.MethodsDisagree) as e:
        kzero.table(n_max=2, sums=0, digits=10, method="both")
    assert e.value.disagreements == [message]
    assert [(s.n, s.l) for s in e.value.values] == [(1, 0), (2, 1)]


def test_ctrl_c_interrupts_a_long_table_of_sums():
    import os
    import signal
    import threading
    import time

    # A table that takes minutes; SIGINT arrives after 0.5 s, as from Ctrl-C.
    timer = threading.Timer(0.5, os.kill, args=(os.getpid(), signal.SIGINT))
    start = time.monotonic()
    timer.start()
    try:
        with pytest.raises(KeyboardInterrupt):
            kzero.table(n_min=100, n_max=200, l=0, sums="all", digits=30, threads=1)
    finally:
        timer.cancel()
    elapsed = time.monotonic() - start
    # Generous bound: the table itself would take many minutes.
    assert elapsed < 10, elapsed
