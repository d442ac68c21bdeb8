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

from pathlib import Path

from .. import __version__
from ..model import Casefile
from ..trend import completion_trend
from .narrative import ReportContext, long_date
from .pdf import build_pdf, font_family
from .sections import render_section
from .templates import Template, builtin_templates, load_template

__all__ = ["DEFAULT_TEMPLATE", "build_report", "builtin_templates", "load_template"]

DEFAULT_TEMPLATE = "full"


def build_report(
    casefile: Casefile,
    template: Template | str | Path = DEFAULT_TEMPLATE,
    *,
    command: str = "",
) -> bytes:
    """Build the PDF report of ``casefile`` with ``template`` and return its bytes.

    Parameters
    ----------
    casefile : Casefile
    template : Template, or a template name or path
        See ``report_templates/README.md``.
    command : str
        The command line that asked for the report, for the record of inputs.

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
    tpl = template if isinstance(template, Template) else load_template(template)
    s = tpl.settings
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
    ctx = ReportContext(casefile=casefile, template=tpl, trend=trend, command=command, font=family.source)
    story = []
    number = 0
    for section in tpl.sections:
        if section.kind != "cover" and tpl.settings["numbered_headings"]:
            number += 1
            story += render_section(ctx, section, number)
        else:
            story += render_section(ctx, section, None)
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
