"""kzero: hydrogenic Bethe logarithms ln k0(n, l) at any requested precision.

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

from . import _kzero
from ._kzero import InvalidInput, MethodsDisagree, NoConvergence
from ._value import Value, to_rows

__version__: str = _kzero.__version__

# Show the public classes as members of `kzero` (help(), repr, pickling).
Value.__module__ = __name__

__all__ = [
    "__version__",
    "InvalidInput",
    "MethodsDisagree",
    "NoConvergence",
    "Value",
    "ln_k0",
    "to_rows",
]


def ln_k0(
    n: int,
    l: int,
    digits: int = 20,
    method: str = "green",
    gauge: str = "velocity",
) -> Value:
    """The Bethe logarithm ln k0(n, l) with its estimated absolute error.

    Args:
        n: principal quantum number, 1 <= n <= 200.
        l: orbital angular momentum, 0 <= l < n.
        digits: requested absolute accuracy D (5..=200): the goal is
            |error| < 10^-D. This is an absolute error, not significant
            digits.
        method: ``"green"`` (photon-energy integral with the Sturmian
            Coulomb Green's function, the default) or ``"spectral"``
            (explicit sum over the bound and continuum spectrum).
        gauge: dipole form of the spectral method: ``"velocity"``
            (default), ``"length"`` or ``"acceleration"``.

    Returns:
        A :class:`Value`; ``value`` and ``abs_err`` are ``decimal.Decimal``.
        ``abs_err`` is an estimate obtained by refinement, not a rigorous
        bound.

    Raises:
        InvalidInput: bad state or setting (message as on the command line).
        NoConvergence: the estimated error stayed above 10^-D.
    """
    d = _kzero.ln_k0(n, l, digits, method, gauge)
    return Value._from_native(d, gauge=None if method == "green" else gauge)

