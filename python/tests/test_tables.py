"""Tables of a result: NumPy columns, records as the binary's JSON, DataFrames when pandas is
installed. Structural checks (common practice, no source)."""

import numpy as np
import pytest

import eigentherm


def test_table_columns_and_records(good):
    r = eigentherm.levels(good, sector="chain")
    t = r["sectors"][0]["form_factor"]["table"]
    assert isinstance(t, eigentherm.Table)
    assert set(t) >= {"tau", "k", "k_connected"}
    assert all(len(c) == t.rows for c in t.values())
    assert t["tau"].dtype == np.float64
    assert t.records() == eigentherm.to_json(t)
    assert eigentherm.to_json(r)["sectors"][0]["form_factor"]["table"][0]["tau"] == t["tau"][0]


def test_to_frame_with_pandas(good):
    pd = pytest.importorskip("pandas")
    r = eigentherm.levels(good)
    df = r["sectors"][0]["ratio_histogram"].to_frame()
    assert isinstance(df, pd.DataFrame) and len(df) == 20
    summary = eigentherm.to_frame(r["sectors"])
    assert list(summary["name"]) == [s["name"] for s in r["sectors"]]
    assert np.array_equal(summary["mean_r"].to_numpy(), np.array([s["mean_r"] for s in r["sectors"]]))
