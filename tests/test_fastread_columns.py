"""The fast path's columns (one split, or the csv module for quoted cells) equal the row-wise reader's rows."""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.casefile.csvread import Problems, read_table
from forensic.casefile.fastread import frame_table

REQUIRED, OPTIONAL = ("a", "b"), ("c",)

_plain = st.text(alphabet=st.sampled_from(list("xyz09-_ .\u00e9\u00a0\u3000")), max_size=5)
_odd = st.text(alphabet=st.sampled_from(list("xy ,\t\"\r")), max_size=3)  # may send the table row by row
_cell = _plain | _plain.map(lambda c: '"' + c + '"') | _plain.map(lambda c: '"a""' + c + '"') | _odd


@st.composite
def _tables(draw) -> str:
    header = draw(st.sampled_from(["a,b", "a,b,c", "b,a,c", " a ,b", "a,b,a"]))
    width = len(header.split(","))
    cell = draw(st.sampled_from([_plain, _plain | _odd, _cell]))  # tables with no quote, or a few odd cells
    row = st.lists(cell, min_size=width, max_size=width).map(",".join)
    rows = draw(st.lists(row, min_size=0, max_size=8))
    for extra in ("", "," * (width - 1)):  # a blank line (skipped) and a row of commas only (row by row)
        if rows and draw(st.integers(0, 3)) == 0:
            rows.insert(draw(st.integers(0, len(rows))), extra)
    end = draw(st.sampled_from(["\n", "\r\n"]))
    tail = draw(st.sampled_from(["", end]))
    return end.join([header, *rows]) + tail


@settings(max_examples=500, deadline=None)
@given(_tables())
def test_a_table_the_fast_path_takes_reads_as_the_row_wise_reader_reads_it(text):
    frame = frame_table(text, REQUIRED, OPTIONAL, 100)
    if frame is None:
        return
    header, cols, lines, texts = frame
    problems = Problems()
    rows = read_table(text, "t.csv", REQUIRED, OPTIONAL, 100, problems)
    assert not problems and rows is not None
    assert [r.line for r in rows] == lines
    assert [tuple(r.cells) for r in rows[:1]] in ([], [header])
    assert [[r.cells[h] for h in header] for r in rows] == [list(row) for row in zip(*cols.values(), strict=True)]
    assert texts == [text.split("\n")[k - 1] for k in lines]


def test_plain_and_quoted_tables_take_the_fast_path():
    plain = "a,b,c\nx, y ,z\r\n\nq,r,s\n"
    header, cols, lines, _ = frame_table(plain, REQUIRED, OPTIONAL, 10)
    assert cols == {"a": ["x", "q"], "b": ["y", "r"], "c": ["z", "s"]} and lines == [2, 4]
    quoted = 'a,b\n"x, y","a ""b"""\n'
    header, cols, lines, _ = frame_table(quoted, REQUIRED, OPTIONAL, 10)
    assert cols == {"a": ["x, y"], "b": ['a "b"']} and lines == [2]
    assert frame_table("a,b\nx,y,z\n", REQUIRED, OPTIONAL, 10) is None  # a row of another width
