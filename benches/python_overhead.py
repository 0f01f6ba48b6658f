"""Overhead of the Python package against the same work in the binary.

Not a test: it measures and prints. Run it with the package installed (for
example in the environment `make test` builds) and the binary of the same
build:

    .venv-test/bin/python benches/python_overhead.py --bin target/release/kzero

1. 1,000 calls of ``kzero.ln_k0(1, 0, digits=20)``. The per-call overhead is
   the wall time per call in Python minus the computation time the engine
   itself measures (``Value.seconds``), i.e. the cost of crossing into Rust,
   converting arguments, building the ``Value`` with its ``Decimal`` fields.
   For scale, the same state through the binary (``kzero state 1 0 --digits
   20 --json``, one process per call) is timed too.
2. A 210-state table (n <= 20, every l, 20 digits): ``kzero.table(n_max=20)``
   against ``kzero table --n-max 20 --digits 20 --quiet`` with the same
   number of threads; the difference is the package's overhead for the
   whole table.
"""

import argparse
import os
import statistics
import subprocess
import time

import kzero


def single_calls(calls):
    kzero.ln_k0(1, 0, digits=20)  # warm the caches the engine keeps
    compute = 0.0
    start = time.perf_counter()
    for _ in range(calls):
        v = kzero.ln_k0(1, 0, digits=20)
        compute += v.seconds
    wall = time.perf_counter() - start
    return wall / calls, compute / calls


def binary_calls(binary, calls):
    args = [binary, "state", "1", "0", "--digits", "20", "--json"]
    subprocess.run(args, check=True, capture_output=True)
    times = []
    for _ in range(calls):
        t = time.perf_counter()
        subprocess.run(args, check=True, capture_output=True)
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def tables(binary, threads, repeats):
    py, cli = [], []
    for _ in range(repeats):
        t = time.perf_counter()
        values = kzero.table(n_max=20, digits=20, threads=threads)
        py.append(time.perf_counter() - t)
        assert len(values) == 210
        t = time.perf_counter()
        subprocess.run(
            [binary, "table", "--n-max", "20", "--digits", "20", "--quiet",
             "--threads", str(threads)],
            check=True, capture_output=True,
        )
        cli.append(time.perf_counter() - t)
    return min(py), min(cli)


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--bin", default=os.environ.get("KZERO_BIN", "target/release/kzero"))
    p.add_argument("--calls", type=int, default=1000)
    p.add_argument("--binary-calls", type=int, default=100)
    p.add_argument("--threads", type=int, default=os.cpu_count() or 1)
    p.add_argument("--repeats", type=int, default=3)
    a = p.parse_args()

    info = kzero.build_info()
    print(f"kzero {kzero.__version__} (git {info['git_revision']}), "
          f"{os.cpu_count()} CPUs, {a.threads} threads for the tables")

    per_call, compute = single_calls(a.calls)
    print(f"ln_k0(1, 0, digits=20) x {a.calls}: {per_call * 1e3:.3f} ms per call, "
          f"of which {compute * 1e3:.3f} ms computing; "
          f"overhead {(per_call - compute) * 1e6:.1f} us per call")
    per_process = binary_calls(a.bin, a.binary_calls)
    print(f"binary `kzero state 1 0 --digits 20 --json` (median of {a.binary_calls} "
          f"processes): {per_process * 1e3:.3f} ms per call")

    py, cli = tables(a.bin, a.threads, a.repeats)
    print(f"210-state table (n <= 20, 20 digits), best of {a.repeats}: "
          f"package {py:.3f} s, binary {cli:.3f} s, "
          f"difference {(py - cli) * 1e3:+.1f} ms ({(py - cli) / 210 * 1e6:+.1f} us per state)")


if __name__ == "__main__":
    main()
