"""Load records read and checked: every bad input named by its row, nothing resampled."""

import numpy as np
import pytest

from derivpad import LoadHistoryError, UnitError, forcing


def test_units_are_converted_to_si_once():
    rec = forcing.history([0, 10, 20], [0, 5, 0], time_unit="ms", unit="kN")
    assert rec.times.tolist() == [0.0, 0.01, 0.02]
    assert rec.values.tolist() == [0.0, 5000.0, 0.0]
    assert rec.unit == "N" and rec.given_unit == "kN"


def test_knots_add_the_start_and_the_drop_and_keep_jumps():
    rec = forcing.history([0.1, 0.2, 0.2, 0.3], [1.0, 2.0, 5.0, 4.0])
    t, f = rec.knots()
    assert t.tolist() == [0.0, 0.1, 0.1, 0.2, 0.2, 0.3, 0.3]
    assert f.tolist() == [0.0, 0.0, 1.0, 2.0, 5.0, 4.0, 0.0]
    assert rec.at([0.15, 0.2, 0.25, 0.4]).tolist() == pytest.approx([1.5, 5.0, 4.5, 0.0])
    held = forcing.history([0, 1], [0, 3], hold_last=True)
    assert held.at([2.0])[0] == 3.0


@pytest.mark.parametrize("times, values, row, words", [
    ([0, 1, 0.5], [0, 1, 2], 2, "must not decrease"),
    ([0, 1, 2], [0, float("nan"), 2], 1, "not a finite number"),
    ([0, 1, 1, 1], [0, 1, 2, 3], 1, "three points"),
    ([-1, 1], [0, 1], 0, "before t = 0"),
])
def test_bad_points_are_named_by_row(times, values, row, words):
    with pytest.raises(LoadHistoryError) as err:
        forcing.history(times, values)
    assert err.value.row == row and words in str(err.value)


def test_too_few_points_and_unequal_columns():
    with pytest.raises(LoadHistoryError, match="at least two points"):
        forcing.history([0.0], [1.0])
    with pytest.raises(LoadHistoryError, match="one value per time"):
        forcing.history([0.0, 1.0], [1.0])


def test_a_time_unit_that_is_not_time():
    with pytest.raises(UnitError, match="not a unit of time"):
        forcing.history([0, 1], [0, 1], time_unit="kN")


def test_csv_with_units_in_the_header(tmp_path):
    path = tmp_path / "record.csv"
    path.write_text("t [ms], P [kPa]\n0, 0\n5, 12.5\n10, 0\n")
    rec = forcing.read_history(path)
    assert rec.times.tolist() == [0.0, 0.005, 0.01]
    assert rec.values.tolist() == [0.0, 12500.0, 0.0]
    assert "record.csv" in rec.source


def test_csv_bad_line_is_named_by_its_line_number(tmp_path):
    path = tmp_path / "record.csv"
    path.write_text("t [s],F [N]\n0,0\n0.1,oops\n0.2,0\n")
    with pytest.raises(LoadHistoryError) as err:
        forcing.read_history(path)
    assert err.value.row == 3 and "'oops'" in str(err.value)


def test_csv_column_chosen_by_name_and_missing_column(tmp_path):
    path = tmp_path / "record.txt"
    path.write_text("time(s) a(N) b(N)\n0 1 2\n1 3 4\n")
    rec = forcing.read_history(path, time="time", value="b")
    assert rec.values.tolist() == [2.0, 4.0]
    with pytest.raises(LoadHistoryError, match="no column named 'c'"):
        forcing.read_history(path, value="c")


def test_pandas_table():
    pd = pytest.importorskip("pandas")
    frame = pd.DataFrame({"t [s]": [0.0, 0.5, 1.0], "F [kN]": [0.0, 2.0, 0.0]})
    rec = forcing.history(frame)
    assert rec.values.tolist() == [0.0, 2000.0, 0.0]
    assert np.array_equal(forcing.history(frame["t [s]"], frame["F [kN]"], unit="kN").values,
                          rec.values)
