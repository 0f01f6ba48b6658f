"""Type stubs of the native module kzero._kzero (built from crates/python).

Use the public functions of ``kzero`` instead: they wrap these and return
``kzero.Value`` objects with ``decimal.Decimal`` fields.
"""

from typing import Any, Dict, List, Optional, Tuple

__version__: str

class InvalidInput(ValueError): ...
class NoConvergence(RuntimeError): ...
class MethodsDisagree(RuntimeError): ...

def ln_k0(n: int, l: int, digits: int, method: str, gauge: str) -> Dict[str, Any]: ...
def table(
    states: List[Tuple[int, int]],
    digits: int,
    method: str,
    gauge: str,
    threads: Optional[int],
) -> List[Dict[str, Any]]: ...
def build_info_dict() -> Dict[str, str]: ...
