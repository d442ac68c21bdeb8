"""PDF assembly with reportlab: fonts, styles, tables, page furniture, a deterministic build.

The same story gives the same bytes: the document is built with
reportlab's ``invariant`` mode (a fixed creation date and document id) and
fixed metadata, and nothing here reads the clock. Page numbers ("Page 3 of
12") are written once every page is laid out, by a canvas that keeps each
page's state until the end.

Fonts: a TrueType family that covers accented Latin letters, the euro sign
and the dashes we print is embedded. DejaVu Sans is used where the system
has it; otherwise Bitstream Vera, which ships inside reportlab, so a report
always builds. The font used is named in the record of inputs, because the
bytes of the PDF depend on it.
"""

from __future__ import annotations

import contextvars
import io
import os
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path
from typing import Any
from xml.sax.saxutils import escape

import reportlab
from reportlab.lib import colors
from reportlab.lib.enums import TA_RIGHT
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.pdfmetrics import registerFontFamily
from reportlab.pdfbase.ttfonts import TTFont
from reportlab.pdfgen import canvas as rl_canvas
from reportlab.platypus import (
    BaseDocTemplate,
    Flowable,
    Frame,
    KeepTogether,
    LayoutError,
    PageTemplate,
    Paragraph,
    Table,
    TableStyle,
)

from forensic.core.errors import ForensicError

__all__ = [
    "CELL_CHARS",
    "INK",
    "FRAME_WIDTH",
    "FontFamily",
    "Heading",
    "ReportLayoutError",
    "boxed",
    "build_pdf",
    "cell_text",
    "collect_long_texts",
    "data_table",
    "fit_text",
    "paragraphs",
    "font_family",
    "styles",
]

PAGE_WIDTH, PAGE_HEIGHT = A4
MARGIN = 20 * mm
FRAME_WIDTH = PAGE_WIDTH - 2 * MARGIN
INK = colors.HexColor("#1d2630")
RULE = colors.HexColor("#8c96a0")
HEADER_FILL = colors.HexColor("#dfe4e8")
ZEBRA = colors.HexColor("#f3f5f7")
MARK = colors.HexColor("#c4ccd4")


# A table cell holds at most this many characters; a longer value (a name of
# thousands of characters, a word of thousands of letters) is cut with an
# ellipsis and a note number, and its full text is printed in the appendix
# "Full text of shortened entries" (a table row cannot break across pages,
# so one huge cell would make the table impossible to lay out).
CELL_CHARS = 300
# The full texts of the cells cut in the report being built (see collect_long_texts).
_LONG: contextvars.ContextVar[dict[str, int] | None] = contextvars.ContextVar("forensic_long_texts", default=None)


class ReportLayoutError(ForensicError, ValueError):
    """Raised when the report cannot be laid out (an entry too large for a page)."""


@contextmanager
def collect_long_texts() -> Iterator[dict[str, int]]:
    """Collect, while the report is built, the full text of every table cell :func:`cell_text` cuts.

    Yields the mapping full text -> note number (1, 2, ... in order of first use).
    """
    notes: dict[str, int] = {}
    token = _LONG.set(notes)
    try:
        yield notes
    finally:
        _LONG.reset(token)


def cell_text(text: str, limit: int = CELL_CHARS) -> str:
    """``text`` as it fits a table cell: whole, or cut with an ellipsis and the number of its note.

    Inside :func:`collect_long_texts` the full text is kept for the appendix
    and the cut text ends with ``[full text: note N]``.
    """
    if len(text) <= limit:
        return text
    notes = _LONG.get()
    if notes is None:
        return text[: limit - 1].rstrip() + "\u2026"
    number = notes.setdefault(text, len(notes) + 1)
    return text[: limit - 1].rstrip() + f"\u2026 [full text: note {number}]"


@dataclass(frozen=True, slots=True)
class FontFamily:
    """The registered font family: reportlab names of its four faces, and where it came from."""

    regular: str
    bold: str
    italic: str
    bold_italic: str
    source: str


_CANDIDATES = (
    # (folder, regular, bold, oblique, bold oblique)
    ("/usr/share/fonts/truetype/dejavu", "DejaVuSans.ttf", "DejaVuSans-Bold.ttf",
     "DejaVuSans-Oblique.ttf", "DejaVuSans-BoldOblique.ttf"),
    ("/usr/share/fonts/dejavu", "DejaVuSans.ttf", "DejaVuSans-Bold.ttf",
     "DejaVuSans-Oblique.ttf", "DejaVuSans-BoldOblique.ttf"),
    ("/usr/share/fonts/TTF", "DejaVuSans.ttf", "DejaVuSans-Bold.ttf",
     "DejaVuSans-Oblique.ttf", "DejaVuSans-BoldOblique.ttf"),
    ("/Library/Fonts", "DejaVuSans.ttf", "DejaVuSans-Bold.ttf",
     "DejaVuSans-Oblique.ttf", "DejaVuSans-BoldOblique.ttf"),
    (os.path.join(os.path.dirname(reportlab.__file__), "fonts"), "Vera.ttf", "VeraBd.ttf",
     "VeraIt.ttf", "VeraBI.ttf"),
)

_FAMILY: FontFamily | None = None


def font_family() -> FontFamily:
    """Register (once) and return the embedded font family; DejaVu Sans, else Vera."""
    global _FAMILY
    if _FAMILY is not None:
        return _FAMILY
    for folder, *faces in _CANDIDATES:
        paths = [Path(folder) / f for f in faces]
        if not all(p.is_file() for p in paths):
            continue
        base = Path(faces[0]).stem
        names = (f"Forensic-{base}", f"Forensic-{base}-Bold", f"Forensic-{base}-Italic", f"Forensic-{base}-BoldItalic")
        try:
            for name, path in zip(names, paths, strict=True):
                pdfmetrics.registerFont(TTFont(name, str(path)))
        except Exception:  # a damaged font file: try the next family
            continue
        registerFontFamily(names[0], normal=names[0], bold=names[1], italic=names[2], boldItalic=names[3])
        _FAMILY = FontFamily(*names, source=f"{base} ({paths[0]})")
        return _FAMILY
    # Unreachable while reportlab ships Vera; keep the built-in Helvetica as a last resort.
    _FAMILY = FontFamily("Helvetica", "Helvetica-Bold", "Helvetica-Oblique", "Helvetica-BoldOblique", "Helvetica")
    return _FAMILY


def styles() -> dict[str, ParagraphStyle]:
    """The paragraph styles of the report."""
    f = font_family()
    body = ParagraphStyle("body", fontName=f.regular, fontSize=9.5, leading=13, textColor=INK, spaceAfter=5)
    return {
        "body": body,
        "small": ParagraphStyle("small", parent=body, fontSize=7.5, leading=9.5, spaceAfter=0),
        "small_right": ParagraphStyle("small_right", parent=body, fontSize=7.5, leading=9.5, spaceAfter=0, alignment=TA_RIGHT),
        "tiny": ParagraphStyle("tiny", parent=body, fontSize=6.3, leading=9.5, spaceAfter=0),
        "cell_head": ParagraphStyle("cell_head", parent=body, fontName=f.bold, fontSize=7.5, leading=9.5, spaceAfter=0),
        "tiny_head": ParagraphStyle("tiny_head", parent=body, fontName=f.bold, fontSize=6.3, leading=8, spaceAfter=0),
        "tiny_head_right": ParagraphStyle(
            "tiny_head_right", parent=body, fontName=f.bold, fontSize=6.3, leading=8, spaceAfter=0, alignment=TA_RIGHT,
        ),
        "cell_head_right": ParagraphStyle(
            "cell_head_right", parent=body, fontName=f.bold, fontSize=7.5, leading=9.5, spaceAfter=0, alignment=TA_RIGHT,
        ),
        "caption": ParagraphStyle("caption", parent=body, fontName=f.italic, fontSize=8, leading=10, spaceBefore=2, spaceAfter=8),
        "h1": ParagraphStyle("h1", parent=body, fontName=f.bold, fontSize=15, leading=19, spaceBefore=6, spaceAfter=8),
        "h2": ParagraphStyle("h2", parent=body, fontName=f.bold, fontSize=11, leading=14, spaceBefore=8, spaceAfter=4),
        "title": ParagraphStyle("title", parent=body, fontName=f.bold, fontSize=24, leading=30, spaceAfter=10),
        "subtitle": ParagraphStyle("subtitle", parent=body, fontSize=14, leading=19, spaceAfter=18),
        "caution": ParagraphStyle(
            "caution", parent=body, borderColor=RULE, borderWidth=0.6, borderPadding=6,
            backColor=ZEBRA, spaceBefore=6, spaceAfter=12,
        ),
    }


class Heading(Paragraph):
    """A section heading: starts a bookmark and an outline entry in the PDF."""

    def __init__(self, text: str, style: ParagraphStyle, key: str, level: int = 0):
        super().__init__(text, style)
        self.outline_key = key
        self.outline_level = level


def paragraphs(markup: str | None, style: str = "body") -> list[Flowable]:
    """Filled markup as paragraphs: a blank line in the template starts a new one."""
    if not markup:
        return []
    st = styles()[style]
    return [Paragraph(p.strip().replace("\n", " "), st) for p in markup.split("\n\n") if p.strip()]


def data_table(
    columns: Sequence[str],
    rows: Sequence[Sequence[Any]],
    widths: Sequence[float] | None = None,
    numeric: Sequence[int] = (),
    tiny: Sequence[int] = (),
    keep: bool = True,
    small_head: bool = False,
    fit: Sequence[int] = (),
    marked: Sequence[tuple[int, int]] = (),
) -> Flowable:
    """A table whose header repeats on every page it breaks across.

    Cells are escaped text wrapped in paragraphs (so long names wrap instead
    of running off the page); columns listed in ``numeric`` are right-aligned,
    those in ``tiny`` set smaller (digests); those in ``fit`` (identifiers)
    are made as wide as their widest cell, so an id never wraps, and the
    others share the rest in proportion to ``widths``. A short table is kept
    on one page unless ``keep`` is false (the caller keeps it with its lead-in).
    Cells in ``marked`` (body row, column) are set bold on a darker fill, which
    survives greyscale print (a failed check).
    """
    st = styles()
    hs = ("tiny_head_right", "tiny_head") if small_head else ("cell_head_right", "cell_head")
    head = [Paragraph(escape(cell_text(str(c))), st[hs[0]] if i in numeric else st[hs[1]])
            for i, c in enumerate(columns)]
    body = []
    marks = set(marked)
    for r, row in enumerate(rows):
        cells = []
        for i, v in enumerate(row):
            text = escape(cell_text("" if v is None else str(v)))
            style = st["small_right"] if i in numeric else st["tiny"] if i in tiny else st["small"]
            cells.append(Paragraph(f"<b>{text}</b>" if (r, i) in marks else text, style))
        body.append(cells)
    widths = [1.0] * len(columns) if widths is None else list(widths)
    fixed: dict[int, float] = {}
    for i in fit:
        cell = st["tiny"] if i in tiny else st["small"]
        texts = [cell_text("" if row[i] is None else str(row[i])) for row in rows]
        widest = max((pdfmetrics.stringWidth(t, cell.fontName, cell.fontSize) for t in texts), default=0.0)
        head_word = max((pdfmetrics.stringWidth(w, st[hs[1]].fontName, st[hs[1]].fontSize)
                         for w in str(columns[i]).split()), default=0.0)
        fixed[i] = min(max(widest, head_word) + 7.0, FRAME_WIDTH / 3)
    free = sum(w for i, w in enumerate(widths) if i not in fixed)
    scale = (FRAME_WIDTH - sum(fixed.values())) / free if free else 0.0
    widths = [fixed[i] if i in fixed else w * scale for i, w in enumerate(widths)]
    table = Table([head, *body], colWidths=list(widths), repeatRows=1, hAlign="LEFT")
    commands: list[tuple] = [
        ("BACKGROUND", (0, 0), (-1, 0), HEADER_FILL),
        ("LINEBELOW", (0, 0), (-1, 0), 0.8, INK),
        ("LINEBELOW", (0, -1), (-1, -1), 0.5, RULE),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("TOPPADDING", (0, 0), (-1, -1), 2),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
        ("LEFTPADDING", (0, 0), (-1, -1), 3),
        ("RIGHTPADDING", (0, 0), (-1, -1), 3),
    ]
    for r in range(2, len(body) + 1, 2):
        commands.append(("BACKGROUND", (0, r), (-1, r), ZEBRA))
    for r, i in sorted(marks):
        commands.append(("BACKGROUND", (i, r + 1), (i, r + 1), MARK))
    table.setStyle(TableStyle(commands))
    return KeepTogether([table]) if keep and len(body) <= 12 else table


def boxed(flowables: list[Flowable]) -> Flowable:
    """Paragraphs in one shaded, ruled box (the cautions).

    A box cannot break across pages: content taller than half a page (a
    project name of thousands of characters in the wording) is set unboxed,
    so that it can.
    """
    height = sum(f.wrap(FRAME_WIDTH - 16, PAGE_HEIGHT)[1] for f in flowables)
    if height > (PAGE_HEIGHT - 2 * MARGIN) / 2:
        return _Unboxed(flowables)
    box = Table([[flowables]], colWidths=[FRAME_WIDTH], hAlign="LEFT")
    box.setStyle(TableStyle([
        ("BOX", (0, 0), (-1, -1), 0.8, RULE),
        ("BACKGROUND", (0, 0), (-1, -1), ZEBRA),
        ("LEFTPADDING", (0, 0), (-1, -1), 8),
        ("RIGHTPADDING", (0, 0), (-1, -1), 8),
        ("TOPPADDING", (0, 0), (-1, -1), 6),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
    ]))
    return box


class _Unboxed(Flowable):
    """Flowables set one after another, splittable across pages (a caution too long for its box)."""

    def __init__(self, flowables: list[Flowable]):
        super().__init__()
        self._flowables = list(flowables)

    def wrap(self, avail_width, avail_height):
        self._sizes = [f.wrap(avail_width, avail_height) for f in self._flowables]
        return avail_width, sum(h for _w, h in self._sizes)

    def split(self, avail_width, avail_height):
        return list(self._flowables)

    def draw(self):  # pragma: no cover - always split by the frame first when too tall
        y = sum(h for _w, h in self._sizes)
        for f, (_w, h) in zip(self._flowables, self._sizes, strict=True):
            y -= h
            f.drawOn(self.canv, 0, y)


def _numbered_canvas(footer_left: str):
    """A canvas class that writes "Page n of N" and the footer once all pages are known."""

    class NumberedCanvas(rl_canvas.Canvas):
        def __init__(self, *args, **kwargs):
            super().__init__(*args, **kwargs)
            self._pages: list[dict] = []

        def showPage(self):  # noqa: N802 - reportlab's name
            self._pages.append(dict(self.__dict__))
            self._startPage()

        def save(self):
            total = len(self._pages)
            for state in self._pages:
                self.__dict__.update(state)
                self._footer(total)
                super().showPage()
            super().save()

        def _footer(self, total: int) -> None:
            f = font_family()
            self.saveState()
            self.setStrokeColor(RULE)
            self.setLineWidth(0.5)
            y = MARGIN - 8 * mm
            self.line(MARGIN, y + 10, PAGE_WIDTH - MARGIN, y + 10)
            self.setFillColor(INK)
            self.setFont(f.regular, 7.5)
            right = f"Page {self._pageNumber} of {total}"
            room = FRAME_WIDTH - pdfmetrics.stringWidth(right, f.regular, 7.5) - 12
            self.drawString(MARGIN, y, fit_text(footer_left, f.regular, 7.5, room))
            self.drawRightString(PAGE_WIDTH - MARGIN, y, right)
            self.restoreState()

    return NumberedCanvas


def fit_text(text: str, font: str, size: float, width: float) -> str:
    """``text`` cut with an ellipsis so that it fits ``width`` points."""
    if pdfmetrics.stringWidth(text, font, size) <= width:
        return text
    # The longest prefix that fits with the ellipsis, by bisection: a
    # character-by-character loop is quadratic on a name of 30,000 characters.
    lo, hi = 0, len(text)
    while lo < hi:
        mid = (lo + hi + 1) // 2
        if pdfmetrics.stringWidth(text[:mid] + "…", font, size) <= width:
            lo = mid
        else:
            hi = mid - 1
    return text[:lo].rstrip() + "…"


class _Doc(BaseDocTemplate):
    def afterFlowable(self, flowable: Flowable) -> None:  # noqa: N802 - reportlab's name
        if isinstance(flowable, Heading):
            key = flowable.outline_key
            self.canv.bookmarkPage(key)
            self.canv.addOutlineEntry(flowable.getPlainText(), key, level=flowable.outline_level, closed=False)


@contextmanager
def _without_source_date_epoch() -> Iterator[None]:
    """Hide ``SOURCE_DATE_EPOCH`` from reportlab while the PDF is built.

    reportlab stamps its creation date from that variable when it is set
    (and fails on a value that is not a whole number); in invariant mode it
    otherwise uses a fixed date. forensic ignores the variable: the report's
    bytes depend on the casefile, the template, the settings and the font
    only, which already makes it reproducible (docs/robustness.md).
    """
    saved = os.environ.pop("SOURCE_DATE_EPOCH", None)
    try:
        yield
    finally:
        if saved is not None:
            os.environ["SOURCE_DATE_EPOCH"] = saved


def build_pdf(story: list[Flowable], *, title: str, subject: str, footer: str, author: str, creator: str) -> bytes:
    """Lay out ``story`` on A4 pages and return the PDF bytes (deterministic; ``SOURCE_DATE_EPOCH`` ignored)."""
    with _without_source_date_epoch():
        return _build_pdf(story, title=title, subject=subject, footer=footer, author=author, creator=creator)


def _build_pdf(story: list[Flowable], *, title: str, subject: str, footer: str, author: str, creator: str) -> bytes:
    buf = io.BytesIO()
    doc = _Doc(
        buf,
        pagesize=A4,
        leftMargin=MARGIN,
        rightMargin=MARGIN,
        topMargin=MARGIN,
        bottomMargin=MARGIN,
        title=title,
        subject=subject,
        author=author,
        creator=creator,
        producer=creator,
        keywords="",
        invariant=1,
        pageCompression=1,
    )
    frame = Frame(MARGIN, MARGIN, FRAME_WIDTH, PAGE_HEIGHT - 2 * MARGIN, id="body", leftPadding=0, rightPadding=0)
    doc.addPageTemplates([PageTemplate(id="page", frames=[frame])])
    try:
        doc.build(story, canvasmaker=_numbered_canvas(footer))
    except LayoutError as exc:
        first = str(exc).splitlines()[0][:300]
        msg = f"the report cannot be laid out: an entry is too large for a page ({first})"
        raise ReportLayoutError(msg) from None
    return buf.getvalue()
