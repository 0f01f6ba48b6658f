"""The result types of kzero.sums: the logarithmic dipole sums of one state."""

from decimal import Decimal
from typing import Any, Dict, Iterator, List, Optional

__all__ = ["SumRow", "Sums"]


def _decimal(text: Optional[str]) -> Optional[Decimal]:
    return None if text is None else Decimal(text)


def _err(e: Optional[Decimal]) -> str:
    return "0" if not e else f"{e:e}"


class SumRow:
    """S(k), L(k), ln I(k) and I(k) of one state for one power k.

    Energies are in units of Z^2 Ry (the values do not depend on Z); I(k) is
    in eV for the nucleus of the call. Every number is a ``decimal.Decimal``
    with the digits the command line prints (``kzero sums --json``); each
    ``*_err`` is the printed error estimate of the value before it, with
    the rounding of the printed decimal folded in and rounded up.

    Attributes:
        n, l: the state.
        k: the power k.
        S, S_err: S(k) = sum_m f_m D_m^k with D + 2 decimals.
        L, L_err: L(k) = sum_m f_m D_m^k ln|D_m| with D + 2 decimals.
        ln_I, ln_I_err: ln I(k) = L(k)/S(k) with D + 2 decimals and the
            propagated error (|dL| + |ln I| |dS|)/|S| (times
            1 + 2 |dS/S|); ``None``
            where S(k) is zero within its error (S(2) for l >= 1).
        I_eV, I_eV_err: I(k) = exp(ln I(k)) Z^2 Ry in eV (reduced-mass
            Rydberg energy of the nucleus, CODATA 2018), with decimals down
            to its error, which includes the uncertainty of the Rydberg
            energy; ``None`` where ``ln_I`` is.
    """

    __slots__ = (
        "n", "l", "k", "S", "S_err", "L", "L_err",
        "ln_I", "ln_I_err", "I_eV", "I_eV_err",
    )

    def __init__(self, n: int, l: int, k: int, S: Decimal, S_err: Decimal,
                 L: Decimal, L_err: Decimal, ln_I: Optional[Decimal] = None,
                 ln_I_err: Optional[Decimal] = None, I_eV: Optional[Decimal] = None,
                 I_eV_err: Optional[Decimal] = None) -> None:
        self.n = n
        self.l = l
        self.k = k
        self.S = S
        self.S_err = S_err
        self.L = L
        self.L_err = L_err
        self.ln_I = ln_I
        self.ln_I_err = ln_I_err
        self.I_eV = I_eV
        self.I_eV_err = I_eV_err

    @classmethod
    def _from_json(cls, n: int, l: int, r: Dict[str, Any]) -> "SumRow":
        return cls(
            n=n,
            l=l,
            k=r["k"],
            S=Decimal(r["S"]),
            S_err=Decimal(r["S_err"]),
            L=Decimal(r["L"]),
            L_err=Decimal(r["L_err"]),
            ln_I=_decimal(r["ln_I"]),
            ln_I_err=_decimal(r["ln_I_err"]),
            I_eV=_decimal(r["I_eV"]),
            I_eV_err=_decimal(r["I_eV_err"]),
        )

    def as_dict(self) -> Dict[str, Any]:
        """The row as one plain dict: ``n``, ``l`` and the keys of a row of
        ``kzero sums --json`` (values as ``Decimal`` or ``None``)."""
        return {name: getattr(self, name) for name in self.__slots__}

    def __repr__(self) -> str:
        return (f"SumRow(n={self.n}, l={self.l}, k={self.k}, S={self.S!r}, "
                f"L={self.L!r}, ln_I={self.ln_I!r})")

    def __str__(self) -> str:
        text = (f"k = {self.k}: S = {self.S:f} +- {_err(self.S_err)}, "
                f"L = {self.L:f} +- {_err(self.L_err)}")
        if self.ln_I is None:
            return text + ", ln I not defined (S is zero within its error)"
        text += f", ln I = {self.ln_I:f} +- {_err(self.ln_I_err)}"
        if self.I_eV is not None:
            text += f", I = {self.I_eV} eV +- {_err(self.I_eV_err)}"
        return text


class Sums:
    """The logarithmic dipole sums of one state for a list of powers k.

    Precision contract (as ``kzero sums --digits D``): ``digits=D`` is an
    **absolute** goal, |error| < 10^-D, on every S(k) and every L(k); the
    errors are estimates by refinement, not bounds; ln I(k) carries the
    propagated error of L and S (so it may exceed 10^-D where |S(k)| < 1).

    Iterating gives the rows (:class:`SumRow`) in increasing k; ``s[k]``
    (or ``s.row(k)``) is the row of power k. ``kzero.to_rows(s)`` gives
    plain dicts for ``pandas.DataFrame``.

    Attributes:
        n, l: the state.
        digits: the requested D.
        method: ``"green"``, ``"spectral"`` or ``"both"``; with ``"both"``
            ``rows`` are the Green's-function values, ``rows_spectral`` the
            spectral ones.
        gauge: the dipole form of the spectral method (``None`` for
            ``method="green"``).
        nucleus, z: the nucleus of I(k) in eV and its charge.
        energy_unit_eV, energy_unit_eV_err: Z^2 Ry of the nucleus in eV
            (12 decimals) and its printed error (the uncertainty of the
            CODATA 2018 Rydberg energy and the rounding).
        rows: one :class:`SumRow` per k, in increasing k.
        rows_spectral: with ``method="both"``, the spectral rows; else
            ``None``.
        consistent: with ``method="both"``, whether every S(k) and L(k) of
            the two methods agree within their combined estimates; else
            ``None``.
        bits, nodes: working precision and quadrature nodes of the final
            evaluation (of the Green's function when it ran).
        seconds: wall time of the computation (all methods), in seconds.
    """

    __slots__ = (
        "n", "l", "digits", "method", "gauge", "nucleus", "z", "energy_unit_eV",
        "energy_unit_eV_err", "rows", "rows_spectral", "consistent", "bits", "nodes", "seconds",
    )

    def __init__(self, d: Dict[str, Any]) -> None:
        """Builds the result from the object of ``kzero sums --json``."""
        self.n: int = d["n"]
        self.l: int = d["l"]
        self.digits: int = d["digits"]
        self.method: str = d["method"]
        self.gauge: Optional[str] = d.get("gauge")
        self.nucleus: str = d["nucleus"]
        self.z: int = d["z"]
        self.energy_unit_eV = Decimal(d["energy_unit_eV"])
        self.energy_unit_eV_err = Decimal(d["energy_unit_eV_err"])
        self.rows: List[SumRow] = [SumRow._from_json(self.n, self.l, r) for r in d["rows"]]
        spectral = d.get("rows_spectral")
        self.rows_spectral: Optional[List[SumRow]] = (
            None if spectral is None
            else [SumRow._from_json(self.n, self.l, r) for r in spectral]
        )
        self.consistent: Optional[bool] = d.get("consistent")
        self.bits: int = d["bits"]
        self.nodes: int = d["nodes"]
        self.seconds: float = float(d["seconds"])

    def row(self, k: int) -> SumRow:
        """The row of power ``k``; ``KeyError`` if k was not requested."""
        for r in self.rows:
            if r.k == k:
                return r
        raise KeyError(f"k = {k} was not requested (computed: {[r.k for r in self.rows]})")

    def __getitem__(self, k: int) -> SumRow:
        return self.row(k)

    def __iter__(self) -> Iterator[SumRow]:
        return iter(self.rows)

    def __len__(self) -> int:
        return len(self.rows)

    def __repr__(self) -> str:
        return (f"Sums(n={self.n}, l={self.l}, k={[r.k for r in self.rows]}, "
                f"digits={self.digits}, method={self.method!r})")

    def __str__(self) -> str:
        head = (f"Dipole sums of ({self.n},{self.l}) in units of Z^2 Ry, goal 1e-{self.digits} "
                f"on every S(k), L(k); I(k) in eV for {self.nucleus} (Z = {self.z})")
        return "\n".join([head] + [str(r) for r in self.rows])
