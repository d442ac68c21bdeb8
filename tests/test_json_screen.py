"""The level-by-level float screen of dumps_json refuses what the value-by-value walk refused, with its words."""

from __future__ import annotations

import json
import math
from collections import OrderedDict
from datetime import date

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.exchange.writers import _json_default, _plain_floats, dumps_json


def _walk(obj) -> bool:
    """The screen as a plain depth-first walk, one value at a time (the reference)."""
    plain = True
    stack = [obj]
    while stack:
        v = stack.pop()
        t = type(v)
        if t is float:
            if not math.isfinite(v):
                raise ValueError(f"cannot write {v!r} as JSON (not a finite number)")
            if v and not 1e-4 <= abs(v) < 1e16:
                plain = False
        elif isinstance(v, dict):
            stack.extend(v.values())
        elif t is list or t is tuple:
            stack.extend(v)
    return plain


def _outcome(screen, obj):
    try:
        return ("ok", screen(obj))
    except ValueError as exc:
        return ("refused", str(exc))


_leaf = (st.none() | st.booleans() | st.integers(min_value=-(2**70), max_value=2**70)
         | st.floats() | st.sampled_from([1e-5, 1e16, -2.5e-7, 0.0, -0.0, 1e-4, 9.9e15])
         | st.text(max_size=4) | st.dates())
_nested = st.recursive(
    _leaf,
    lambda kids: st.lists(kids, max_size=4) | st.lists(kids, max_size=3).map(tuple)
    | st.dictionaries(st.text(max_size=3), kids, max_size=4),
    max_leaves=30)


@settings(max_examples=400, deadline=None)
@given(_nested)
def test_screen_agrees_with_the_walk(obj):
    assert _outcome(_plain_floats, obj) == _outcome(_walk, obj)


@settings(max_examples=200, deadline=None)
@given(_nested)
def test_dumps_json_writes_the_standard_text_or_refuses(obj):
    reference = _outcome(lambda o: json.dumps(o, default=_json_default, ensure_ascii=False, indent=2,
                                              allow_nan=False) + "\n", obj)
    got = _outcome(dumps_json, obj)
    assert got[0] == reference[0]
    if got[0] == "ok":
        assert got == reference


@pytest.mark.parametrize("bad", [math.nan, math.inf, -math.inf])
def test_a_non_finite_number_deep_in_a_large_document_is_refused(bad):
    rows = [{"id": f"A{i}", "day": date(2027, 1, 1), "float": i, "tags": ["x", i * 0.5]} for i in range(5000)]
    rows[3217]["tags"].append((1, {"deep": [bad]}))
    with pytest.raises(ValueError, match="not a finite number") as caught:
        dumps_json({"rows": rows})
    assert repr(bad) in str(caught.value)


def test_the_first_non_finite_number_of_the_walk_is_the_one_named():
    doc = {"a": [math.inf, 1.0], "b": {"c": -math.inf}, "d": (math.nan,)}
    with pytest.raises(ValueError) as caught:
        dumps_json(doc)
    with pytest.raises(ValueError) as expected:
        _walk(doc)
    assert str(caught.value) == str(expected.value)


def test_dict_subclasses_are_screened_and_float_subclasses_are_left_to_the_encoder():
    assert _outcome(_plain_floats, OrderedDict(x=[math.nan]))[0] == "refused"

    class Ratio(float):
        pass

    assert _plain_floats([Ratio(math.nan)]) is True  # not a float itself: as the walk, left to the encoder
    with pytest.raises(ValueError):
        dumps_json([Ratio(math.nan)])  # the standard encoder refuses it


def test_exponent_floats_are_not_plain_anywhere():
    assert _plain_floats({"a": [[{"b": 1e-5}]]}) is False
    assert _plain_floats({"a": [[{"b": 1e16}]]}) is False
    assert _plain_floats({"a": [[{"b": 0.0, "c": 1e-4, "d": -9.9e15}]]}) is True
    assert dumps_json({"a": [1e-5, 1e16]}) == '{\n  "a": [\n    1e-05,\n    1e+16\n  ]\n}\n'


@pytest.mark.parametrize("rows", [
    [{"a": 1, "b": "x"}, {"a": 2, "b": [0.5, {"c": math.nan}]}],  # one size: cut into columns
    [{"a": 1}, {"a": 2, "b": (math.inf,)}],  # two sizes
    [{"a": 1, "b": 2}, {"c": [-math.inf], "d": None}],  # one size, other keys
    [{"a": 1, "b": 2}, ["x", {"z": [math.nan]}]],  # dicts and lists side by side
])
def test_rows_of_dicts_of_one_size_or_many_are_screened_alike(rows):
    assert _outcome(_plain_floats, {"rows": rows}) == _outcome(_walk, {"rows": rows})
    assert _outcome(_plain_floats, {"rows": rows})[0] == "refused"
    clean = {"rows": [{k: 1.5 for k in r} if isinstance(r, dict) else r[:1] for r in rows]}
    assert _plain_floats(clean) is True
