"""Records built field by field through their slots equal the constructor's records."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from datetime import date

import pytest

from forensic.casefile.slotted import _by_slots, built
from forensic.core.model import Activity, Link


def _typed(record) -> list:
    return [(f.name, type(getattr(record, f.name)), getattr(record, f.name)) for f in dataclasses.fields(record)]


def test_activities_and_links_equal_the_constructed_ones():
    rows = [("A1", "Dig", 3, "task", 2, date(2027, 1, 4), None, "5d", None, None, "CON", None, 10.0, 1, 25.5, 2),
            ("M9", "Done", 0, "finish-milestone", 0, None, None, None, "finish-on-or-before", date(2027, 6, 1),
             None, "Z", None, None, None, 3)]
    acts = built(Activity, list(zip(*rows, strict=True)))
    expected = [Activity(*row) for row in rows]
    assert acts == expected and list(map(hash, acts)) == list(map(hash, expected))
    assert [_typed(a) for a in acts] == [_typed(a) for a in expected]
    assert all(type(a) is Activity for a in acts)
    for cls in (Activity, Link):  # the loader's records take the fast way
        assert _by_slots(cls, [f.name for f in dataclasses.fields(cls)])
    with pytest.raises(dataclasses.FrozenInstanceError):
        acts[0].name = "changed"  # still frozen
    links = built(Link, (["A1"], ["M9"], ["SS"], [-2], [7]))
    assert links == [Link("A1", "M9", "SS", -2, 7)]


def test_no_rows_and_wrong_shapes():
    assert built(Link, ([], [], [], [], [])) == []
    with pytest.raises(ValueError, match="fields"):
        built(Link, (["A"], ["B"]))
    with pytest.raises(ValueError, match="lengths"):
        built(Link, (["A"], ["B"], ["FS"], [0], []))


def test_a_class_with_post_init_is_built_by_its_constructor():
    @dataclass(frozen=True, slots=True)
    class Checked:
        a: int
        b: int

        def __post_init__(self):
            if self.b < self.a:
                raise ValueError("b before a")

    assert built(Checked, ([1, 2], [3, 4])) == [Checked(1, 3), Checked(2, 4)]
    with pytest.raises(ValueError, match="b before a"):
        built(Checked, ([5], [1]))


def test_a_class_without_slots_is_built_by_its_constructor():
    @dataclass(frozen=True)
    class Plain:
        a: int

    assert built(Plain, ([1, 2],)) == [Plain(1), Plain(2)]
