"""The demo casefile's README: the project, the month-by-month story and what the analyses should find.

Written from the story (:mod:`.story`) and the figures computed from the
schedules (:mod:`.facts`): the windows with the half-step split (AACE RP
29R-03 MIP 3.3/3.4), concurrency (SCL Delay and Disruption Protocol, 2nd
ed.), time impacts (RP 52R-06) and the collapsed as-built but-for (MIP
3.8/3.9).
"""

from __future__ import annotations

from forensic.core.model import Snapshot

from .fragnets import FRAGNETS
from .setting import CALENDAR_NOTES, COMPLETION, CONTRACT_COMPLETION, PROJECT_NAME, RIV_KEY_DATE
from .story import (
    ACTUAL_CORRECTION,
    AREAS,
    BUT_FOR_DAYS,
    BUT_FOR_OVERLAP,
    CONCURRENCY,
    EVENTS,
    LEDGER_TOTAL,
    MONTHS,
    OUT_OF_SEQUENCE,
    SECONDARY_CRITICAL_FROM,
    SECONDARY_PATH,
    SNAPSHOT_IDS,
    WINDOW_FINDINGS,
)


def readme(snaps: dict[str, Snapshot], facts: dict) -> str:
    """The text of ``README.md``."""
    lines = _project_lines(snaps)
    lines += _month_rows(facts)
    lines += _event_lines()
    lines += _findings_lines(facts)
    return "\n".join(lines) + "\n"


def _project_lines(snaps: dict[str, Snapshot]) -> list[str]:
    """The title, the project and the head of the month-by-month table."""
    n_acts = len(snaps[SNAPSHOT_IDS[-1]].activities)
    lines = [
        f"# {PROJECT_NAME} (demo casefile)",
        "",
        "An invented project, made for this tool: the town of Merrowby, the river Sallow and",
        "every party are fictitious. The files here are written by",
        "`casefiles/generate_demo.py`; run it again to reproduce them byte for byte.",
        "",
        "## The project",
        "",
        "Merrowby Town Council (the employer, `OWN`) builds a four-storey library wing and a",
        "civic hall with a river terrace and flood wall on the bank of the Sallow. The main",
        "contractor is Tarrant & Vell Builders (`CON`). Two neutral causes appear: exceptional",
        "weather and river flooding (`WX`) and the power utility (`UTL`).",
        "",
        f"- {len(snaps['BL'].activities)} activities in the baseline, {n_acts} in the last "
        "update, in seven areas:",
        *(f"  `{k}` {v}" + ("," if i < len(AREAS) - 1 else ".")
          for i, (k, v) in enumerate(AREAS.items())),
        "- Calendars: " + "; ".join(f"`{k}` {v}" for k, v in CALENDAR_NOTES.items()) + ".",
        f"- Contract completion {CONTRACT_COMPLETION.isoformat()}; the baseline's practical "
        f"completion (`{COMPLETION}`) is the same day.",
        f"- Sectional key date: the river terrace (`M-RIV`) must be complete by "
        f"{RIV_KEY_DATE.isoformat()} for the Easter river festival (a finish-by "
        "constraint).",
        "- Acceleration data (`crash_days`, `crash_cost`) on the library and hall fit-out, the "
        "river terrace and commissioning.",
        "- Delay unit calendar days, retained logic, critical at total float <= 0.",
        "",
        "## Month by month",
        "",
        "| snapshot | data date | forecast completion | slip vs contract (days) | "
        "river terrace float | critical areas | what happened |",
        "|---|---|---|---|---|---|---|",
    ]
    return lines


def _month_rows(facts: dict) -> list[str]:
    """One row of the month-by-month table per snapshot."""
    lines: list[str] = []
    for sid, dd, text in MONTHS:
        areas = ", ".join(facts["path_areas"][sid]) or "-"
        lines.append(
            f"| {sid} | {dd.isoformat()} | {facts['completion'][sid].isoformat()} | "
            f"{facts['slip_days'][sid]:+d} | {facts['secondary_float'][sid]} | {areas} | {text} |"
        )
    return lines


def _event_lines() -> list[str]:
    """The table of delay events."""
    lines: list[str] = []
    lines += [
        "",
        "## Delay events",
        "",
        "| event | party | from | to | what | fragnet |",
        "|---|---|---|---|---|---|",
    ]
    for eid, title, party, start, finish, _acts, frag, _ref in EVENTS:
        lines.append(f"| {eid} | {party} | {start.isoformat()} | {finish.isoformat()} | "
                     f"{title} | {frag or '-'} |")
    return lines


def _window_row(label: str) -> str:
    """One row of the windows table: the findings the story states for a window."""
    f = WINDOW_FINDINGS[label]
    parts = [f"{p} {d:+d}" for p, d in f["parties"].items()]
    if f["concurrent"]:
        parts.append(f"concurrent {f['concurrent']}")
    who = ", ".join(parts) or "-"
    evs = " ".join(f["events"]) or "-"
    return (f"| {label} | {f['slip']:+d} | {f['progress']:+d} | {f['revision']:+d} | {who} | "
            f"{evs} |")


def _findings_lines(facts: dict) -> list[str]:
    """What the analyses should find: windows, ledger, concurrency, time impact, but-for and the rest."""
    slips = facts["slip_days"]
    c = CONCURRENCY
    lines: list[str] = []
    lt = LEDGER_TOTAL
    lines += [
        "",
        "## What the analyses should find",
        "",
        "Every figure below is in calendar days (the casefile's `delay_unit`), except floats and",
        "recovery shortenings, which are working days of each activity's calendar; dates are",
        "inclusive (a finish date is the last working day of the work). To see them yourself, from",
        "a source checkout:",
        "",
        "```",
        "python -m forensic windows casefiles/riverside",
        "python -m forensic impact casefiles/riverside --event EV03",
        "python -m forensic impact casefiles/riverside --event EV07",
        "python -m forensic but-for casefiles/riverside",
        "python -m forensic compare casefiles/riverside U05 U06",
        "python -m forensic report casefiles/riverside --out /tmp/riverside-full.pdf",
        "```",
        "",
        "The story and its figures are invented to exercise the method; they say nothing about any",
        "real project or contract and, as with any casefile, the results support, and do not",
        "replace, the judgement of a qualified scheduling professional.",
        "",
        "**Windows** (`forensic windows`; slip of the forecast completion per window, calendar "
        "days; the half-step splits it into progress and revision; days by party, with "
        "concurrent days apart):",
        "",
        "| window | slip | progress | revision | days by party | events |",
        "|---|---|---|---|---|---|",
        *(_window_row(label) for label in WINDOW_FINDINGS),
        "",
        f"Total {slips[SNAPSHOT_IDS[-1]]:+d} at {SNAPSHOT_IDS[-1]}. The ledger: "
        f"excusable and compensable {lt['excusable_compensable']}, excusable not compensable "
        f"{lt['excusable_noncompensable']}, not excusable {lt['non_excusable']}, concurrent "
        f"{lt['concurrent']}, gains {lt['gains']}; {lt['unexplained']} days unexplained; total "
        f"{lt['total']}.",
        "",
        "- **Critical path moves**: through the civic hall (`HALL`) up to U04, through the "
        "library wing (`LIB`) in U05 and from U07 on; both together in U06.",
        f"- **Concurrency**: {c['owner_event']} (employer's change, library path) and "
        f"{c['contractor_event']} (contractor's crane failure, hall path) both run from "
        f"{c['start'].isoformat()} to {c['finish'].isoformat()}, in window "
        f"{c['window'][0]}-{c['window'][1]}. The employer's delay reaches U05 as a revision "
        "(the archive work taken into the programme), the contractor's as lost progress. "
        "Removing the contractor's delays alone recovers nothing (the library path holds "
        "completion), removing the employer's alone 1 day, both 14: "
        f"{WINDOW_FINDINGS['-'.join(c['window'])]['concurrent']} concurrent days and 1 day the "
        f"employer's alone. The two paths are critical together in {c['critical_in']}.",
        "- **Time impact** (`forensic impact`; the unimpacted schedule is the update whose "
        "data date is the last on or before the event's start, AACE RP 52R-06): "
        "fragnet `fragnets/EV03` (change order CO-01) goes into "
        f"{FRAGNETS['EV03']['tia_update']} and delays completion "
        f"{FRAGNETS['EV03']['tia_days']} days; fragnet `fragnets/EV07` (utility cable) goes "
        f"into {FRAGNETS['EV07']['tia_update']} and float absorbs it "
        f"({FRAGNETS['EV07']['tia_days']} days). The fragnets' activities carry the ids the "
        "work has once the updates take it in (`CO1-...` from U05, `UTL-...` from U09), so "
        "the windows and but-for analyses recognise it.",
        "- **But-for** (`forensic but-for`, collapsed as-built from U10): without the "
        f"employer's delays completion would have been {BUT_FOR_DAYS['OWN']} days earlier, "
        f"without the contractor's {BUT_FOR_DAYS['CON']}, without the weather's "
        f"{BUT_FOR_DAYS['WX']} and the utility's {BUT_FOR_DAYS['UTL']} (by the end the library "
        "path controls, so the flood on the hall no longer counts); without every event "
        f"{BUT_FOR_DAYS['all events']} and without the excusable ones {BUT_FOR_DAYS['all excusable events']}. "
        "The single-party figures add up to less than the all-events one (overlap "
        f"{BUT_FOR_OVERLAP}): taking out one party's delays leaves the others' to control completion. "
        "Events without a fragnet count what the record shows they cost (estimated), and "
        "the contractor's re-plans EV10 and EV11 are not represented. The collapsed as-built "
        "and the contemporaneous windows answer different questions and differ here.",
        f"- **Float erosion**: `{SECONDARY_PATH}` on the river terrace path loses float month "
        f"by month against its key date and is critical from {SECONDARY_CRITICAL_FROM}.",
        f"- **Out-of-sequence progress** in {OUT_OF_SEQUENCE[0]}: `{OUT_OF_SEQUENCE[1]}` "
        f"started while `{OUT_OF_SEQUENCE[2]}` was unfinished.",
        f"- **Changed actual date**: `{ACTUAL_CORRECTION[0]}`'s actual finish reported in "
        f"{ACTUAL_CORRECTION[1]} is corrected in {ACTUAL_CORRECTION[2]}.",
        "- **Revisions**: a logic revision in U06 (link `LIB-L2-DRY -> LIB-L3-DRY` removed, "
        "`LIB-L1-DRY -> LIB-L3-DRY` added) and a duration revision in U07 (library curtain "
        "wall and HVAC commissioning), so the half-step split shows revision effects apart "
        "from progress effects.",
        "- **Parties**: EV01, EV03 employer (excusable, compensable); EV04, EV05, EV06, EV09 "
        "contractor (not excusable), and EV10, EV11 the contractor's own re-plans; EV02, EV08 "
        "weather and EV07 utility (excusable, not compensable).",
        "",
        "The numbers the tests pin are in `story.toml`.",
    ]
    return lines
