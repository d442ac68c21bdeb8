"""``Table.to_pandas()`` gives real dtypes: datetime64 dates, integer days, booleans."""

from __future__ import annotations

from datetime import date
from pathlib import Path

import pandas as pd

from forensic.casefile.reading import load_casefile
from forensic.core.engine import schedule_snapshot
from forensic.core.tables import Table, schedule_table

DEMO = Path(__file__).resolve().parent.parent / "casefiles" / "riverside"


def test_schedule_table_of_the_demo_has_real_dtypes():
    cf = load_casefile(DEMO)
    snap = cf.snapshots[-1]
    result = schedule_snapshot(cf, snap.id)
    table = schedule_table(result, snap)
    df = table.to_pandas()
    assert list(df.columns) == list(table.columns) and len(df) == len(table.rows)
    # Reference: pandas' own dtype predicates.
    assert pd.api.types.is_datetime64_any_dtype(df["early_start"])
    assert pd.api.types.is_datetime64_any_dtype(df["late_finish"])  # finished work has NaT here
    assert str(df["total_float"].dtype) == "Int64" and str(df["free_float"].dtype) == "Int64"
    assert str(df["critical"].dtype) == "boolean"
    # The values are the engine's: the completion milestone's early finish and float.
    row = df[df["id"] == result.completion_id].iloc[0]
    assert row["early_finish"] == pd.Timestamp(result.completion)
    assert row["total_float"] == result.completion_float == 0
    finished = df[df["status"] == "finished"]
    assert len(finished) and finished["total_float"].isna().all() and finished["late_finish"].isna().all()


def test_a_small_table_by_hand():
    t = Table("t", ("id", "day", "days", "share", "ids"),
              (("A", date(2026, 1, 5), 3, 0.5, ("X", "Y")), ("B", None, None, None, ())))
    df = t.to_pandas()
    assert df["day"].tolist()[0] == pd.Timestamp("2026-01-05") and pd.isna(df["day"].tolist()[1])
    assert str(df["days"].dtype) == "Int64" and df["days"].tolist()[0] == 3 and df["days"].isna().tolist() == [False, True]
    assert str(df["share"].dtype) == "float64"
    assert df["ids"].tolist() == [["X", "Y"], []]
