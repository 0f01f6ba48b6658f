"""kzero.table and to_rows: order, agreement with the binary, threads, Ctrl-C."""

import json
import os
import signal
import subprocess
import threading
import time
from decimal import Decimal

import pytest

import kzero

STABLE_KEYS = ["n", "l", "ln_k0", "abs_err", "digits", "method", "bits", "nodes", "terms"]


def stable(rows):
    """Rows without the wall time (the only field that varies between runs)."""
    return [{k: r[k] for k in STABLE_KEYS} for r in rows]


def test_range_table_matches_the_binary_json(kzero_bin):
    out = subprocess.run(
        [kzero_bin, "table", "--n-max", "5", "--n-min", "2", "--digits", "25",
         "--json", "--quiet", "--threads", "2"],
        check=True, capture_output=True, text=True,
    ).stdout
    cli = json.loads(out)["rows"]
    values = kzero.table(n_min=2, n_max=5, digits=25, threads=2)
    rows = kzero.to_rows(values)
    assert [(r["n"], r["l"]) for r in rows] == [(r["n"], r["l"]) for r in cli]
    for mine, theirs in zip(rows, cli):
        assert mine["ln_k0"].as_tuple() == Decimal(theirs["ln_k0"]).as_tuple()
        assert mine["abs_err"].as_tuple() == Decimal(theirs["abs_err"]).as_tuple()
        for key in ["digits", "method", "bits"]:
            assert mine[key] == theirs[key], key


def test_explicit_states_come_sorted_and_once():
    values = kzero.table(states=[(3, 1), (1, 0), (2, 1), (3, 1)], digits=12)
    assert [(v.n, v.l) for v in values] == [(1, 0), (2, 1), (3, 1)]
    single = kzero.ln_k0(2, 1, digits=12)
    assert values[1].value == single.value and values[1].abs_err == single.abs_err


def test_l_selection():
    values = kzero.table(n_max=4, l=[0, 2], digits=10)
    assert [(v.n, v.l) for v in values] == [(1, 0), (2, 0), (3, 0), (3, 2), (4, 0), (4, 2)]
    assert [(v.n, v.l) for v in kzero.table(n_max=3, l=1, digits=10)] == [(2, 1), (3, 1)]


def test_results_do_not_depend_on_threads():
    one = stable(kzero.to_rows(kzero.table(n_max=6, digits=20, threads=1)))
    two = stable(kzero.to_rows(kzero.table(n_max=6, digits=20, threads=2)))
    assert one == two


def test_four_python_threads_at_once_give_the_serial_results():
    states = [(n, l) for n in range(1, 7) for l in range(n)]
    serial = {s: stable(kzero.to_rows([kzero.ln_k0(*s, digits=25)]))[0] for s in states}
    got = {}
    errors = []
    barrier = threading.Barrier(4)

    def worker(k):
        try:
            barrier.wait()
            for s in states[k::4]:
                got[s] = stable(kzero.to_rows([kzero.ln_k0(*s, digits=25)]))[0]
            # and a small table per thread, at the same time
            got[("table", k)] = stable(kzero.to_rows(kzero.table(n_max=3, digits=25, threads=1)))
        except Exception as e:  # reported below
            errors.append(e)

    threads = [threading.Thread(target=worker, args=(k,)) for k in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert not errors, errors
    for s in states:
        assert got[s] == serial[s], s
    expected_table = [serial[(n, l)] for n in range(1, 4) for l in range(n)]
    for k in range(4):
        assert got[("table", k)] == expected_table


def test_the_interpreter_runs_while_kzero_computes():
    # With the GIL held for the whole computation, this thread could not run
    # a single Python statement until the table is done.
    done = threading.Event()
    result = []

    def compute():
        try:
            result.append(kzero.table(n_max=8, digits=25, threads=1))
        finally:
            done.set()

    t = threading.Thread(target=compute)
    t.start()
    ticks = 0
    while not done.is_set():
        ticks += 1
        time.sleep(0.001)
    t.join()
    assert len(result[0]) == 36
    assert ticks > 20, ticks


def test_ctrl_c_interrupts_a_long_table():
    # A table that takes minutes; SIGINT arrives after 0.5 s, as from Ctrl-C.
    timer = threading.Timer(0.5, os.kill, args=(os.getpid(), signal.SIGINT))
    start = time.monotonic()
    timer.start()
    try:
        with pytest.raises(KeyboardInterrupt):
            kzero.table(n_min=100, n_max=200, l=0, digits=40, threads=1)
    finally:
        timer.cancel()
    elapsed = time.monotonic() - start
    # Generous bound: the table itself would take many minutes.
    assert elapsed < 10, elapsed


def test_to_rows_gives_plain_dicts():
    rows = kzero.to_rows(kzero.table(n_max=2, digits=10))
    assert rows[0]["n"] == 1 and rows[0]["l"] == 0
    assert isinstance(rows[0]["ln_k0"], Decimal) and isinstance(rows[0]["abs_err"], Decimal)
    assert all(type(r) is dict for r in rows)


def cli_table_error(kzero_bin, args):
    """The message of `kzero table ARGS` (exit 2), with the option names as
    the package's keyword names."""
    p = subprocess.run([kzero_bin, "table", *args], capture_output=True, text=True)
    assert p.returncode == 2, (args, p.stderr)
    msg = p.stderr.strip().removeprefix("kzero: ").removesuffix(" (see kzero --help)")
    for option, keyword in [("'--digits <D>'", "'digits'"), ("'--threads <T>'", "'threads'"),
                            ("--n-max", "n_max"), ("--n-min", "n_min"), ("--l ", "l ")]:
        msg = msg.replace(option, keyword)
    return msg


@pytest.mark.parametrize(
    "kwargs,args",
    [
        (dict(n_max=0), ["--n-max", "0"]),
        (dict(n_max=10**6), ["--n-max", str(10**6)]),
        (dict(n_min=5, n_max=3), ["--n-min", "5", "--n-max", "3"]),
        (dict(n_max=3, l=-1), ["--n-max", "3", "--l=-1"]),
        (dict(n_max=3, l=[7, 9]), ["--n-max", "3", "--l", "7,9"]),
        (dict(n_max=2, digits=3), ["--n-max", "2", "--digits", "3"]),
        (dict(n_max=2, threads=0), ["--n-max", "2", "--threads", "0"]),
    ],
)
def test_bad_table_requests_raise_invalid_input_with_the_cli_message(kzero_bin, kwargs, args):
    assert kzero.MAX_N < 10**6  # else n_max=10**6 would compute a table
    expected = cli_table_error(kzero_bin, args)
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.table(**kwargs)
    assert str(e.value) == expected


def test_a_bad_explicit_state_is_refused_before_any_work(kzero_bin):
    p = subprocess.run([kzero_bin, "state", "2", "2"], capture_output=True, text=True)
    with pytest.raises(kzero.InvalidInput) as e:
        kzero.table(states=[(1, 0), (2, 2)])
    assert str(e.value) == p.stderr.strip().removeprefix("kzero: ")
