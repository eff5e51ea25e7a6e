"""The case table (cases/table.py): numbered case names made when asked for, and a table
read into one array (facts of the format, common practice, no source)."""

import numpy as np
import pandas as pd

from derivpad.cases.table import NumberedIds, read_cases


def test_numbered_case_names_slice_and_find_like_a_list_of_strings():
    ids = NumberedIds(10_000_000)
    assert len(ids) == 10_000_000 and ids[0] == "1" and ids[-1] == "10000000"
    part = ids[4000:8000]
    assert isinstance(part, NumberedIds) and len(part) == 4000
    assert part[0] == "4001" and list(part)[-1] == "8000" and part == ids[4000:8000]
    assert ids[10:16:2] == ["11", "13", "15"]
    assert ids.position("4001") == 4000 and part.position("4001") == 0
    assert ids.position("0") is None and ids.position("007") is None
    assert ids.position("x") is None and part.position("1") is None


def test_a_table_without_a_case_column_is_numbered_and_read_into_one_array():
    frame = pd.DataFrame({"m [kg]": [1.0, 2.0, 3.0], "k [N/m]": [10.0, 20.0, 30.0]})
    table = read_cases(frame)
    assert list(table.ids) == ["1", "2", "3"] and table.position("2") == 1
    assert table.names == ("m", "k") and table.units == ("kg", "N/m")
    np.testing.assert_array_equal(table.values, frame.to_numpy())
    named = read_cases(frame.assign(case=["a", "b", "c"]))
    assert named.ids == ("a", "b", "c") and named.position("c") == 2
    assert named.position("d") is None
