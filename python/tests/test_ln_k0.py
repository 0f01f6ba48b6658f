"""ln_k0 through the Python package: outside values, types, errors."""

import json
import subprocess
from decimal import Decimal, localcontext

import pytest

import kzero
from conftest import read_checks


def published_ln_k0():
    return [r for r in read_checks("bethe_logarithms.csv") if r["quantity"] == "ln_k0"]


@pytest.mark.parametrize("row", published_ln_k0(), ids=lambda r: f"{r['n']}{'spdf'[int(r['l'])]}")
def test_published_values(row):
    # Source of each value: the `source` column of data-checks/bethe_logarithms.csv
    # (Drake & Swainson, Phys. Rev. A 41, 1243 (1990), via CODATA 2018).
    v = kzero.ln_k0(int(row["n"]), int(row["l"]), digits=20)
    tol = Decimal(row["tolerance"]) + v.abs_err
    assert abs(v.value - Decimal(row["expected"])) <= tol, (v, row)


def test_mean_excitation_energy_of_2s():
    # Bethe, Brown & Stehn, Phys. Rev. 77, 370 (1950): k0(2s) = 16.646(7) Ry.
    (row,) = [r for r in read_checks("bethe_logarithms.csv") if r["quantity"] == "k0_ry"]
    v = kzero.ln_k0(int(row["n"]), int(row["l"]), digits=15)
    k0 = v.value.exp()
    assert abs(k0 - Decimal(row["expected"])) <= Decimal(row["tolerance"])


def test_value_fields_and_types():
    v = kzero.ln_k0(2, 0, digits=30)
    assert isinstance(v, kzero.Value)
    assert (v.n, v.l, v.digits, v.method) == (2, 0, 30, "green")
    assert isinstance(v.value, Decimal) and isinstance(v.abs_err, Decimal)
    # D + 2 decimals, and the estimate meets the goal.
    assert -v.value.as_tuple().exponent == 32
    assert v.abs_err < Decimal("1e-30")
    assert v.bits > 100 and v.seconds >= 0
    assert abs(float(v) - 2.811769893120563) < 1e-15
    assert str(v).startswith("ln k0(2,0) = 2.81176989312056351521")


def test_mpf_keeps_every_printed_digit():
    mpmath = pytest.importorskip("mpmath")
    v = kzero.ln_k0(3, 1, digits=40)
    x = v.mpf()
    assert isinstance(x, mpmath.mpf)
    with mpmath.workprec(400):
        back = Decimal(mpmath.nstr(x, 60, strip_zeros=False))
    with localcontext() as ctx:
        ctx.prec = 80
        # Within half a unit of the last printed decimal: no printed digit lost.
        assert abs(back - v.value) < Decimal(10) ** -(v.digits + 2) / 2


def test_spectral_method_and_gauge():
    g = kzero.ln_k0(3, 2, digits=15)
    s = kzero.ln_k0(3, 2, digits=15, method="spectral", gauge="length")
    assert s.method == "spectral" and s.gauge == "length" and g.gauge is None
    assert abs(g.value - s.value) <= g.abs_err + s.abs_err


def test_same_json_as_the_binary(kzero_bin):
    for method in ["green", "spectral"]:
        out = subprocess.run(
            [kzero_bin, "state", "4", "1", "--digits", "25", "--method", method, "--json"],
            check=True, capture_output=True, text=True,
        ).stdout
        cli = json.loads(out)
        v = kzero.ln_k0(4, 1, digits=25, method=method)
        row = kzero.to_rows([v])[0]
        # Same decimal digits (Decimal keeps every digit of the text it is given).
        assert row["ln_k0"].as_tuple() == Decimal(cli["ln_k0"]).as_tuple()
        assert row["abs_err"].as_tuple() == Decimal(cli["abs_err"]).as_tuple()
        for key in ["n", "l", "digits", "method", "bits", "nodes", "terms"]:
            assert row[key] == cli[key], key
        assert row.get("gauge") == cli.get("gauge")


def cli_error(kzero_bin, args):
    p = subprocess.run([kzero_bin, *args], capture_output=True, text=True)
    assert p.returncode == 2, (args, p.stderr)
    msg = p.stderr.strip()
    assert msg.startswith("kzero: ")
    return msg[len("kzero: "):]


@pytest.mark.parametrize(
    "n,l,method",
    # n far beyond the methods' range (kzero.MAX_N) in the last two.
    [(0, 0, "green"), (2, 2, "green"), (3, -1, "spectral"), (10**6, 0, "green"),
     (10**7, 3, "spectral")],
)
def test_bad_states_raise_invalid_input_with_the_cli_message(kzero_bin, n, l, method):
    assert kzero.MAX_N < 10**6  # else the cases below would compute
    expected = cli_error(kzero_bin, ["state", str(n), str(l), "--method", method])
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.ln_k0(n, l, method=method)
    assert str(e.value) == expected
    assert isinstance(e.value, ValueError)


def cli_option_error(kzero_bin, option, value):
    """The command line's message for `--option value`, with the keyword name
    in place of the option (as the package words it)."""
    msg = cli_error(kzero_bin, ["state", "2", "0", f"--{option}={value}"])
    placeholder = f"'--{option} <{'D' if option == 'digits' else option.upper()}>'"
    assert placeholder in msg, msg
    msg = msg.replace(placeholder, f"'{option}'")
    suffix = " (see kzero --help)"
    assert msg.endswith(suffix)
    return msg[: -len(suffix)]


@pytest.mark.parametrize("digits", [4, 201, 0])
def test_digits_out_of_range(kzero_bin, digits):
    expected = cli_option_error(kzero_bin, "digits", digits)
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.ln_k0(2, 0, digits=digits)
    assert str(e.value) == expected


def test_unknown_gauge(kzero_bin):
    # `kzero table` lists the three forms (`kzero state` also accepts `all`,
    # which the package does not offer).
    msg = cli_error(kzero_bin, ["table", "--n-max", "2", "--gauge", "radial"])
    expected = msg.replace("'--gauge <GAUGE>'", "'gauge'").removesuffix(" (see kzero --help)")
    for call in [lambda: kzero.ln_k0(2, 0, method="spectral", gauge="radial"),
                 lambda: kzero.table(n_max=2, method="spectral", gauge="radial")]:
        with pytest.raises(kzero.InvalidInput) as e:
            call()
        assert str(e.value) == expected


def test_gauge_with_the_green_method_is_refused(kzero_bin):
    # The command line refuses an option the method would ignore; so does
    # the package, with the same message in keyword names.
    msg = cli_error(kzero_bin, ["state", "2", "0", "--gauge", "length"])
    expected = msg.replace("--gauge", "gauge").replace("--method", "method")
    for call in [lambda: kzero.ln_k0(2, 0, gauge="length"),
                 lambda: kzero.table(n_max=2, gauge="length"),
                 lambda: kzero.sweep(2, 0, digits=(10, 15), gauge="length")]:
        with pytest.raises(kzero.InvalidInput) as e:
            call()
        assert str(e.value) == expected


def test_both_methods_match_the_binary(kzero_bin):
    cli = json.loads(subprocess.run(
        [kzero_bin, "state", "3", "1", "--digits", "22", "--method", "both", "--json"],
        check=True, capture_output=True, text=True).stdout)
    v = kzero.ln_k0(3, 1, digits=22, method="both")
    assert v.method == "both" and v.gauge == "velocity"
    assert v.spectral is not None and v.spectral.method == "spectral"
    assert v.value.as_tuple() == Decimal(cli["ln_k0"]).as_tuple()
    assert v.spectral.value.as_tuple() == Decimal(cli["ln_k0_spectral"]).as_tuple()
    assert v.agreement == cli["agreement_digits"] and v.consistent is cli["consistent"]
    row = kzero.to_rows([v])[0]
    assert row["agreement_digits"] == cli["agreement_digits"]
    assert row["abs_err_spectral"].as_tuple() == Decimal(cli["abs_err_spectral"]).as_tuple()


def test_a_disagreement_raises_methods_disagree_with_the_value(monkeypatch):
    # The two methods agree on every state, so the native result is replaced
    # by one that carries a disagreement message (invented numbers, in the
    # engine's wording).
    real = kzero._kzero.ln_k0(2, 1, 10, "both", "velocity")
    message = ("methods disagree at (n=2, l=1): green -0.030016708630 +- 1e-12 vs "
               "spectral -0.030016708640 +- 1e-12 (10 agreeing digits)")
    fake = dict(real, consistent=False, disagreement=message)
    monkeypatch.setattr(kzero._kzero, "ln_k0", lambda *args: fake)
    with pytest.raises(kzero.MethodsDisagree) as e:
        kzero.ln_k0(2, 1, digits=10, method="both")
    assert str(e.value) == message
    assert isinstance(e.value, RuntimeError)
    assert e.value.value.n == 2 and e.value.value.consistent is False


def test_unknown_method(kzero_bin):
    expected = cli_option_error(kzero_bin, "method", "fastest")
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.ln_k0(2, 0, method="fastest")
    assert str(e.value) == expected


def test_build_info_has_the_table_header_keys(kzero_bin):
    info = kzero.build_info()
    assert list(info) == ["version", "git_revision", "mpfr", "gmp", "command", "started_utc"]
    assert info["version"] == kzero.__version__
    header = subprocess.run([kzero_bin, "table", "--n-max", "1", "--digits", "5", "--quiet"],
                            check=True, capture_output=True, text=True).stdout
    prov = dict(line[2:].split(": ", 1) for line in header.splitlines()
                if line.startswith("# ") and ": " in line)
    for key in ["version", "git_revision", "mpfr", "gmp"]:
        assert info[key] == prov[key], key


BIG = 10 ** 30


@pytest.mark.parametrize(
    "call,args,option,keyword",
    [
        (lambda: kzero.ln_k0(BIG, 0), ["state", str(BIG), "0"], "'<N>'", "'n'"),
        (lambda: kzero.ln_k0(2, 0, digits=BIG), ["state", "2", "0", f"--digits={BIG}"],
         "'--digits <D>'", "'digits'"),
        (lambda: kzero.table(n_max=BIG), ["table", f"--n-max={BIG}"], "'--n-max <N>'", "'n_max'"),
        (lambda: kzero.table(n_min=BIG, n_max=3), ["table", f"--n-min={BIG}", "--n-max=3"],
         "'--n-min <M>'", "'n_min'"),
        (lambda: kzero.table(n_max=2, l=[0, BIG]), ["table", "--n-max=2", f"--l=0,{BIG}"],
         "'--l <LIST>'", "'l'"),
        (lambda: kzero.table(n_max=2, threads=BIG), ["table", "--n-max=2", f"--threads={BIG}"],
         "'--threads <T>'", "'threads'"),
        (lambda: kzero.sweep(2, 0, digits=(10, BIG)), ["sweep", "2", "0", f"--digits=10,{BIG}"],
         "'--digits <LIST>'", "'digits'"),
        (lambda: kzero.radial(1, 0, BIG, 0), ["radial", "1", "0", str(BIG), "0"], "'<N2>'", "'n2'"),
        (lambda: kzero.radial(1, 0, 1, 0, power=-BIG), ["radial", "1", "0", "1", "0", f"--power={-BIG}"],
         "'--power <K>'", "'power'"),
        (lambda: kzero.radial(1, 0, 1, 0, power=2 ** 31), ["radial", "1", "0", "1", "0", f"--power={2 ** 31}"],
         "'--power <K>'", "'power'"),
        (lambda: kzero.oscillator(1, 0, BIG, 1), ["oscillator", "1", "0", str(BIG), "1"], "'<N2>'", "'n2'"),
    ],
)
def test_integers_beyond_their_type(kzero_bin, call, args, option, keyword):
    # An integer too large for the command line's parser gets its message,
    # not an OverflowError.
    msg = cli_error(kzero_bin, args)
    assert option in msg, msg
    expected = msg.replace(option, keyword).removesuffix(" (see kzero --help)")
    with pytest.raises(kzero.InvalidInput) as e:
        call()
    assert str(e.value) == expected
