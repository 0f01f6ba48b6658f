"""The result type of kzero: a Bethe logarithm with its error estimate."""

from decimal import Decimal
from typing import TYPE_CHECKING, Any, Dict, Iterable, List, Optional, Union

if TYPE_CHECKING:
    from ._sums import SumRow, Sums

__all__ = ["Exact", "Value", "to_rows"]


class Value:
    """ln k0(n, l) with its estimated absolute error and how it was computed.

    Precision contract: ``digits=D`` asks for an *absolute* error below
    10^-D in ln k0 (not a relative error, not a count of significant
    digits). ``abs_err`` is an *estimate* of |value - exact| obtained by
    refinement (the computation is repeated with more nodes, terms and bits,
    and the difference times a safety factor is the estimate); it is not a
    rigorous bound. A computation whose estimate misses the goal raises
    ``kzero.NoConvergence`` instead of returning a number.

    Attributes:
        n, l: the state (n >= 1, 0 <= l < n).
        value: ln k0 as an exact ``decimal.Decimal`` with D + 2 decimals
            (energies in units of Z^2 Ry; ln k0 does not depend on Z).
        abs_err: the error estimate as a ``decimal.Decimal`` (two
            significant digits).
        digits: the requested D.
        method: ``"green"``, ``"spectral"`` or ``"both"`` (the method
            setting; with ``"both"`` the Green's-function value is
            ``value`` and the spectral one is ``spectral``).
        gauge: the dipole form of the spectral method (``None`` for
            ``method="green"``).
        bits: working precision of the final evaluation (bits).
        nodes, terms: quadrature nodes and series terms of the final
            evaluation.
        seconds: wall time of the computation (all methods), in seconds.
        spectral: with ``method="both"``, the spectral result as a
            ``Value``; otherwise ``None``.
        agreement: with ``method="both"``, the number of agreeing decimal
            digits after the point of the two values (at most D + 2);
            otherwise ``None``.
        consistent: with ``method="both"``, whether the two values differ by
            at most the sum of their error estimates; otherwise ``None``.

    ``float(v)`` gives the nearest binary float (about 16 significant
    digits); ``v.mpf()`` gives an ``mpmath.mpf`` when mpmath is installed.
    """

    __slots__ = (
        "n",
        "l",
        "value",
        "abs_err",
        "digits",
        "method",
        "gauge",
        "bits",
        "nodes",
        "terms",
        "seconds",
        "spectral",
        "agreement",
        "consistent",
    )

    def __init__(
        self,
        n: int,
        l: int,
        value: Decimal,
        abs_err: Decimal,
        digits: int,
        method: str,
        bits: int,
        seconds: float,
        gauge: Optional[str] = None,
        nodes: int = 0,
        terms: int = 0,
        spectral: "Optional[Value]" = None,
        agreement: Optional[int] = None,
        consistent: Optional[bool] = None,
    ) -> None:
        self.n = n
        self.l = l
        self.value = value
        self.abs_err = abs_err
        self.digits = digits
        self.method = method
        self.gauge = gauge
        self.bits = bits
        self.nodes = nodes
        self.terms = terms
        self.seconds = seconds
        self.spectral = spectral
        self.agreement = agreement
        self.consistent = consistent

    @classmethod
    def _from_native(cls, d: Dict[str, Any], method: Optional[str] = None,
                     gauge: Optional[str] = None) -> "Value":
        """Builds a Value from the plain dict the native module returns."""
        spectral = d.get("spectral")
        return cls(
            n=d["n"],
            l=d["l"],
            value=Decimal(d["value"]),
            abs_err=Decimal(d["abs_err"]),
            digits=d["digits"],
            method=method if method is not None else d["method"],
            gauge=gauge,
            bits=d["bits"],
            nodes=d["nodes"],
            terms=d["terms"],
            seconds=d["seconds"],
            spectral=None if spectral is None else cls._from_native(spectral, gauge=gauge),
            agreement=d.get("agreement"),
            consistent=d.get("consistent"),
        )

    def __float__(self) -> float:
        return float(self.value)

    def mpf(self) -> Any:
        """The value as an ``mpmath.mpf``, exact to the printed decimals.

        The conversion runs at ``max(bits, bits needed for the printed
        decimals)`` bits, so no printed digit is lost. mpmath is optional:
        this raises ``ImportError`` when it is not installed.
        """
        import mpmath  # optional dependency

        text = str(self.value)
        significant = len(text.lstrip("-").replace(".", "").lstrip("0")) or 1
        prec = max(self.bits, int(significant * 3.33) + 16)
        with mpmath.workprec(prec):
            return mpmath.mpf(text)

    def as_dict(self) -> Dict[str, Any]:
        """The value as one plain dict (the keys of the ``--json`` output)."""
        row: Dict[str, Any] = {
            "n": self.n,
            "l": self.l,
            "ln_k0": self.value,
            "abs_err": self.abs_err,
            "digits": self.digits,
            "method": self.method,
            "bits": self.bits,
            "seconds": self.seconds,
            "nodes": self.nodes,
            "terms": self.terms,
        }
        if self.gauge is not None:
            row["gauge"] = self.gauge
        if self.spectral is not None:
            row["ln_k0_spectral"] = self.spectral.value
            row["abs_err_spectral"] = self.spectral.abs_err
            row["agreement_digits"] = self.agreement
            row["consistent"] = self.consistent
        return row

    def __repr__(self) -> str:
        return (
            f"Value(n={self.n}, l={self.l}, value={self.value!r}, "
            f"abs_err={self.abs_err!r}, digits={self.digits}, method={self.method!r})"
        )

    def __str__(self) -> str:
        err = "0" if self.abs_err == 0 else f"{self.abs_err:e}"
        return f"ln k0({self.n},{self.l}) = {self.value} +- {err}"


def to_rows(values: "Iterable[Union[Value, SumRow, Sums]]") -> List[Dict[str, Any]]:
    """Plain dicts, one per value, for ``pandas.DataFrame(kzero.to_rows(vs))``.

    The keys are those of the command line's ``--json`` output: ``n``,
    ``l``, ``ln_k0``, ``abs_err`` (both ``decimal.Decimal``), ``digits``,
    ``method``, ``bits``, ``seconds``, ``nodes``, ``terms``; ``gauge`` when
    the spectral method took part; and with ``method="both"`` also
    ``ln_k0_spectral``, ``abs_err_spectral``, ``agreement_digits`` and
    ``consistent``. pandas is not needed by kzero.

    Given the dipole sums (a ``kzero.Sums``, which iterates over its rows,
    a list of them such as ``kzero.table(..., sums=...)`` returns, or any
    iterable of ``kzero.SumRow``), one dict per state and k with ``n``,
    ``l`` and the keys of a row of ``kzero sums --json``: ``k``, ``S``,
    ``S_err``, ``L``, ``L_err``, ``ln_I``, ``ln_I_err``, ``I_eV``,
    ``I_eV_err``.
    """
    from ._sums import Sums

    rows: List[Dict[str, Any]] = []
    for v in values:
        if isinstance(v, Sums):
            rows.extend(r.as_dict() for r in v)
        else:
            rows.append(v.as_dict())
    return rows


class Exact:
    """An exact irrational number, such as a radial integral ``c*sqrt(r)``.

    Attributes:
        exact: the exact form as text, ``c*sqrt(r)`` with rational ``c`` and
            ``r`` (for example ``559872/15625*sqrt(1/1458)``).
        value: the number as a ``decimal.Decimal`` with ``digits`` decimals,
            rounded to nearest.
        abs_err: the printed error of ``value`` (the rounding), a
            ``Decimal``, below 10^-digits.
        digits: decimals of ``value``.
    """

    __slots__ = ("exact", "value", "abs_err", "digits")

    def __init__(self, exact: str, value: Decimal, abs_err: Decimal, digits: int) -> None:
        self.exact = exact
        self.value = value
        self.abs_err = abs_err
        self.digits = digits

    def __float__(self) -> float:
        return float(self.value)

    def __repr__(self) -> str:
        return f"Exact({self.exact!r}, value={self.value!r})"

    def __str__(self) -> str:
        return f"{self.exact} = {self.value}"
