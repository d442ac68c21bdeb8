"""The PDF report: headings, cautions, figures from the results, determinism, escaping, templates."""

import io
from dataclasses import replace
from datetime import date, timedelta
from pathlib import Path

import pytest
from click.testing import CliRunner
from pypdf import PdfReader

from forensic.analysis.trend import completion_trend
from forensic.cli import main
from forensic.core.errors import TemplateError
from forensic.core.model import (
    Activity,
    Calendar,
    Casefile,
    Link,
    Party,
    Project,
    Snapshot,
    frozen_mapping,
)
from forensic.report import build_report, load_template
from forensic.report.narrative import long_date, short_date
from forensic.report.templates import fill, placeholders

FIVE = Calendar("5d", ("mon", "tue", "wed", "thu", "fri"), (date(2026, 4, 3),))
ESCAPE_NAME = 'Pour <slab> & "cure"'


def _snapshot(sid, dd, role, progress):
    acts = [
        Activity("M000", "Notice to proceed", 0, kind="opening-milestone"),
        Activity("A100", "Site set-up", 10),
        Activity("A200", ESCAPE_NAME, 20),
        Activity("A300", "Steel frame erection — level 1–3", 30),
        Activity("A310", "Façade panels", 25),
        Activity("A400", "Fit-out & services", 40),
        Activity("M500", "Weathertight", 0, kind="closing-milestone",
                 constraint="finish-by", constraint_date=date(2026, 7, 15)),
        Activity("A450", "Landscaping", 15),
        Activity("M900", "Practical completion", 0, kind="closing-milestone"),
    ]
    acts = [replace(a, **progress.get(a.id, {})) for a in acts]
    links = (
        Link("M000", "A100"), Link("A100", "A200"), Link("A200", "A300"), Link("A300", "A310", type="SS", lag=10),
        Link("A310", "M500"), Link("A300", "A400"), Link("A400", "M900"), Link("A100", "A450"),
        Link("A450", "M900"), Link("M500", "M900"),
    )
    return Snapshot(sid, dd, frozen_mapping({a.id: a for a in acts}), links, role)


def small_casefile() -> Casefile:
    """Three snapshots of an invented fit-out job; accented, euro and markup-like names on purpose."""
    started = {"M000": dict(actual_start=date(2026, 1, 5)),
               "A100": dict(actual_start=date(2026, 1, 5), actual_finish=date(2026, 1, 23))}
    s0 = _snapshot("BL", date(2026, 1, 5), "baseline", {})
    s1 = _snapshot("U01", date(2026, 2, 2), "update", {**started, "A200": dict(actual_start=date(2026, 1, 26), remaining=17)})
    s2 = _snapshot("U02", date(2026, 3, 2), "update", {
        **started,
        "A200": dict(actual_start=date(2026, 1, 26), actual_finish=date(2026, 2, 27)),
        "A300": dict(remaining=36),
        "A450": dict(actual_start=date(2026, 2, 9), remaining=5),
    })
    project = Project("Quai Süd – Café € Block", "5d", completion="M900", contract_completion=date(2026, 9, 30))
    parties = frozen_mapping({
        "OWN": Party("OWN", "Ville de Montréal & Co <owner>", "owner"),
        "CON": Party("CON", "Bâtisseurs Émile SA", "contractor"),
    })
    inputs = frozen_mapping({"casefile.toml": "a" * 64, "snapshots/BL/activities.csv": "b" * 64})
    return Casefile(project, frozen_mapping({"5d": FIVE}), parties, (s0, s1, s2), inputs=inputs)


@pytest.fixture(scope="module")
def cf() -> Casefile:
    return small_casefile()


@pytest.fixture(scope="module")
def full_pdf(cf) -> bytes:
    return build_report(cf, "full")


def pdf_pages(data: bytes) -> list[str]:
    return [" ".join(p.extract_text().split()) for p in PdfReader(io.BytesIO(data)).pages]


def pdf_text(data: bytes) -> str:
    return " ".join(pdf_pages(data))


@pytest.mark.parametrize("name", ["full", "monthly"])
def test_every_section_heading_of_the_template_is_printed(cf, name):
    """Each heading the template chooses appears in the extracted text (pypdf), in template order."""
    template = load_template(name)
    text = pdf_text(build_report(cf, template))
    at = -1
    for section in template.sections:
        if section.kind == "cover":
            assert template.title in text
            continue
        if section.kind == "acceleration":
            assert section.heading not in text  # only when asked for (--recover-days)
            continue
        if section.kind in ("delay-summary", "reconciliation") and not cf.events:
            assert section.heading not in text  # a casefile without events has nothing to summarise per event
            continue
        found = text.find(section.heading, at + 1)
        assert found > at, section.heading
        at = found


def test_cautions_are_printed(full_pdf):
    """The cautions the project promises (RULES; README) are in the report's text."""
    text = pdf_text(full_pdf)
    assert "support, and do not replace, the judgement of a qualified scheduling professional" in text
    assert "depends on the contract and on the applicable law" in text
    assert "Follow local rules and licensed practice" in text


def test_trend_figures_come_from_the_result_objects(cf, full_pdf):
    """Every snapshot's forecast completion, slip and movement from completion_trend is printed."""
    text = pdf_text(full_pdf)
    trend = completion_trend(cf)
    for row in trend.snapshots:
        assert long_date(row.completion) in text
        assert short_date(row.completion) in text
    last = trend.latest
    assert last.slip > 0  # the story of the casefile: completion slipped
    assert f"{last.slip} calendar days later than the baseline" in text
    assert f"{trend.snapshots[1].movement} calendar days later than at BL" in text


def test_same_inputs_give_identical_bytes(cf):
    """Two builds of the same casefile and template are byte-identical (reportlab invariant mode)."""
    assert build_report(cf, "full") == build_report(cf, "full")
    assert build_report(cf, "monthly") == build_report(cf, "monthly")


def test_markup_like_activity_name_prints_verbatim(full_pdf):
    """An activity named Pour <slab> & "cure" is escaped, not read as markup (xml.sax.saxutils.escape)."""
    assert ESCAPE_NAME in pdf_text(full_pdf)


def test_accented_and_euro_names_print(full_pdf):
    """Accents, the euro sign and dashes survive (an embedded TrueType font covers them)."""
    text = pdf_text(full_pdf)
    for s in ("Quai Süd – Café € Block", "Bâtisseurs Émile SA", "Ville de Montréal & Co <owner>",
              "Steel frame erection — level 1–3"):
        assert s in text


def test_footer_has_page_numbers_title_and_data_date(full_pdf):
    """Every page carries "Page n of N", the title and the latest data date."""
    pages = pdf_pages(full_pdf)
    assert len(pages) >= 3
    for n, page in enumerate(pages, start=1):
        assert f"Page {n} of {len(pages)}" in page
        assert "Delay analysis report" in page
        assert "data date 2 March 2026" in page


def test_record_of_inputs_lists_hashes_version_and_command(cf, full_pdf):
    """The appendix lists each input's SHA-256, the software version and the command."""
    import forensic

    text = pdf_text(full_pdf).replace(" ", "")
    for digest in cf.inputs.values():
        assert digest in text
    assert f"forensic{forensic.__version__}" in text
    assert "forensicreportCASEFILE--templatefull" in text


def test_long_table_breaks_across_pages_with_repeated_header(tmp_path):
    """A 120-activity longest path table spans pages and its header row repeats on each (reportlab repeatRows)."""
    acts = [Activity(f"T{i:03d}", f"Task {i}", 2) for i in range(120)]
    links = tuple(Link(f"T{i:03d}", f"T{i + 1:03d}") for i in range(119))
    snap = Snapshot("BL", date(2026, 1, 5), frozen_mapping({a.id: a for a in acts}), links, "baseline")
    big = Casefile(Project("Long job", "5d"), frozen_mapping({"5d": FIVE}), frozen_mapping(), (snap,))
    src = load_template("full").path.read_text(encoding="utf-8")
    src = src.replace('kind = "longest-path"\nheading = "Appendix: longest path at each update"\nscope = "all"\ntable = false',
                      'kind = "longest-path"\nheading = "Appendix: longest path at each update"\nscope = "all"\ntable = true')
    assert "table = true" in src
    (tmp_path / "long.toml").write_text(src, encoding="utf-8")
    pages = pdf_pages(build_report(big, tmp_path / "long.toml"))
    # Table rows carry the status column; the charts (continued over pages) do not.
    with_rows = [p for p in pages if "not-started" in p]
    assert len(with_rows) >= 2
    for page in with_rows:
        assert "Total float (wd)" in page
    # The chart is continued, not cut: every activity is drawn, the last chart ends on the completion T119.
    text = "\n".join(pages)
    assert "Continued: activities 91 to 120 of the 120 on the path." in text
    assert text.count("T119 Task 119") >= 2  # chart label and table row


# --- templates ---------------------------------------------------------------------------


def test_fill_escapes_values_and_template_words():
    """Values and the template's own words are escaped for Paragraph markup (xml.sax.saxutils)."""
    assert fill("A & {x}", {"x": "<b>"}) == "A &amp; &lt;b&gt;"
    assert fill("{n:+d} days", {"n": 5}) == "+5 days"


@pytest.mark.parametrize("text", ["{x.__class__}", "{x[0]}", "{x!r}", "{0}", "{x:>999999}"])
def test_placeholders_refuse_attribute_index_conversion_and_huge_widths(text):
    """Only plain names with a short format are allowed, so a template cannot reach into objects (no eval)."""
    with pytest.raises(TemplateError):
        placeholders(text, "t.toml")


def _copy_full(tmp_path: Path, old: str, new: str) -> Path:
    src = load_template("full").path.read_text(encoding="utf-8")
    assert old in src
    p = tmp_path / "mine.toml"
    p.write_text(src.replace(old, new, 1), encoding="utf-8")
    return p


def test_unknown_placeholder_is_refused_with_its_place(tmp_path):
    """A misspelt placeholder is reported with the file, section and key before anything is computed."""
    p = _copy_full(tmp_path, "{baseline_completion}", "{baseline_complete}")
    with pytest.raises(TemplateError, match=r"mine.toml, section 3 \(summary\), text.later: unknown placeholder"):
        load_template(p)


def test_missing_wording_key_is_refused(tmp_path):
    """A section without a required wording key names the key and its placeholders."""
    p = _copy_full(tmp_path, 'sentence = """At {snapshot}', 'sentences = """At {snapshot}')
    with pytest.raises(TemplateError, match="text.sentences is not a wording key"):
        load_template(p)


def test_unknown_section_kind_is_refused(tmp_path):
    """A section kind that no renderer knows is refused, listing the kinds."""
    p = _copy_full(tmp_path, 'kind = "cautions"', 'kind = "caution"')
    with pytest.raises(TemplateError, match="kind 'caution' is not a section kind"):
        load_template(p)


def test_edited_copy_changes_order_headings_and_wording(cf, tmp_path):
    """A copied template with new headings and wording prints them (no code touched)."""
    p = _copy_full(tmp_path, 'heading = "Executive summary"', 'heading = "Résumé for the board"')
    text = pdf_text(build_report(cf, p))
    assert "Résumé for the board" in text


def test_cli_writes_the_report_atomically_and_refuses_unknown_templates(tmp_path):
    """`forensic report` refuses an unknown template with Error: and exit 1 (click; sqlite-utils style)."""
    r = CliRunner().invoke(main, ["report", str(tmp_path), "--template", "no-such"])
    assert r.exit_code == 1
    assert "Error: no report template named 'no-such'" in r.output
    r = CliRunner().invoke(main, ["report", "--help"])
    assert r.exit_code == 0 and "Example: forensic report" in r.output


# --- the demo casefile -------------------------------------------------------------------


@pytest.fixture(scope="module")
def demo():
    from forensic.casefile.demo import demo_source
    from forensic.casefile.reading import load_casefile

    return load_casefile(demo_source())


@pytest.fixture(scope="module")
def demo_pdf(demo) -> bytes:
    return build_report(demo, "full", recover_days=10)


@pytest.fixture(scope="module")
def demo_text(demo_pdf) -> str:
    return pdf_text(demo_pdf)


def test_demo_report_has_every_heading_and_the_cautions(demo_text):
    """The demo's full report, with acceleration asked for, prints every heading of the template in order."""
    text = demo_text
    at = -1
    for section in load_template("full").sections:
        if section.kind == "cover":
            continue
        found = text.find(section.heading, at + 1)
        assert found > at, section.heading
        at = found
    assert "support, and do not replace, the judgement of a qualified scheduling professional" in text


def test_demo_report_prints_the_windows_analysis_figures(demo, demo_text):
    """Each window's slip, the ledger's categories and the total come from analyse_delay's result objects."""
    from forensic.analysis.attribution.delay import analyse_delay

    text = demo_text
    delay = analyse_delay(demo)
    for w in delay.windows.windows:
        # A window covers its earlier data date to the day before its later one (no shared day).
        assert f"Window {w.label}: {long_date(w.start)} to {long_date(w.end - timedelta(days=1))}" in text
        if w.slip > 0:
            assert f"{long_date(w.completion_after)}: {w.slip} calendar day" in text
    t = delay.ledger.total
    assert delay.ledger.balanced
    assert (f"moved {delay.ledger.total_slip} calendar days: {t.excusable_compensable} excusable and compensable, "
            f"{t.excusable_noncompensable} excusable and not compensable, {t.non_excusable} not excusable") in text


def test_demo_report_prints_time_impacts_and_the_recovery_plan(demo, demo_text):
    """Each event's modelled impact (time_impacts) and the least-cost plan (recover) are quoted as computed."""
    from forensic.analysis.impact import time_impacts
    from forensic.analysis.recovery import recover

    text = demo_text
    series = time_impacts(demo)
    for r in series.individual:
        if r.impact > 0:
            assert f"Event {r.event}," in text
            # The unit may fall on the next page (after the footer), so the figure is matched up to the number.
            assert f"to {long_date(r.completion_after)}: {r.impact} " in text
    plan = recover(demo, demo.snapshots[-1].id, days=10, curve=False).plan
    assert f"It costs {plan.cost:,.0f} and brings completion to {long_date(plan.completion)}" in text


def test_demo_monthly_review_is_byte_identical_twice(demo):
    """Two builds of the demo's monthly review give the same bytes."""
    assert build_report(demo, "monthly") == build_report(demo, "monthly")


def test_demo_report_prints_the_quality_scorecard(demo, demo_text):
    """Each snapshot's passed / failed count is the tally of assess_casefile's checks (DCMA-EA PAM 200.1)."""
    from forensic.analysis.quality import assess_casefile

    for q in assess_casefile(demo):
        assessed = sum(1 for c in q.checks if c.passed is not None)
        passed = sum(1 for c in q.checks if c.passed)
        if q.failed:
            assert f"{q.snapshot_id} (data date {long_date(q.data_date)}) passed {passed} of the {assessed} checks" in demo_text
        else:
            assert f"{q.snapshot_id} (data date {long_date(q.data_date)}) passed all {assessed} checks" in demo_text


# --- but-for, as-planned versus as-built, paths per window, summary parts, quality changes ---------


def test_demo_report_quotes_each_but_for_case_as_computed(demo, demo_text):
    """Each but-for case's completion and difference are those of butfor.but_for (AACE RP 29R-03, MIP 3.8)."""
    from forensic.analysis.butfor import but_for

    rep = but_for(demo)
    assert "But-for analysis (collapsed as-built)" in demo_text
    assert f"completes on {long_date(rep.as_built.completion)}, as recorded" in demo_text
    assert f"no link explains when they started ({len(rep.as_built.pins)})" in demo_text
    for c in rep.cases:
        assert f"(events {', '.join(c.removed[:-1])}" in demo_text or f"(events {c.removed[0]})" in demo_text
        if c.difference > 0:
            assert (f"would have completed on {long_date(c.but_for_completion)} rather than "
                    f"{long_date(c.as_built_completion)}: {c.difference} calendar days earlier") in demo_text
        else:
            assert f"would still have completed on {long_date(c.as_built_completion)}" in demo_text
        assert f"{short_date(c.but_for_completion)} {c.difference:+d}" in demo_text or c.difference == 0
    # The demo's story (casefiles/riverside/story.toml, [but_for]): the employer 9 days, the contractor 2
    # (issue 17: its events without a fragnet take out what the record shows they cost).
    assert {c.label: c.difference for c in rep.cases}["party CON"] == 2


def test_demo_report_as_built_summary_counts_the_comparison_rows(demo, demo_text):
    """The as-planned versus as-built sentence tallies asbuilt.as_planned_vs_as_built's rows (AACE RP 29R-03, 3.1/3.2)."""
    from forensic.analysis.asbuilt import as_planned_vs_as_built

    rows = as_planned_vs_as_built(demo)
    compared = [r for r in rows if r.finish_slip is not None]
    late = sum(1 for r in compared if r.finish_slip > 0)
    finished = sum(1 for r in rows if r.status == "finished")
    worst = max(compared, key=lambda r: r.finish_slip)
    comp = next(r for r in rows if r.id == "M900")
    assert "Appendix: as-planned versus as-built" in demo_text
    assert f"Of the {len(compared)} activities that are both in the baseline and in U10" in demo_text
    assert f"{finished} are finished" in demo_text
    assert f"{late} finish (or are forecast to finish) later than planned" in demo_text
    assert f"{worst.name} ({worst.id}), {worst.finish_slip} calendar days late" in demo_text
    assert (f"was planned for {long_date(comp.as_planned_finish)} and is forecast for "
            f"{long_date(comp.as_built_finish)}, {comp.finish_slip} calendar days later") in demo_text


def test_as_built_subset_takes_the_longest_path_then_the_largest_finish_slips():
    """The report's subset: the final path in path order, then the latest finishes, late only (our rule, docs/report.md)."""
    from forensic.analysis.asbuilt import AsBuiltRow
    from forensic.report.asbuilt_sections import asbuilt_subset

    def row(aid, fv):
        return AsBuiltRow(aid, aid, "finished", None, None, None, None, None, None, False, 0, fv, 0)

    rows = (row("A", 1), row("B", 9), row("C", 4), row("D", -2), row("E", None), row("F", 7))
    assert [r.id for r in asbuilt_subset(rows, ("C", "A", "E"), 4)] == ["C", "A", "B", "F"]
    assert [r.id for r in asbuilt_subset(rows, ("C", "A"), 10)] == ["C", "A", "B", "F"]  # D is early, E has no variance
    assert [r.id for r in asbuilt_subset(rows, ("C", "A", "B"), 2)] == ["C", "A"]


def test_demo_windows_set_the_critical_path_before_and_after_side_by_side(demo, demo_text):
    """Each window's path table is headed by its two updates and starts with windows' own critical_path_before/after."""
    from forensic.analysis.attribution.delay import analyse_delay

    for w in analyse_delay(demo).windows.windows:
        assert f"Critical path at {w.from_id} Name Critical path at {w.to_id} Name" in demo_text
        first_before, first_after = w.critical_path_before[0], w.critical_path_after[0]
        mark_b = "" if first_before in w.critical_path_after else " −"
        mark_a = "" if first_after in w.critical_path_before else " +"
        name_a = demo.snapshot(w.to_id).activities[first_after].name
        assert f"{first_before}{mark_b} " in demo_text and f"{first_after}{mark_a} {name_a}" in demo_text


def test_demo_summary_parts_add_up_to_the_slip(demo, demo_text):
    """The summary's categories, less the gains, add up to the ledger's total slip (attribution.Ledger)."""
    import re

    from forensic.analysis.attribution.delay import analyse_delay

    led = analyse_delay(demo).ledger
    m = re.search(r"Of the (\d+) calendar days of slip, the windows analysis attributes (\d+) to .*? compensable, (\d+) "
                  r"to .*? not compensable and (\d+) to .*? not excusable; (\d+) are concurrent, (\d+) have no party "
                  r"and (\d+) come from revisions that no recorded event explains\. Less (\d+) gained back", demo_text)
    assert m, "summary sentence"
    total, *parts, gains = (int(g) for g in m.groups())
    assert total == led.total_slip == 43  # the demo's story: 43 days (casefiles/riverside/story.toml)
    assert gains == -led.total.gains == 2
    assert sum(parts) - gains == total


def test_demo_quality_sentences_say_what_changed_since_the_snapshot_before(demo, demo_text):
    """After the baseline, each snapshot's sentence names only the checks that changed (from assess_casefile's results)."""
    from forensic.analysis.quality import assess_casefile
    from forensic.report.record_sections import short_title

    reports = assess_casefile(demo)
    for prev, q in zip(reports, reports[1:], strict=False):
        was = {c.key for c in prev.checks if c.passed is False}
        now = {c.key for c in q.checks if c.passed is False}
        head = f"{q.snapshot_id} (data date {long_date(q.data_date)}) passed"
        at = demo_text.index(head)
        sentence = demo_text[at: demo_text.index(".", demo_text.index(" checks ", at) + 20) + 1]
        newly = [short_title(c.title) for c in q.checks if c.key in now - was]
        if now == was and all((c.passed is None) == (d.passed is None) for c, d in zip(prev.checks, q.checks, strict=True)):
            assert f"with the same results as {prev.snapshot_id}" in sentence
        for title in newly:
            assert title in sentence
    assert demo_text.count("Lags: links with a positive lag") <= 2  # the full list once, not once per snapshot


def test_id_columns_are_as_wide_as_their_widest_id():
    """An identifier column sized with fit never wraps (widths measured with reportlab's stringWidth)."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    from forensic.report.pdf import data_table, styles

    t = data_table(("Activity", "Name"), [("HALL-ENV-CLD-N-EXTRA", "x" * 200)], (1, 5), fit=(0,), keep=False)
    st = styles()["small"]
    assert t._colWidths[0] >= stringWidth("HALL-ENV-CLD-N-EXTRA", st.fontName, st.fontSize) + 6
