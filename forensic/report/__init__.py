"""The PDF narrative report: template loading, narrative, charts, assembly.

:func:`build_report` runs the analyses a template's sections need, fills
the template's wording from their result objects, draws the charts and lays
out the PDF, and returns its bytes; the same casefile, template and
settings give the same bytes. Writing the file is the caller's job (the CLI
writes atomically, never over a casefile input).

The report supports, and does not replace, the judgement of a qualified
scheduling professional; entitlement depends on the contract and the
applicable law.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from forensic.analysis.asbuilt import as_planned_vs_as_built
from forensic.analysis.attribution.delay import analyse_delay
from forensic.analysis.butfor import but_for
from forensic.analysis.compare import compare_snapshots
from forensic.analysis.impact import time_impacts
from forensic.analysis.quality.assessment import assess_casefile
from forensic.analysis.recovery.acceleration import recover
from forensic.analysis.runcache import RunCache
from forensic.analysis.trend import completion_trend
from forensic.core.model import Casefile
from forensic.core.version import __version__

from .narrative import ReportContext, long_date
from .pdf import Heading, build_pdf, collect_long_texts, font_family, styles
from .sections import render_section
from .templates import Template, builtin_templates, load_template

__all__ = ["DEFAULT_TEMPLATE", "build_report", "builtin_templates", "load_template"]

DEFAULT_TEMPLATE = "full"
_NEEDS_DELAY = {"windows", "slip-by-party", "ledger", "float-ledger", "window-charts"}


def build_report(
    casefile: Casefile,
    template: Template | str | Path = DEFAULT_TEMPLATE,
    *,
    command: str = "",
    recover_days: int | None = None,
    progress: Callable[[str], None] | None = None,
) -> bytes:
    """Build the PDF report of ``casefile`` with ``template`` and return its bytes.

    Parameters
    ----------
    casefile : Casefile
    template : Template, or a template name or path
        See ``report_templates/README.md``.
    command : str
        The command line that asked for the report, for the record of inputs.
    recover_days : int, optional
        Days to recover on the latest update (delay unit); the acceleration
        section is shown only when this is given.
    progress : callable, optional
        Called with the name of each step before it starts (the CLI prints
        them on standard error); it cannot change the report.

    Returns
    -------
    bytes
        The PDF; byte-identical for the same inputs, template, settings and font.

    References
    ----------
    AACE International Recommended Practice 29R-03, Forensic Schedule Analysis
    (sec. 1.4 and 4: the analyst's report states the method, the sources and
    the settings so that another analyst can reproduce it).
    """
    step = progress or (lambda _name: None)
    tpl = template if isinstance(template, Template) else load_template(template)
    ctx = _gather(casefile, tpl, command, recover_days, step)
    step("writing the pages")
    story = _story(ctx, tpl)
    last = casefile.snapshots[-1]
    footer = f"{tpl.title} · {casefile.project.name} · data date {long_date(last.data_date)}"
    return build_pdf(
        story,
        title=f"{tpl.title}: {casefile.project.name}",
        subject=f"{casefile.project.name}, snapshots {casefile.snapshots[0].id} to {last.id}",
        footer=footer,
        author=f"forensic {__version__}",
        creator=f"forensic {__version__}",
    )


def _gather(casefile: Casefile, tpl: Template, command: str, recover_days: int | None,
            step: Callable[[str], None]) -> ReportContext:
    """Run the analyses the template's sections need, once each, and name the sections left out."""
    s = tpl.settings
    step(f"scheduling {len(casefile.snapshots)} snapshots")
    trend = completion_trend(
        casefile,
        milestones=s["key_milestones"] or None,
        band_edges=s["float_bands"],
        milestone_limit=s["milestone_limit"],
    )
    family = font_family()
    if not command:
        name = casefile.root.name if casefile.root is not None else "CASEFILE"
        command = f"forensic report {name} --template {tpl.name}"
        if recover_days is not None:
            command += f" --recover-days {recover_days}"
    kinds = set(tpl.kinds())
    many = len(casefile.snapshots) > 1
    delay = impacts = recovery = None
    cache = RunCache()  # the report's analyses and its delay summary share their schedules and runs
    if kinds & {"windows", "slip-by-party", "ledger", "float-ledger", "summary", "window-charts"} and many:
        step("windows analysis")
        delay = analyse_delay(casefile, casefile.windows or None, cache=cache)
    if "time-impact" in kinds and any(e.fragnet or e.activities for e in casefile.events):
        step("time impact analyses")
        impacts = time_impacts(casefile, cache=cache)
    if "quality" in kinds:
        step("schedule quality")
    quality = assess_casefile(casefile) if "quality" in kinds else None
    comparisons = None
    if "changes" in kinds and many:
        snaps = casefile.snapshots
        comparisons = tuple(compare_snapshots(casefile, a.id, b.id) for a, b in zip(snaps, snaps[1:], strict=False))
    if "but-for" in kinds and many:
        step("but-for analysis")
    butfor = but_for(casefile, cache=cache) if "but-for" in kinds and many else None
    asbuilt = as_planned_vs_as_built(casefile) if "as-built" in kinds and many else None
    eot = None
    if kinds & {"delay-summary", "reconciliation"} and many and casefile.events:
        from forensic.analysis.eot import delay_summary

        if delay is None:
            step("windows analysis")
            delay = analyse_delay(casefile, casefile.windows or None, cache=cache)
        eot = delay_summary(casefile, delay=delay, sensitivity="reconciliation" in kinds, progress=step,
                            cache=cache)
    if "acceleration" in kinds and recover_days is not None:
        step("acceleration analysis")
        recovery = recover(casefile, casefile.snapshots[-1].id, days=recover_days)
    left_out: set[str] = set()
    for result, needs in ((delay, _NEEDS_DELAY), (recovery, {"acceleration"}), (comparisons, {"changes"}),
                          (butfor, {"but-for"}), (asbuilt, {"as-built"}), (eot, {"delay-summary", "reconciliation"})):
        if result is None:
            left_out |= needs
    return ReportContext(
        casefile=casefile, template=tpl, trend=trend, command=command, font=family.source,
        delay=delay, impacts=impacts, recovery=recovery, recover_days=recover_days,
        quality=quality, comparisons=comparisons, butfor=butfor, asbuilt=asbuilt, eot=eot, left_out=frozenset(left_out),
    )


def _story(ctx: ReportContext, tpl: Template) -> list:
    """Every section of the template, numbered, then the appendix of shortened texts."""
    story: list = []
    number = 0
    with collect_long_texts() as long_texts:
        for section in tpl.sections:
            if section.kind in ctx.left_out:
                continue  # one snapshot (no window to analyse), or acceleration not asked for
            numbered = section.kind != "cover" and tpl.settings["numbered_headings"]
            flowables = render_section(ctx, section, number + 1 if numbered else None)
            if flowables is None:
                continue
            number += numbered
            story += flowables
    story += _long_text_appendix(long_texts)
    return story


def _long_text_appendix(long_texts: dict[str, int]) -> list:
    """The full text of every table cell cut for length, by note number (nothing when none was cut)."""
    if not long_texts:
        return []
    from xml.sax.saxutils import escape

    from reportlab.platypus import Paragraph

    st = styles()
    out = [Heading(escape("Appendix: full text of shortened entries"), st["h1"], "long-texts")]
    out.append(Paragraph(escape("A table cell shows at most 300 characters; these entries were cut there "
                                "with an ellipsis and are given here whole."), st["body"]))
    for text, number in long_texts.items():
        out.append(Paragraph(f"<b>Note {number}.</b> {escape(text)}", st["small"]))
    return out
