"""The fast JSON encoder gives the standard library's bytes; the model pickles and deep-copies."""

from __future__ import annotations

import copy
import json
import pickle
from datetime import date

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.core.model import FrozenDict, frozen_mapping
from forensic.exchange.writers import _json_default, dumps_json


def _reference(obj) -> str:
    # The standard library's encoder (reference): the text dumps_json has always written.
    return json.dumps(obj, default=_json_default, ensure_ascii=False, indent=2, allow_nan=False) + "\n"


_leaf = (st.none() | st.booleans() | st.integers(min_value=-(2**80), max_value=2**80)
         | st.floats(allow_nan=False, allow_infinity=False) | st.text(max_size=8)
         | st.dates(min_value=date(1900, 1, 1), max_value=date(2200, 12, 31)))
_json = st.recursive(_leaf, lambda kids: st.lists(kids, max_size=4) | st.dictionaries(st.text(max_size=5), kids, max_size=4),
                     max_leaves=25)


@settings(max_examples=300, deadline=None)
@given(_json)
def test_dumps_json_matches_the_standard_encoder_byte_for_byte(obj):
    assert dumps_json(obj) == _reference(obj)


@pytest.mark.parametrize("bad", [float("nan"), float("inf"), float("-inf")])
def test_dumps_json_refuses_non_finite_numbers(bad):
    with pytest.raises(ValueError):
        dumps_json({"rows": [[1, bad]]})
    with pytest.raises(ValueError):
        _reference({"rows": [[1, bad]]})


def test_demo_casefile_pickles_and_deep_copies():
    cf = load_casefile(demo_source())
    again = pickle.loads(pickle.dumps(cf))
    assert again == cf and again.snapshots[-1].activities == cf.snapshots[-1].activities
    assert copy.deepcopy(cf) == cf
    assert isinstance(again.calendars, FrozenDict)


def test_frozen_mapping_refuses_every_change():
    m = frozen_mapping({"a": 1})
    for change in (lambda: m.__setitem__("b", 2), lambda: m.__delitem__("a"), m.clear, lambda: m.pop("a"),
                   m.popitem, lambda: m.setdefault("b", 2), lambda: m.update(b=2)):
        with pytest.raises(TypeError, match="immutable"):
            change()
    assert m == {"a": 1} and pickle.loads(pickle.dumps(m)) == m


def test_schedule_result_pickles_and_deep_copies():
    """A ScheduleResult goes to a process pool or a cache: no local closures in the way (issue 20)."""
    from forensic.core.engine import schedule

    cf = load_casefile(demo_source())
    res = schedule(cf.snapshots[-1], cf.calendars, cf.project)
    again = pickle.loads(pickle.dumps(res))
    assert again == res
    assert again.activities["M900"] == res.activities["M900"]
    assert again.longest_paths == res.longest_paths
    assert copy.deepcopy(res).activities["M900"].driving_predecessors == res.activities["M900"].driving_predecessors


@pytest.mark.parametrize("rule", ["apportion", "dominant"])
def test_written_casefile_keeps_its_concurrency_rule(rule, tmp_path):
    """write_casefile then load_casefile round-trips a non-default concurrency rule (nothing is lost)."""
    from dataclasses import replace

    from forensic.casefile.writing import write_casefile

    cf = load_casefile(demo_source())
    cf = replace(cf, project=replace(cf.project, concurrency=rule))
    write_casefile(cf, tmp_path / "out")
    assert load_casefile(tmp_path / "out").project.concurrency == rule
    # The default is not written, so the demo's own manifest keeps its bytes.
    assert "concurrency" not in (demo_source() / "casefile.toml").read_text(encoding="utf-8")
