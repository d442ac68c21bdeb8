"""Schedule quality: the DCMA 14-point assessment and practitioners' checks.

Before a schedule is relied on in a delay analysis it has to be shown fit
for use (AACE RP 29R-03, sec. 2.1, source validation). The Defense Contract
Management Agency's 14-point assessment (DCMA-EA PAM 200.1, *Earned Value
Management System (EVMS) Program Analysis Pamphlet*, October 2012) is the
check most often quoted; it is run on each snapshot with its published
thresholds, with a few checks that practitioners expect.

``checks`` holds the result types, the thresholds and the ratio measure,
which the others share and none imports back; ``dcma`` runs the 14 points;
``sequence`` finds out-of-sequence progress (also used by ``compare``);
``practice`` runs the practitioners' checks; ``assessment`` joins them
(``assess_quality``, ``assess_casefile``); ``tables`` gives the table and
the JSON object.

Every date and float comes from the scheduling engine
(:func:`forensic.core.engine.schedule`); working-day counts come from
:mod:`forensic.core.calendars`. Nothing here re-implements the critical path
method.

References
----------
DCMA-EA PAM 200.1, Earned Value Management System (EVMS) Program Analysis
Pamphlet, Defense Contract Management Agency, October 2012, sec. 4 (the
14-point schedule assessment).
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis.
GAO-16-89G, Schedule Assessment Guide, December 2015 (best practices 2, 6
and 7 on logic, float and the critical path).
"""

from forensic.core.faces import lazy_face

__all__ = ["BEI_LIMIT", "CPLI_LIMIT", "CP_TEST_CALENDAR_TOLERANCE", "CP_TEST_DELAY", "FS_LIMIT", "HARD_LIMIT", "HIGH_DURATION_DAYS", "HIGH_DURATION_LIMIT", "HIGH_FLOAT_DAYS", "HIGH_FLOAT_LIMIT", "INVALID_DATES_LIMIT", "LAGS_LIMIT", "LEADS_LIMIT", "LOGIC_LIMIT", "MISSED_LIMIT", "NEGATIVE_FLOAT_LIMIT", "PRACTICE", "SOURCE", "QUALITY_COLUMNS", "QualityCheck", "QualityReport", "assess_casefile", "assess_quality", "out_of_sequence_links", "quality_json", "quality_table"]

__getattr__, __dir__ = lazy_face(__name__, {
    "BEI_LIMIT": ".checks",
    "CPLI_LIMIT": ".checks",
    "CP_TEST_CALENDAR_TOLERANCE": ".checks",
    "CP_TEST_DELAY": ".checks",
    "FS_LIMIT": ".checks",
    "HARD_LIMIT": ".checks",
    "HIGH_DURATION_DAYS": ".checks",
    "HIGH_DURATION_LIMIT": ".checks",
    "HIGH_FLOAT_DAYS": ".checks",
    "HIGH_FLOAT_LIMIT": ".checks",
    "INVALID_DATES_LIMIT": ".checks",
    "LAGS_LIMIT": ".checks",
    "LEADS_LIMIT": ".checks",
    "LOGIC_LIMIT": ".checks",
    "MISSED_LIMIT": ".checks",
    "NEGATIVE_FLOAT_LIMIT": ".checks",
    "PRACTICE": ".checks",
    "SOURCE": ".checks",
    "QUALITY_COLUMNS": ".tables",
    "QualityCheck": ".checks",
    "QualityReport": ".checks",
    "assess_casefile": ".assessment",
    "assess_quality": ".assessment",
    "out_of_sequence_links": ".sequence",
    "quality_json": ".tables",
    "quality_table": ".tables",
})
