"""Type stubs of the native module kzero._kzero (built from crates/python).

Use the public functions of ``kzero`` instead: they wrap these and return
``kzero.Value`` objects with ``decimal.Decimal`` fields.
"""

from typing import Any, Dict, List, Optional, Tuple

__version__: str
MAX_N: int
SUM_POWERS: Tuple[int, ...]

class InvalidInput(ValueError): ...
class NoConvergence(RuntimeError): ...
class MethodsDisagree(RuntimeError): ...

def ln_k0(n: int, l: int, digits: int, method: str, gauge: Optional[str]) -> Dict[str, Any]: ...
def table(
    states: List[Tuple[int, int]],
    digits: int,
    method: str,
    gauge: Optional[str],
    threads: Optional[int],
) -> List[Dict[str, Any]]: ...
def build_info_dict() -> Dict[str, str]: ...
def range_states(n_min: int, n_max: int, l: Optional[List[int]]) -> List[Tuple[int, int]]: ...
def sweep(n: int, l: int, digits: List[int], method: str, gauge: Optional[str]) -> List[Dict[str, Any]]: ...
def radial(n: int, l: int, n2: int, l2: int, power: int, digits: int) -> Dict[str, Any]: ...
def oscillator(n: int, l: int, n2: int, l2: int) -> Tuple[str, str]: ...
def shift(
    n: int,
    l: int,
    j: str,
    nucleus: Optional[str],
    z: Optional[int],
    mass: Optional[str],
    radius: Optional[float],
    digits: int,
) -> str: ...
def sums(
    n: int,
    l: int,
    k: Optional[List[int]],
    digits: int,
    method: str,
    gauge: Optional[str],
    nucleus: Optional[str],
    z: Optional[int],
    mass: Optional[str],
) -> Tuple[str, Optional[str]]: ...
def sums_table(
    states: List[Tuple[int, int]],
    k: Optional[List[int]],
    digits: int,
    method: str,
    gauge: Optional[str],
    threads: Optional[int],
    nucleus: Optional[str],
    z: Optional[int],
    mass: Optional[str],
) -> List[Tuple[str, Optional[str]]]: ...
