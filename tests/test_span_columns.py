"""The span check's columns, read from the records at once, follow the per-activity rule of remaining work."""

from __future__ import annotations

import numpy as np

from forensic.casefile.span import _span_columns, _work
from forensic.casefile.synthetic import generate_casefile
from forensic.core.model import Activity


def test_work_column_follows_the_rule_of_each_activity():
    cf = generate_casefile(300, updates=3, seed=4)
    acts = [a for s in cf.snapshots for a in s.activities.values()]
    acts += [Activity("S", "s", 4, "task", 2, actual_start=cf.snapshots[-1].data_date),  # in progress
             Activity("Z", "z", 0, "task", None, actual_start=cf.snapshots[-1].data_date),  # started, no work
             Activity("M", "m", 0, "opening-milestone", None, actual_start=cf.snapshots[-1].data_date)]
    calendar, started, kind, work = _span_columns(acts)
    expected = [-1 if _work(a) is None else _work(a) for a in acts]
    assert work.tolist() == expected
    assert -1 in expected and any(w > 0 for w in expected) and 0 in expected
    assert started.tolist() == [a.actual_start is not None for a in acts]
    assert list(calendar) == [a.calendar for a in acts]
    assert (kind == "opening-milestone").tolist() == [a.kind == "opening-milestone" for a in acts]
    assert work.dtype == np.int64
