"""The same chunks on Dask: a LocalCluster of two worker processes, and Dask's process
scheduler, give the table of the run in this process (reference: that run, itself checked
against the rectangular-pulse load factor in test_run.py)."""

import math

import pandas as pd
import pytest

import derivpad

distributed = pytest.importorskip("distributed")

PULSE = "m*x'' + k*x = F0*(u(t) - u(t - td))"
ZERO = {"x(0)": 0, "x'(0)": 0}
PARAMS = {"m": "1 kg", "k": f"{4 * math.pi ** 2!r} N/m", "F0": "1 N"}


@pytest.fixture(scope="module")
def grid():
    # more than one chunk (CHUNK = 500 would make one; the chunk size is lowered below)
    return derivpad.case_grid({"td [ms]": [50, 150, 250, 350, 450, 550, 700, 900],
                               "m [kg]": [0.85, 1.0, 1.15]})


def _run(grid, **options):
    return derivpad.load_cases(PULSE, ZERO, PARAMS, cases=grid,
                               criteria=["dynamic_load_factor <= 1.9"], **options)


def test_a_local_cluster_gives_the_same_table(grid, monkeypatch):
    from derivpad.cases import run
    monkeypatch.setattr(run, "CHUNK", 5)
    here = _run(grid)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        there = _run(grid, scheduler=client)
    pd.testing.assert_frame_equal(here.table, there.table)
    pd.testing.assert_frame_equal(here.envelope, there.envelope)


def test_dask_process_scheduler_gives_the_same_table(grid, monkeypatch):
    from derivpad.cases import run
    monkeypatch.setattr(run, "CHUNK", 8)
    pd.testing.assert_frame_equal(_run(grid).table, _run(grid, scheduler="processes").table)


def test_local_worker_processes_give_the_same_table_over_arrays(monkeypatch):
    """workers=2 (a pool of two processes) with a damped mount, whose cases are evaluated over
    arrays: the table and envelope of the run in this process."""
    from derivpad.cases import run
    monkeypatch.setattr(run, "CHUNK", 30)
    cases = derivpad.case_sample(120, seed=4, **{"td [ms]": ("uniform", 50, 900),
                                                 "c [N*s/m]": ("uniform", 0.5, 20)})
    args = ("m*x'' + c*x' + k*x = F0*(u(t) - u(t - td))", ZERO, PARAMS)
    here = derivpad.load_cases(*args, cases=cases, criteria=["peak <= 50 mm"])
    there = derivpad.load_cases(*args, cases=cases, criteria=["peak <= 50 mm"], workers=2)
    pd.testing.assert_frame_equal(here.table, there.table)
    pd.testing.assert_frame_equal(here.envelope, there.envelope)


@pytest.mark.parametrize("workers, scheduler, match", [
    (0, None, "whole number"), (1.5, None, "whole number"),
    (2, "tcp://127.0.0.1:1", "has its own workers")])
def test_bad_worker_counts_are_refused(grid, workers, scheduler, match):
    with pytest.raises(derivpad.ParameterError, match=match):
        _run(grid, workers=workers, scheduler=scheduler)


def test_a_script_without_a_main_guard_gets_a_worker_error_saying_the_fix(tmp_path):
    """Worker processes start by importing the calling script: one that calls load_cases at
    its top level cannot start them; the run stops with WorkerError naming the fix (no
    hang, no bare BrokenProcessPool)."""
    import subprocess
    import sys
    script = tmp_path / "calc.py"
    script.write_text(
        "import pandas as pd\nimport derivpad\n"
        "derivpad.load_cases(\"m*x'' + k*x = F0*(u(t) - u(t - td))\", {'x(0)': 0, \"x'(0)\": 0},"
        " {'m': '1 kg', 'k': '40 N/m', 'F0': '1 N'},"
        " cases=pd.DataFrame({'td [ms]': [100, 200, 300]}), workers=1)\n")
    done = subprocess.run([sys.executable, str(script)], capture_output=True, text=True,
                          timeout=300, cwd=tmp_path)
    assert done.returncode != 0
    assert "WorkerError" in done.stderr and "if __name__ == " in done.stderr
