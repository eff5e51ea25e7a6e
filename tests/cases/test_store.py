"""A run that stops resumes from its finished chunks and recomputes none of them; the chunk
files are whole or absent; the published table is the one of an uninterrupted run."""

import math

import pandas as pd
import pytest

import derivpad
from derivpad.cases.store import StoredTable
from derivpad.cases import run

PULSE = "m*x'' + k*x = F0*(u(t) - u(t - td))"
ZERO = {"x(0)": 0, "x'(0)": 0}
PARAMS = {"m": "1 kg", "k": f"{4 * math.pi ** 2!r} N/m", "F0": "1 N"}
LIMIT = ["dynamic_load_factor <= 1.9"]


def test_a_stopped_run_resumes_without_recomputing_a_finished_chunk(tmp_path, monkeypatch):
    monkeypatch.setattr(run, "CHUNK", 3)  # 4 chunks of 3 cases
    grid = derivpad.case_grid({"td [ms]": [100, 200, 300, 400, 500, 600],
                               "m [kg]": [0.9, 1.1]})
    reference = derivpad.load_cases(PULSE, ZERO, PARAMS, cases=grid, criteria=LIMIT)
    computed = []
    real = run.evaluate_chunk

    def crashing(spec, ids, *rest):
        if len(computed) == 2:
            raise RuntimeError("the machine stops")
        computed.append(tuple(ids))
        return real(spec, ids, *rest)

    monkeypatch.setattr(run, "evaluate_chunk", crashing)
    with pytest.raises(RuntimeError):
        derivpad.load_cases(PULSE, ZERO, PARAMS, cases=grid, criteria=LIMIT,
                            store=tmp_path / "run")
    assert len(list((tmp_path / "run" / ".chunks").glob("*.parquet"))) == 2
    assert not (tmp_path / "run" / "cases.parquet").exists()
    first = list(computed)
    computed.clear()
    monkeypatch.setattr(run, "evaluate_chunk", lambda *a: (computed.append(tuple(a[1])),
                                                           real(*a))[1])
    resumed = derivpad.load_cases(PULSE, ZERO, PARAMS, cases=grid, criteria=LIMIT,
                            store=tmp_path / "run")
    assert len(computed) == 2 and not set(computed) & set(first)
    # the rows stay in the store until asked for, and then equal the run held in memory
    assert isinstance(resumed.rows, StoredTable) and resumed.rows._frame is None
    assert resumed.cases == len(reference.table)
    pd.testing.assert_frame_equal(resumed.table, reference.table)
    pd.testing.assert_frame_equal(resumed.envelope, reference.envelope)
    published = pd.read_parquet(tmp_path / "run" / "cases.parquet")
    pd.testing.assert_frame_equal(published, reference.table)
    assert pd.read_csv(tmp_path / "run" / "envelope.csv")["result"].tolist() == \
        reference.envelope["result"].tolist()
    assert [p.name for p in (tmp_path / "run").iterdir() if p.name.startswith(".cases")] == []
    # a different problem never reads these chunks
    computed.clear()
    derivpad.load_cases(PULSE, ZERO, dict(PARAMS, F0="2 N"), cases=grid, criteria=LIMIT,
                        store=tmp_path / "run")
    assert len(computed) == 4


def test_a_store_that_is_a_file_is_refused(tmp_path):
    (tmp_path / "f").write_text("")
    with pytest.raises(derivpad.ExportError, match="give a folder"):
        derivpad.load_cases(PULSE, ZERO, PARAMS, cases=pd.DataFrame({"td [s]": [0.2]}),
                            store=tmp_path / "f")
