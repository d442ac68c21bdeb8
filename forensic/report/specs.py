"""What each kind of report section accepts from a template.

A template (``report_templates/*.toml``) lists sections by ``kind``. For each
kind this module says which wording keys (``[section.text]``) it needs, which
placeholders each of those texts may use, and which options it takes. The
template loader checks a template against these specs before anything is
computed, so a misspelt key or placeholder is reported with its place in the
file instead of surfacing half-way through a report.

Placeholders are filled from the analyses' result objects, already formatted
(dates as "4 May 2026", days as whole numbers, units pluralised).
"""

from __future__ import annotations

from dataclasses import dataclass, field

__all__ = ["OptionSpec", "SectionSpec", "SPECS"]


@dataclass(frozen=True, slots=True)
class OptionSpec:
    """An option of a section: its type, default and (for text) allowed values."""

    type: type
    default: object
    choices: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class SectionSpec:
    """A section kind: wording keys (required, with their placeholders), optional keys, options.

    ``protocol`` names the published method the section reports, for the
    method statement (empty when the section reports no analysis).
    """

    kind: str
    texts: dict[str, tuple[str, ...]]
    optional_texts: dict[str, tuple[str, ...]] = field(default_factory=dict)
    options: dict[str, OptionSpec] = field(default_factory=dict)
    protocol: str = ""


_SCOPE = OptionSpec(str, "all", ("all", "latest", "last-two"))

# Fields shared by every sentence: the project and the report's span.
COMMON = ("project", "baseline", "latest", "first_data_date", "last_data_date", "unit")

_MOVE = (
    *COMMON, "snapshot", "data_date", "previous", "previous_data_date", "previous_completion",
    "completion", "completion_id", "completion_name", "days", "days_unit", "slip", "slip_unit",
    "float", "path", "path_count",
)
_MILESTONE = (
    *COMMON, "milestone", "name", "first_snapshot", "first_float", "last_snapshot", "last_float",
    "change", "first_date", "last_date",
)

_WINDOW = (
    *COMMON, "window", "from_id", "to_id", "start", "end", "completion_before", "completion_after",
    "half_step_completion", "next_data_date", "days", "days_unit", "progress", "progress_text", "revision", "revision_text",
    "joined", "left", "contributors", "revision_events", "parties", "concurrent", "concurrent_parties",
)
_LEDGER = (
    *COMMON, "total_slip", "total_unit", "baseline_completion", "last_completion", "compensable",
    "noncompensable", "nonexcusable", "concurrent", "gains", "unassigned", "unattributed", "unexplained",
)
_IMPACT = (
    *COMMON, "event", "title", "party", "category", "into", "completion_before", "completion_after",
    "days", "days_unit", "inserted", "path", "reference", "represented", "why",
)
_RECOVERY = (
    *COMMON, "snapshot", "data_date", "asked", "asked_unit", "target", "current_completion", "completion",
    "recovered", "recovered_unit", "cost", "count", "count_activities", "activities", "earliest_completion", "max_working_days",
)

# Why the critical count and the longest path differ (summary and longest-path sections).
_CRITICAL_NOTE = (*COMMON, "snapshot", "critical", "critical_float", "path_count", "off_path", "off_path_reasons",
                  "path_not_critical", "path_float")

_FLOAT_LEDGER = (*COMMON, "total", "total_unit", "margin", "parties", "windows")
_AS_BUILT = (*COMMON, "source", "data_date", "completion", "pins", "pin_list", "relinked", "relinked_list", "warnings")
_BUTFOR = (
    *COMMON, "case", "events", "events_words", "event_titles", "count", "as_built_completion", "but_for_completion", "days", "days_unit",
    "not_represented", "source", "why",
)
_OVERLAP = (*COMMON, "sum", "sum_unit", "all_events", "all_events_unit", "overlap", "overlap_unit")
_ASPLANNED = (
    *COMMON, "snapshot", "data_date", "compared", "finished", "in_progress", "not_started", "added", "deleted",
    "late", "early", "on_time", "worst", "worst_name", "worst_days", "completion_id", "completion_name",
    "planned_completion", "completion", "completion_variance", "shown", "path_count",
)

SPECS: dict[str, SectionSpec] = {
    s.kind: s
    for s in (
        SectionSpec(
            "delay-summary",
            texts={},
            optional_texts={"intro": (*COMMON, "slip", "slip_unit"), "not_applicable": (*COMMON, "list"),
                            "caption": (*COMMON, "not_from_events", "unit")},
            options={"short": OptionSpec(bool, False)},
            protocol=(
                "Delay per event by every method side by side: windows (AACE RP 29R-03 MIP 3.4), time impact "
                "alone and in series (RP 52R-06; MIP 3.6/3.7), but-for (MIP 3.8)"
            ),
        ),
        SectionSpec(
            "reconciliation",
            texts={},
            optional_texts={"intro": COMMON, "pair": (*COMMON, "first", "second", "difference", "unit", "causes"),
                            "sensitivity": (*COMMON, "tolerance", "unit"), "moved": (*COMMON, "moved", "tolerance", "unit"),
                            "robust": (*COMMON, "moved", "tolerance", "unit")},
            protocol=(
                "Cross-check between methods and sensitivity of the windows split to its settings (AACE RP 29R-03, "
                "choice of method; SCL Delay and Disruption Protocol 2nd ed., Part B)"
            ),
        ),
        SectionSpec(
            "window-charts",
            texts={},
            optional_texts={
                "intro": COMMON,
                "caption": (*COMMON, "window", "from_id", "to_id", "start", "end", "days", "days_unit", "count",
                            "total", "movement", "events", "completion_before", "completion_after"),
            },
            options={"scope": _SCOPE},
            protocol=(
                "Critical path at the start and end of each window on a calendar axis, with the events acting in "
                "it (AACE RP 29R-03, MIP 3.4 exhibits; SCL Delay and Disruption Protocol 2nd ed., time slice windows)"
            ),
        ),
        SectionSpec(
            "as-built-path",
            texts={},
            optional_texts={
                "intro": (*COMMON, "count", "worked", "forecast", "windows", "first", "last", "data_date", "snapshot"),
                "caption": (*COMMON, "count", "worked", "forecast", "windows", "first", "last", "data_date", "snapshot"),
            },
            options={"table": OptionSpec(bool, True)},
            protocol=(
                "As-built critical path from the contemporaneous updates, window by window "
                "(AACE RP 49R-06; AACE RP 29R-03, MIPs 3.1-3.4)"
            ),
        ),
        SectionSpec(
            "near-critical",
            texts={},
            optional_texts={
                "intro": (*COMMON, "critical_float", "margins"),
                "caption": COMMON,
                "latest": (*COMMON, "snapshot", "counts"),
                "key_dates_intro": COMMON,
                "late": (*COMMON, "snapshot", "late"),
            },
            options={"margins": OptionSpec(list, [0, 5, 10])},
            protocol=(
                "Near-critical paths and float to the key dates, update by update "
                "(GAO Schedule Assessment Guide, GAO-16-89G, best practice 6; AACE RP 49R-06)"
            ),
        ),
        SectionSpec(
            "cover",
            texts={"lead": (*COMMON, "snapshots", "updates", "version", "template")},
            optional_texts={"note": (*COMMON, "version", "template")},
            options={"page_break": OptionSpec(bool, True)},
        ),
        SectionSpec("cautions", texts={"text": COMMON}),
        SectionSpec(
            "summary",
            texts={
                "later": (*COMMON, "baseline_completion", "completion", "slip", "slip_unit", "latest_data_date"),
                "earlier": (*COMMON, "baseline_completion", "completion", "slip", "slip_unit", "latest_data_date"),
                "unchanged": (*COMMON, "baseline_completion", "completion", "latest_data_date"),
            },
            optional_texts={
                "contract_after": (*COMMON, "contract_completion", "variance", "variance_unit"),
                "contract_before": (*COMMON, "contract_completion", "variance", "variance_unit"),
                "contract_on": (*COMMON, "contract_completion"),
                "float": (*COMMON, "float", "completion_id", "completion_name", "critical"),
                "critical_off_path": _CRITICAL_NOTE,
                "path_not_critical": _CRITICAL_NOTE,
                "key_dates": (*COMMON, "key_dates", "count"),
                "caption": COMMON,
                "parties": (*COMMON, "parties", "compensable", "noncompensable", "nonexcusable", "concurrent",
                            "gains", "unassigned", "unattributed", "total_slip", "total_unit"),
            },
            options={"chart": OptionSpec(bool, True)},
        ),
        SectionSpec(
            "method",
            texts={"text": (*COMMON, "progress_logic", "critical_float", "delay_unit", "snapshots")},
            optional_texts={"protocols": COMMON, "settings": COMMON},
        ),
        SectionSpec(
            "completion-trend",
            texts={
                "first": (*COMMON, "snapshot", "data_date", "completion", "completion_id", "completion_name", "float"),
                "later": _MOVE,
                "earlier": _MOVE,
                "unchanged": _MOVE,
            },
            optional_texts={"intro": COMMON, "caption": COMMON, "contract_line": (*COMMON, "contract_completion")},
            options={"scope": _SCOPE, "table": OptionSpec(bool, True)},
            protocol=(
                "Observational / static or dynamic / as-is: the forecast completion of each update "
                "read as it stood (AACE RP 29R-03, MIP 3.1 to 3.3)"
            ),
        ),
        SectionSpec(
            "float-erosion",
            texts={
                "eroded": _MILESTONE,
                "gained": _MILESTONE,
                "steady": _MILESTONE,
                "bands": (*COMMON, "snapshot", "data_date", "open", "negative", "critical", "finished", "critical_float"),
            },
            optional_texts={"contract": (*COMMON, "milestone", "name", "contract_date", "first_snapshot", "last_snapshot",
                                         "first_float", "last_float", "network_float"),
                            "intro": COMMON, "caption": COMMON, "bands_caption": COMMON, "missing": _MILESTONE},
            options={"scope": _SCOPE, "table": OptionSpec(bool, True), "band_chart": OptionSpec(bool, True)},
            protocol=(
                "Float trend of the completion and key milestones over the updates "
                "(GAO-16-89G, best practice 6; AACE RP 49R-06)"
            ),
        ),
        SectionSpec(
            "longest-path",
            texts={
                "sentence": (
                    *COMMON, "snapshot", "data_date", "count", "remaining", "next", "next_name",
                    "completion", "completion_id", "completion_name", "float",
                ),
            },
            optional_texts={"intro": COMMON, "caption": (*COMMON, "snapshot", "data_date"),
                            "critical_off_path": _CRITICAL_NOTE, "path_not_critical": _CRITICAL_NOTE,
                            "chains": (*COMMON, "snapshot", "chains", "chain_list")},
            options={"scope": OptionSpec(str, "all", ("all", "latest", "last-two")),
                     "table": OptionSpec(bool, False), "rows": OptionSpec(int, 30)},
            protocol=(
                "Longest path traced back from the completion through driving links "
                "(AACE RP 49R-06, Identifying the Critical Path)"
            ),
        ),
        SectionSpec(
            "windows",
            texts={"later": _WINDOW, "earlier": _WINDOW, "unchanged": _WINDOW},
            optional_texts={
                "intro": COMMON, "progress": _WINDOW, "revision": _WINDOW, "path_moved": _WINDOW,
                "path_same": _WINDOW, "concurrent": _WINDOW, "parties": _WINDOW, "path_caption": _WINDOW,
            },
            options={"scope": _SCOPE, "table": OptionSpec(bool, True), "contributors": OptionSpec(bool, True),
                     "paths": OptionSpec(bool, True), "path_rows": OptionSpec(int, 12),
                     "path_chart": OptionSpec(bool, False)},
            protocol=(
                "Observational / dynamic / contemporaneous split: windows analysis with the half-step "
                "split of each window into progress and revision (AACE RP 29R-03, MIP 3.4; SCL Delay and "
                "Disruption Protocol 2nd ed., time slice windows analysis)"
            ),
        ),
        SectionSpec(
            "slip-by-party",
            texts={"text": (*COMMON, "total", "total_unit", "parties", "concurrent", "windows")},
            optional_texts={"caption": COMMON},
            protocol=(
                "Slip attributed via contributing activities to events and parties, slice by slice (cut "
                "where events stop overlapping or the driving path switches; progress between updates at a "
                "uniform rate); concurrency by a but-for test per slice (SCL Protocol 2nd ed., core "
                "principle 10; AACE RP 29R-03, sec. 4.2)"
            ),
        ),
        SectionSpec(
            "ledger",
            texts={"balanced": _LEDGER, "unbalanced": _LEDGER},
            optional_texts={"intro": COMMON, "unexplained": _LEDGER},
            options={"cumulative": OptionSpec(bool, True)},
        ),
        SectionSpec(
            "float-ledger",
            texts={"used": _FLOAT_LEDGER, "none": _FLOAT_LEDGER},
            optional_texts={"intro": _FLOAT_LEDGER},
            protocol=(
                "Float used on paths near the critical path, by party, first come first served (GAO-16-89G best "
                "practice 6; SCL Delay and Disruption Protocol 2nd ed., core principle 8 on float)"
            ),
        ),
        SectionSpec(
            "time-impact",
            texts={"delayed": _IMPACT, "no_delay": _IMPACT},
            optional_texts={
                "intro": COMMON,
                "cumulative": (*COMMON, "into", "impact", "impact_unit", "sum", "sum_unit", "non_additivity", "events",
                               "bases"),
                "not_represented": _IMPACT,
                "no_cost": _IMPACT,
                "cumulative_warning": (*COMMON, "into", "impact", "impact_unit", "sum", "sum_unit", "non_additivity",
                                       "events", "data_date", "later", "count"),
                "none": COMMON,
            },
            options={"table": OptionSpec(bool, True)},
            protocol=(
                "Modelled / additive: time impact analysis, each event's fragnet inserted into the "
                "unimpacted update, alone and cumulatively (AACE RP 29R-03, MIP 3.6 and 3.7; AACE RP 52R-06)"
            ),
        ),
        SectionSpec(
            "acceleration",
            texts={"text": _RECOVERY},
            optional_texts={"intro": COMMON, "caption": COMMON, "not_asked": COMMON, "not_proven": _RECOVERY},
            options={"curve": OptionSpec(bool, True)},
            protocol="Time-cost trade-off of the remaining work (Kelley 1961; Fulkerson 1961)",
        ),
        SectionSpec(
            "but-for",
            texts={"earlier": _BUTFOR, "unchanged": _BUTFOR},
            optional_texts={
                "intro": COMMON, "as_built": _AS_BUILT, "pins": _AS_BUILT, "relinked": _AS_BUILT,
                "warnings": _AS_BUILT, "later": _BUTFOR, "not_represented": _BUTFOR, "notes_intro": COMMON,
                "overlap": _OVERLAP, "no_overlap": _OVERLAP, "below_baseline": _BUTFOR,
                "none": COMMON,
            },
            options={"table": OptionSpec(bool, True), "notes": OptionSpec(bool, True)},
            protocol=(
                "Modelled / subtractive / single simulation: but-for analysis on the collapsed as-built "
                "schedule, each party's delays removed alone, all owner delays, all events and all excusable "
                "events together (AACE RP 29R-03, MIP 3.8; SCL Delay and Disruption Protocol 2nd ed., collapsed "
                "as-built)"
            ),
        ),
        SectionSpec(
            "as-built",
            texts={"text": _ASPLANNED},
            optional_texts={"intro": COMMON, "subset": _ASPLANNED, "legend": _ASPLANNED},
            options={"rows": OptionSpec(int, 30)},
            protocol=(
                "Observational / static logic: as-planned versus as-built, the baseline against the last "
                "update activity by activity (AACE RP 29R-03, MIP 3.1 gross and 3.2 periodic)"
            ),
        ),
        SectionSpec(
            "quality",
            texts={
                "passed_all": (*COMMON, "snapshot", "data_date", "passed", "failed", "assessed", "failed_checks"),
                "failed_some": (*COMMON, "snapshot", "data_date", "passed", "failed", "assessed", "failed_checks"),
            },
            optional_texts={
                "intro": COMMON,
                "same": (*COMMON, "snapshot", "data_date", "passed", "failed", "assessed", "previous"),
                "changed": (*COMMON, "snapshot", "data_date", "passed", "failed", "assessed", "previous", "changes"),
            },
            options={
                "scope": OptionSpec(str, "latest", ("all", "latest", "last-two")),
                "details": OptionSpec(bool, False),
                "scorecard": OptionSpec(bool, True),
            },
            protocol=(
                "Source validation: schedule quality checks of each snapshot (DCMA-EA PAM 200.1 14-point "
                "assessment and practitioners' checks; AACE RP 29R-03, sec. 2.1)"
            ),
        ),
        SectionSpec(
            "changes",
            texts={
                "sentence": (*COMMON, "old", "new", "old_data_date", "new_data_date", "count", "path_count", "kinds"),
                "no_changes": (*COMMON, "old", "new", "old_data_date", "new_data_date", "count", "path_count", "kinds"),
            },
            optional_texts={"intro": COMMON},
            options={"scope": _SCOPE, "longest_path_only": OptionSpec(bool, True), "rows": OptionSpec(int, 40)},
            protocol="Changes between consecutive updates: logic, durations, progress and the longest path (AACE RP 29R-03, sec. 2.3)",
        ),
        SectionSpec(
            "inputs",
            texts={"text": (*COMMON, "version", "command", "template", "font", "files")},
        ),
    )
}
