"""kzero: hydrogenic Bethe logarithms ln k0(n, l) at any requested precision.

Also the family of logarithmic dipole sums S(k), L(k) and the mean
excitation energies ln I(k) of every state (:func:`sums`), with the same
kind of precision contract (an absolute goal on every S(k) and L(k)).

Every value comes with an error estimate. The precision contract is the same
as the command line's ``--digits D``:

* ``digits=D`` asks for an **absolute** error below 10^-D in ln k0 (not a
  relative error, not a count of significant digits); values carry D + 2
  decimals.
* ``abs_err`` is an **estimate, not a bound**: the computation is repeated
  with more quadrature nodes, series terms and working bits, and the
  difference (times a safety factor) is the estimate.
* When the estimate misses the goal, ``kzero.NoConvergence`` is raised and
  no number is returned.

Values and errors are ``decimal.Decimal`` (exact decimal strings, never
binary floats). Energies are in units of Z^2 Ry, so ln k0 does not depend on
Z. Every function releases the GIL while it computes, so Python threads can
call kzero at the same time.

Errors are exceptions with the one-line messages of the command line:
``InvalidInput`` (a ``ValueError``) for bad input, ``NoConvergence`` (a
``RuntimeError``) when the goal is not reached, ``MethodsDisagree`` (a
``RuntimeError``) when the two methods differ beyond their combined error
estimates.
"""

import json as _json
import math as _math
from decimal import Decimal
from fractions import Fraction
from typing import Any, Dict, Iterable, List, Optional, Sequence, Tuple, Union, overload

from . import _kzero
from ._kzero import InvalidInput, MethodsDisagree, NoConvergence
from ._sums import SumRow, Sums
from ._value import Exact, Value, to_rows

__version__: str = _kzero.__version__

# Show the public classes as members of `kzero` (help(), repr, pickling).
Value.__module__ = __name__
Exact.__module__ = __name__
Sums.__module__ = __name__
SumRow.__module__ = __name__

__all__ = [
    "__version__",
    "Exact",
    "InvalidInput",
    "MAX_N",
    "SUM_POWERS",
    "MethodsDisagree",
    "NoConvergence",
    "SumRow",
    "Sums",
    "Value",
    "build_info",
    "ln_k0",
    "oscillator",
    "radial",
    "shift",
    "sums",
    "sweep",
    "table",
    "to_rows",
]

#: The largest principal quantum number n the methods accept (the same
#: range as the command line).
MAX_N: int = _kzero.MAX_N


def _value(d: Dict[str, Any]) -> Value:
    return Value._from_native(d, gauge=d.get("gauge"))


def ln_k0(
    n: int,
    l: int,
    digits: int = 20,
    method: str = "green",
    gauge: Optional[str] = None,
) -> Value:
    """The Bethe logarithm ln k0(n, l) with its estimated absolute error.

    Precision contract: ``digits=D`` asks for an absolute error below 10^-D
    (not a relative error, not significant digits). ``abs_err`` is an
    estimate obtained by refinement, not a rigorous bound; when it misses the
    goal, ``NoConvergence`` is raised and no number is returned.

    Args:
        n: principal quantum number, 1 <= n <= ``kzero.MAX_N``.
        l: orbital angular momentum, 0 <= l < n.
        digits: requested absolute accuracy D (5..=200): |error| < 10^-D.
        method: ``"green"`` (photon-energy integral with the Sturmian
            Coulomb Green's function, the default), ``"spectral"`` (explicit
            sum over the bound and continuum spectrum) or ``"both"`` (both,
            cross-checked: ``value`` is the Green's-function value,
            ``spectral`` the spectral one, ``agreement`` the agreeing
            decimal digits).
        gauge: dipole form of the spectral method: ``"velocity"`` (used
            when none is given), ``"length"`` or ``"acceleration"``. Given
            with ``method="green"``, which has no dipole form, it is refused
            with ``InvalidInput`` (as ``--gauge`` on the command line).

    Returns:
        A :class:`Value`; ``value`` and ``abs_err`` are ``decimal.Decimal``.

    Raises:
        InvalidInput: bad state or setting (message as on the command line).
        NoConvergence: the estimated error stayed above 10^-D.
        MethodsDisagree: with ``method="both"``, the two values differ by
            more than their combined error estimates (where ``kzero state``
            exits 3); the result is attached as ``.value``.
    """
    d = _kzero.ln_k0(n, l, digits, method, gauge)
    v = _value(d)
    message = d.get("disagreement")
    if message is not None:
        e = MethodsDisagree(message)
        e.value = v
        raise e
    return v


StateList = Iterable[Tuple[int, int]]


def _select_l(l: Union[None, int, Sequence[int]]) -> Optional[List[int]]:
    if l is None:
        return None
    if isinstance(l, int):
        return [l]
    return list(l)


Powers = Union[int, Sequence[int]]


@overload
def table(
    states: Optional[StateList] = ...,
    n_min: int = ...,
    n_max: Optional[int] = ...,
    l: Union[None, int, Sequence[int]] = ...,
    digits: int = ...,
    method: str = ...,
    threads: Optional[int] = ...,
    gauge: Optional[str] = ...,
    sums: None = ...,
) -> List[Value]: ...


@overload
def table(
    states: Optional[StateList] = ...,
    n_min: int = ...,
    n_max: Optional[int] = ...,
    l: Union[None, int, Sequence[int]] = ...,
    digits: int = ...,
    method: str = ...,
    threads: Optional[int] = ...,
    gauge: Optional[str] = ...,
    *,
    sums: Union[str, Powers],
    nucleus: Optional[str] = ...,
    z: Optional[int] = ...,
    mass: Union[None, str, int, float] = ...,
) -> List[Sums]: ...


def table(
    states: Optional[StateList] = None,
    n_min: int = 1,
    n_max: Optional[int] = None,
    l: Union[None, int, Sequence[int]] = None,
    digits: int = 20,
    method: str = "green",
    threads: Optional[int] = None,
    gauge: Optional[str] = None,
    sums: Union[None, str, Powers] = None,
    nucleus: Optional[str] = None,
    z: Optional[int] = None,
    mass: Union[None, str, int, float] = None,
) -> Union[List[Value], List[Sums]]:
    """ln k0 (or the dipole sums) for many states, in parallel with the GIL released.

    Give either ``states``, a list of ``(n, l)`` pairs, or a range:
    ``n_min..=n_max`` with every ``l < n``, or only the angular momenta
    ``l`` (an int or a list; each used where ``l < n``), as ``kzero table
    --n-min --n-max --l`` selects them.

    The result is one :class:`Value` per state, sorted by (n, l) with
    duplicates dropped: the order of a finished ``kzero table``, whatever
    the order of ``states`` and the number of threads. Values do not depend
    on ``threads``. Precision contract as in :func:`ln_k0` (absolute error
    below 10^-digits; ``abs_err`` is an estimate, not a bound).

    Ctrl-C (SIGINT) raises ``KeyboardInterrupt`` within a fraction of a
    second: no further state starts, and the states already running finish
    in the background and are dropped.

    With ``sums`` (a power k, a list of powers, or ``"all"``, as ``kzero
    table --sums LIST``), the result is one :class:`Sums` per state instead,
    each the same as :func:`sums` with these arguments (``gauge`` defaults
    to ``"length"`` there; ``nucleus``, ``z``, ``mass`` set the eV unit of
    I(k), default hydrogen) and with the values of the rows of ``kzero
    table --sums``. The precision contract is that of :func:`sums`.

    Args:
        threads: worker threads (default: the number of CPUs).
        method, gauge: as in :func:`ln_k0` (or :func:`sums`).
        sums: the powers k of the dipole sums (each in
            ``kzero.SUM_POWERS``), or ``"all"``; ``None`` (default)
            tabulates ln k0.
        nucleus, z, mass: as in :func:`sums`; only with ``sums``.

    Raises:
        InvalidInput: a bad state or setting (message as on the command
            line).
        NoConvergence: a state missed its goal (``state (n=.., l=..): ...``).
        MethodsDisagree: with ``method="both"``, some states disagree; the
            whole table is attached as ``.values`` and the messages as
            ``.disagreements``.
    """
    if states is not None:
        if n_max is not None or l is not None or n_min != 1:
            raise InvalidInput("give either states or a range (n_min, n_max, l), not both")
        pairs = [(n, ll) for n, ll in states]
        if not pairs:
            raise InvalidInput("no state selected: the list of states is empty")
    else:
        if n_max is None:
            raise InvalidInput("give either states or n_max (a range n_min..=n_max)")
        pairs = _kzero.range_states(n_min, n_max, _select_l(l))
    if sums is not None:
        results = [
            (_sums_result(text), message)
            for text, message in _kzero.sums_table(
                pairs, _table_powers(sums), digits, method, gauge, threads,
                _preset(nucleus), z, _mass_text(mass))
        ]
        return _raise_disagreements([r for r, _ in results],
                                    [m for _, m in results if m is not None])
    if nucleus is not None or z is not None or mass is not None:
        raise InvalidInput("nucleus, z and mass set the eV unit of the dipole sums: "
                           "give them with sums")
    rows = _kzero.table(pairs, digits, method, gauge, threads)
    values = [_value(d) for d in rows]
    return _raise_disagreements(values, [d["disagreement"] for d in rows
                                         if d.get("disagreement")])


def _raise_disagreements(values: List[Any], disagreements: List[str]) -> List[Any]:
    """The values, or MethodsDisagree with them attached."""
    if disagreements:
        e = MethodsDisagree(
            f"{len(disagreements)} state(s) where green and spectral disagree"
        )
        e.values = values
        e.disagreements = disagreements
        raise e
    return values


def _table_powers(sums: Union[str, Powers]) -> Optional[List[int]]:
    """The powers of ``table(sums=...)``: ``None`` for ``"all"``."""
    if isinstance(sums, str):
        if sums.strip() == "all":
            return None
        raise InvalidInput(f"sums: {sums!r} is not a list of powers k "
                           "(give a list such as [-2, 0, 2], or \"all\")")
    return _powers(sums)


def _powers(k: Optional[Powers]) -> Optional[List[int]]:
    if k is None:
        return None
    if isinstance(k, int):
        return [k]
    return list(k)


def _preset(nucleus: Optional[str]) -> Optional[str]:
    # "H" is the engine's default preset: passed as no preset, so that a mass
    # replaces it and another z asks for a mass, as on the command line.
    return None if nucleus == "H" else nucleus


def _sums_result(text: str) -> Sums:
    return Sums(_json.loads(text))


def build_info() -> Dict[str, str]:
    """Version and provenance of this build, with the keys of a table header.

    ``version`` (the package version, also ``kzero.__version__``),
    ``git_revision`` (of the checkout it was built from, ``unknown``
    outside git), ``mpfr`` and ``gmp`` (the linked library versions),
    ``command`` (this process's command line) and ``started_utc`` (now).
    """
    return _kzero.build_info_dict()



def sweep(
    n: int,
    l: int,
    digits: Sequence[int] = (10, 15, 20, 30),
    method: str = "green",
    gauge: Optional[str] = None,
) -> List[Dict[str, Any]]:
    """One state computed from scratch at a ladder of ``digits`` (as ``kzero sweep``).

    Use it to choose settings before a large run: each rung's printed value
    is compared with the most precise rung (the reference, the largest
    ``digits``), itself uncertain by its own estimated error.

    Returns one dict per rung, in increasing digits, with the keys of
    ``kzero sweep --json``: ``digits``, ``ln_k0`` and ``abs_err``
    (``decimal.Decimal``), ``actual_err`` (``Decimal``, ``None`` for the
    reference), ``covered`` (whether the printed error covers the actual
    error plus the reference's estimate; ``None`` for the reference),
    ``bits``, ``nodes``, ``terms``, ``seconds``; and ``value``, the rung as
    a :class:`Value`.

    ``method`` is ``"green"`` or ``"spectral"`` (not ``"both"``).

    Raises:
        InvalidInput: bad state, digits or method (command-line messages).
        NoConvergence: a rung missed its goal.
    """
    rows = _kzero.sweep(n, l, list(digits), method, gauge)
    out = []
    for r in rows:
        v = Value._from_native(r["value"], gauge=None if method == "green" else (gauge or "velocity"))
        out.append({
            "digits": r["digits"],
            "ln_k0": Decimal(r["ln_k0"]),
            "abs_err": Decimal(r["abs_err"]),
            "actual_err": None if r["actual_err"] is None else Decimal(r["actual_err"]),
            "covered": r["covered"],
            "bits": v.bits,
            "nodes": v.nodes,
            "terms": v.terms,
            "seconds": v.seconds,
            "value": v,
        })
    return out


def radial(
    n: int, l: int, n2: int, l2: int, power: int = 1, digits: int = 20
) -> Union[Fraction, Exact]:
    """The exact radial integral <n l| r^power |n2 l2> of hydrogen, in bohr^power.

    Z = 1 (for charge Z the integral scales as Z^-power). The result is
    exact: a ``fractions.Fraction`` when the value is rational (for example
    ``<2s| r |2s> = 6``), otherwise an :class:`Exact` with the exact form as
    text (``c*sqrt(r)``) and the value as a ``Decimal`` with ``digits``
    decimals, rounded to nearest.

    Raises:
        InvalidInput: an invalid state or a divergent integral (messages as
            ``kzero radial``).
    """
    d = _kzero.radial(n, l, n2, l2, power, digits)
    if d["rational"] is not None:
        num, den = d["rational"]
        return Fraction(int(num), int(den))
    return Exact(d["exact"], Decimal(d["value"]), Decimal(d["abs_err"]), d["digits"])


def oscillator(n: int, l: int, n2: int, l2: int) -> Fraction:
    """The exact absorption oscillator strength f(n l -> n2 l2) of hydrogen.

    Non-relativistic, infinite nuclear mass, summed over the final magnetic
    substates and averaged over the initial ones; negative for emission
    (n2 below n). Always rational, returned as a ``fractions.Fraction``:
    ``oscillator(1, 0, 2, 1) == Fraction(2**13, 3**9)``.

    Raises:
        InvalidInput: an invalid state or a transition that is not
            dipole-allowed (messages as ``kzero oscillator``).
    """
    num, den = _kzero.oscillator(n, l, n2, l2)
    return Fraction(int(num), int(den))


_SHIFT_NUMBERS = (
    "z_alpha", "reduced_mass_ratio", "log_l", "unit_mhz", "self_energy_mhz",
    "vacuum_polarization_mhz", "total_mhz", "uncertainty_mhz", "ln_k0_error_mhz",
)


def _j_text(j: Union[str, int, float, Fraction]) -> str:
    if isinstance(j, str):
        return j
    f = Fraction(j)
    return f"{f.numerator}/{f.denominator}" if f.denominator != 1 else str(f.numerator)


def _mass_text(mass: Union[None, str, int, float]) -> Optional[str]:
    if mass is None or isinstance(mass, str):
        return mass
    if isinstance(mass, float) and _math.isinf(mass) and mass > 0:
        return "inf"
    return repr(float(mass))


def shift(
    n: int,
    l: int,
    j: Union[str, int, float, Fraction],
    nucleus: Optional[str] = "H",
    z: Optional[int] = None,
    mass: Union[None, str, int, float] = None,
    radius: Optional[float] = None,
    digits: int = 15,
) -> Dict[str, Any]:
    """The leading one-loop QED shift of a hydrogenic level, term by term.

    A truncated expansion in Z alpha (one-loop self-energy and vacuum
    polarization: A41 L, A40 with ln k0 from the engine, A50, A62, A61, V40,
    V50; CODATA 2018 constants), not a complete bound-state QED evaluation:
    ``uncertainty_mhz`` estimates the size of what is left out (an
    estimate, not a bound). Shifts are E/h in MHz; positive raises the level.

    Args:
        n, l: the level's quantum numbers.
        j: total angular momentum, ``"1/2"``, ``Fraction(3, 2)`` or ``0.5``.
        nucleus: preset ``"H"`` (default), ``"D"`` or ``"He4"``; ``None``
            with ``mass`` for another nucleus.
        z: nuclear charge (default: the preset's, or 1 with ``mass``).
        mass: nuclear mass in electron masses (``float("inf")`` or
            ``"inf"`` for an infinitely heavy nucleus); it replaces the
            default preset, another preset with it is refused.
        radius: rms nuclear charge radius in fm (for the estimate of the
            omitted nuclear-size term; default the preset's).
        digits: digits of ln k0 (default 15, far more than the shifts need).

    Returns:
        A dict with the keys of ``kzero shift --json``: ``level``,
        ``ln_k0`` (``value``/``abs_err`` as ``Decimal``), ``terms`` (one
        dict per term: ``name``, ``order``, ``coefficient``,
        ``multiplier``, ``mass_factor``, ``mhz``, numbers as ``Decimal``),
        ``self_energy_mhz``, ``vacuum_polarization_mhz``, ``total_mhz``,
        ``uncertainty_mhz``, ``omitted`` (``name``, ``estimate_mhz``,
        ``rule``), ``nucleus``, ``constants``, ``note`` and the other
        parameters (numbers as ``Decimal``).

    Raises:
        InvalidInput: a bad level, nucleus, charge, mass or radius
            (messages as ``kzero shift``, keyword names for its options).
        NoConvergence: ln k0 missed its goal.
    """
    # "H" is the engine's default preset: passed as no preset, so that a mass
    # replaces it and another z asks for a mass, as on the command line.
    preset = None if nucleus == "H" else nucleus
    text = _kzero.shift(n, l, _j_text(j), preset, z, _mass_text(mass), radius, digits)
    d = _json.loads(text)
    for key in _SHIFT_NUMBERS:
        d[key] = Decimal(d[key])
    for t in d["terms"]:
        for key in ("coefficient", "multiplier", "mass_factor", "mhz"):
            t[key] = Decimal(t[key])
    for o in d["omitted"]:
        o["estimate_mhz"] = Decimal(o["estimate_mhz"])
    d["ln_k0"]["value"] = Decimal(d["ln_k0"]["value"])
    d["ln_k0"]["abs_err"] = Decimal(d["ln_k0"]["abs_err"])
    return d


#: The powers k that :func:`sums` accepts (for every state), in increasing
#: k: the library's supported range, the same as the command line's.
SUM_POWERS: Tuple[int, ...] = tuple(_kzero.SUM_POWERS)


def sums(
    n: int,
    l: int,
    k: Union[None, int, Sequence[int]] = None,
    digits: int = 20,
    method: str = "green",
    gauge: Optional[str] = None,
    nucleus: Optional[str] = "H",
    z: Optional[int] = None,
    mass: Union[None, str, int, float] = None,
) -> Sums:
    """The logarithmic dipole sums S(k), L(k), ln I(k) of the state (n, l).

    For every dipole-connected state m (bound and continuum, same-n states
    left out), D_m = (E_m - E_n)/(Z^2 Ry) and f_m is the absorption
    oscillator strength (negative for lower states)::

        S(k) = sum_m f_m D_m^k,   L(k) = sum_m f_m D_m^k ln|D_m|,
        ln I(k) = L(k)/S(k),      I(k) = exp(ln I(k)) Z^2 Ry  (in eV)

    S(0) = 1 (Thomas-Reiche-Kuhn), 4 S(-2) is the static dipole
    polarizability in bohr^3/Z^4 (same-n states left out), I(0) is the mean
    excitation energy of the stopping formula, and L(2) = 16 ln k0/(3 n^3).
    The same computation and the same printed digits as ``kzero sums
    --json``.

    Precision contract: ``digits=D`` is an **absolute** goal, |error| <
    10^-D, on every S(k) and every L(k) (not significant digits; S(k) grows
    like n^(3(1-k)) for k < 1). The errors are estimates by refinement, not
    bounds; ln I(k) carries the propagated error (|dL| + |ln I| |dS|)/|S|
    (times 1 + 2 |dS/S|).
    When an estimate misses the goal, ``NoConvergence`` is raised and no
    number is returned. The Green's-function method gives S(k) exactly.

    Args:
        n: principal quantum number, 1 <= n <= ``kzero.MAX_N``.
        l: orbital angular momentum, 0 <= l < n.
        k: a power or a list of powers, each in -4..=2 (``kzero.SUM_POWERS``;
            default: all of them). Rows come in increasing k.
        digits: the absolute goal D (5..=200).
        method: ``"green"`` (default), ``"spectral"`` or ``"both"`` (both,
            cross-checked on every S(k) and L(k)).
        gauge: dipole form of the spectral method: ``"length"`` (used when
            none is given), ``"velocity"`` or ``"acceleration"``; refused
            with ``method="green"``.
        nucleus, z, mass: the nucleus of I(k) in eV, as in :func:`shift`:
            preset ``"H"`` (default), ``"D"`` or ``"He4"``; ``mass`` in
            electron masses (``float("inf")`` or ``"inf"`` for an infinitely
            heavy nucleus) replaces the default preset; ``z`` the charge
            (1..=10). The sums themselves do not depend on the nucleus.

    Returns:
        A :class:`Sums`: ``rows`` of :class:`SumRow` with ``S``, ``S_err``,
        ``L``, ``L_err``, ``ln_I``, ``ln_I_err``, ``I_eV``, ``I_eV_err`` as
        ``decimal.Decimal`` (``None`` where S(k) is zero within its error).

    Raises:
        InvalidInput: a bad state, power, digits, method, gauge or nucleus
            (messages as ``kzero sums``, keyword names for its options).
        NoConvergence: an estimate stayed above 10^-D.
        MethodsDisagree: with ``method="both"``, some S(k) or L(k) of the
            two methods differ beyond their combined estimates (where
            ``kzero sums`` exits 3); the result is attached as ``.value``.
    """
    text, message = _kzero.sums(n, l, _powers(k), digits, method, gauge, _preset(nucleus),
                                z, _mass_text(mass))
    result = _sums_result(text)
    if message is not None:
        e = MethodsDisagree(message)
        e.value = result
        raise e
    return result
