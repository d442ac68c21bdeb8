"""The demo's story: what happened each month, the delay events, the revisions and the as-built record.

The data the simulation (:mod:`.simulation`) turns into the monthly
updates, and the findings the analyses should reach (windows with the
half-step split, AACE RP 29R-03 MIP 3.3/3.4; the ledger; concurrency,
SCL Delay and Disruption Protocol, 2nd ed.; but-for, MIP 3.8/3.9), which
:mod:`.facts` checks against the schedules before anything is written.
"""

from __future__ import annotations

from datetime import date

from .fragnets import CO1_DATE, UTL_DATE
from .setting import BL_DATE

# Monthly updates: (snapshot id, data date, what happened in the month before it).
MONTHS = (
    ("BL", BL_DATE, "Baseline accepted with the contract. The critical path runs through the "
     "civic hall (piling, steel frame, cladding, interior) into commissioning; the library "
     "wing has 10 days of float, the river terrace 36 against its key date."),
    ("U01", date(2026, 4, 7), "Site set up; the old boat store came down faster than planned "
     "(7 days instead of 10) and the hall steelwork design was early. No delay."),
    ("U02", date(2026, 5, 5), "The Sallow flooded the site from 14 to 24 April (EV02, "
     "exceptional weather): all piling stopped, the hall path slips two weeks (+14, all the "
     "flood's). The employer's review of the facade design ran long (EV01), absorbed by "
     "float."),
    ("U03", date(2026, 6, 1), "The contractor poured the library ground slab while the lift "
     "pits were still being built (out-of-sequence progress). River wall piling started "
     "slowly (EV06) and the river terrace starts to lose float."),
    ("U04", date(2026, 7, 6), "The library frame gang is short of formwork (EV09) and the "
     "library float is nearly gone; completion holds. On 8 July (after this data date) the "
     "council orders the archive room, change order CO-01: fragnet fragnets/EV03 goes into "
     "this update for the time impact analysis (7 days)."),
    ("U05", date(2026, 8, 3), "Concurrency: the council's archive redesign (EV03) holds the "
     "library level 3 frame while the contractor's tower crane failure (EV04) stops the hall "
     "roof deck, both from 16 July to 7 August. CO-01 is now in the programme. Slip +14: the "
     "crane costs the hall 13 days (progress), the archive work the library 14 (revision); "
     "13 days are concurrent, 1 is the council's alone. The roof trusses' actual finish is "
     "reported two days early."),
    ("U06", date(2026, 9, 7), "Hall and library paths both critical. The archive slab "
     "strengthening (EV03) runs a day late (+1, council). Logic revision: the contractor puts "
     "on a second drylining gang (EV10) so library level 3 follows level 1 instead of level "
     "2, gaining 2 days. The trusses' actual finish is corrected."),
    ("U07", date(2026, 10, 5), "Duration revision: the contractor re-plans the library "
     "curtain wall (15 to 20 days an elevation) and HVAC commissioning (15 to 20) (EV11): "
     "+14, all revision, the contractor's. The critical path now runs through the library "
     "wing alone."),
    ("U08", date(2026, 11, 2), "The utility gives notice (26 October) that the incoming cable "
     "route is blocked (EV07, neutral): fragnet fragnets/EV07 goes into U07, the last update "
     "before the notice, for the time impact analysis, and float absorbs it. The curtain "
     "wall installer is short of labour (EV05): +1, the contractor's."),
    ("U09", date(2026, 12, 7), "Cable re-routing in the programme (no effect on completion). "
     "The curtain wall is still short of labour (EV05): +1, the contractor's. Frost stops the "
     "terrace drainage (EV08, exceptional weather). The river terrace path has lost its "
     "float."),
    ("U10", date(2027, 1, 4), "After the Christmas shutdown: the library curtain wall still "
     "late but no further slip; practical completion is forecast 43 days after the contract "
     "date, and the river terrace is behind its key date."),
)
UPDATES = tuple(m[0] for m in MONTHS[1:])

# Delay events: id, title, party, start, finish, activities hit, fragnet, reference.
EVENTS = (
    ("EV01", "Employer's review of the facade design took 24 days instead of 10", "OWN",
     date(2026, 4, 20), date(2026, 5, 8), ("PRE-FAC-REV",), None, "Letter TV/OWN/014"),
    ("EV02", "River Sallow flood: site under water, all piling suspended", "WX",
     date(2026, 4, 14), date(2026, 4, 24), ("HALL-SUB-PILE", "LIB-SUB-PILE"), None,
     "River gauge record; site diary 14-24 April"),
    ("EV03", "Change order CO-01: climate-controlled local-history archive on library level 3",
     "OWN", CO1_DATE, date(2026, 8, 24), ("CO1-DES", "CO1-STR", "LIB-L3-COL"), "EV03",
     "Instruction CO-01, 8 July 2026"),
    ("EV04", "Tower crane slewing-ring failure: hall roof deck lifting stopped", "CON",
     date(2026, 7, 16), date(2026, 8, 7), ("HALL-FRM-DECK",), None, "Crane hire report CR-3"),
    ("EV05", "Curtain wall installer short of labour on the library", "CON",
     date(2026, 10, 22), date(2027, 1, 7),
     ("LIB-ENV-CW-N", "LIB-ENV-CW-E", "LIB-ENV-CW-S", "LIB-ENV-CW-W"), None,
     "Progress meeting minutes 7-10"),
    ("EV06", "River wall piling subcontractor: low output and rig breakdowns", "CON",
     date(2026, 6, 1), date(2026, 9, 21), ("RIV-SHP-1", "RIV-SHP-2", "RIV-SHP-3", "RIV-ANC"),
     None, "Progress meeting minutes 4-8"),
    ("EV09", "Library frame gang short of formwork: levels 1 and 2 slow", "CON",
     date(2026, 6, 8), date(2026, 7, 17), ("LIB-L1-COL", "LIB-L1-SLB"),
     None, "Progress meeting minutes 5-6"),
    ("EV07", "Utility's incoming cable route blocked; cable redesigned and relaid", "UTL",
     UTL_DATE, date(2027, 1, 29), ("UTL-RTE", "UTL-CBL", "SYS-ENG"), "EV07",
     "Utility notice SVPN-2231"),
    ("EV08", "Prolonged frost: external drainage and concrete stopped", "WX",
     date(2026, 11, 23), date(2026, 12, 4), ("RIV-DRN",), None, "Weather station record"),
    # The contractor's own re-plans (programme revisions), recorded as its events so that
    # the windows analysis attributes the revision effect to the party who made it.
    ("EV10", "Contractor's re-sequencing: a second drylining gang takes library level 3 "
     "straight after level 1", "CON", date(2026, 8, 24), date(2026, 9, 4), ("LIB-L3-DRY",),
     None, "Revised programme narrative, rev. C"),
    ("EV11", "Contractor's re-plan: library curtain wall 20 days an elevation, HVAC "
     "commissioning 20 days", "CON", date(2026, 9, 21), date(2026, 10, 2),
     ("LIB-ENV-CW-N", "LIB-ENV-CW-E", "LIB-ENV-CW-S", "LIB-ENV-CW-W", "SYS-COM-ME"), None,
     "Revised programme narrative, rev. D"),
)

EVENTS = tuple(sorted(EVENTS))

# Programme revisions (the contractor's own changes to the plan), by update.
LOGIC_REVISIONS = {
    "U06": {
        "remove": [("LIB-L2-DRY", "LIB-L3-DRY", "FS", 0)],
        "add": [("LIB-L1-DRY", "LIB-L3-DRY", "FS", 0)],
    },
}
DURATION_REVISIONS = {
    "U07": {"LIB-ENV-CW-N": 20, "LIB-ENV-CW-E": 20, "LIB-ENV-CW-S": 20, "LIB-ENV-CW-W": 20,
            "SYS-COM-ME": 20},
}

# What the work really took (working days), where it differs from the plan.
AS_BUILT_DURATIONS = {
    "SITE-020": 7,  # early
    "LIB-SUB-PILE": 27,  # EV02: 10 days lost, 3 made up
    "PRE-STL-DES": 16, "HALL-SUB-CAPS": 17,  # early
    "PRE-FAC-REV": 24,  # EV01
    "HALL-SUB-PILE": 40,  # EV02: 10 working days lost to the flood
    "RIV-SHP-1": 20,  # EV06
    "RIV-SHP-2": 18, "RIV-SHP-3": 19, "RIV-ANC": 18,  # EV06
    "RIV-CAP-1": 10, "RIV-CAP-2": 10, "RIV-CAP-3": 11, "RIV-BKF": 13, "RIV-DRN": 19,  # EV08 frost
    "RIV-SUBB": 10,
    "RIV-SCR": 15, "RIV-CRP": 18,
    "LIB-SUB-PIT": 20, "LIB-SUB-SLAB": 10,  # out-of-sequence pour
    "LIB-L1-COL": 12, "LIB-L1-SLB": 18,  # EV09
    "CO1-DES": 34, "CO1-STR": 9,
    "HALL-FRM-DECK": 27,  # EV04: 12 working days without the crane
    "LIB-ENV-CW-N": 26, "LIB-ENV-CW-E": 24, "LIB-ENV-CW-S": 24, "LIB-ENV-CW-W": 22,  # EV05
    "UTL-RTE": 24,
}
# The as-built network's own logic changes: the library slab was poured
# after the caps, without waiting for the lift pits (out-of-sequence).
AS_BUILT_LINKS = {
    "remove": [("LIB-SUB-PIT", "LIB-SUB-SLAB", "FS", 0)],
    "add": [("LIB-SUB-CAPS", "LIB-SUB-SLAB", "FS", 0)],
}
AS_BUILT_CONSTRAINTS = {"LIB-SUB-SLAB": ("start-from", date(2026, 5, 26))}
OUT_OF_SEQUENCE = ("U03", "LIB-SUB-SLAB", "LIB-SUB-PIT")  # update, activity, unfinished pred
# One actual finish reported wrongly (two working days early) and corrected next month.
ACTUAL_CORRECTION = ("HALL-FRM-TRS", "U05", "U06", 2)
SECONDARY_PATH = "RIV-LND"  # the river terrace path whose float erodes
# The story's key facts (checked against the schedules before anything is written).
FINAL_SLIP_DAYS = 43  # U10 forecasts practical completion 43 calendar days late
EARLY_PATH = ("U02", "HALL")  # the longest path runs through the hall ...
LATE_PATH = ("U08", "LIB")  # ... and later through the library
SECONDARY_CRITICAL_FROM = "U09"  # the river terrace path's float first <= 0
CONCURRENCY = {
    "owner_event": "EV03", "contractor_event": "EV04",
    "start": date(2026, 7, 16), "finish": date(2026, 8, 7),  # both events running
    "window": ("U04", "U05"), "critical_in": "U06",  # both paths critical together
}
# What the windows analysis should find in each window (forensic.analysis.attribution.delay):
# the slip and its half-step split, the days by party (concurrent days apart),
# the concurrent days and the events behind the window's slip.
WINDOW_FINDINGS = {
    "BL-U01": {"slip": 0, "progress": 0, "revision": 0, "parties": {}, "concurrent": 0, "events": []},
    "U01-U02": {"slip": 14, "progress": 14, "revision": 0, "parties": {"WX": 14}, "concurrent": 0,
                "events": ["EV02"]},
    "U02-U03": {"slip": 0, "progress": 0, "revision": 0, "parties": {}, "concurrent": 0, "events": []},
    "U03-U04": {"slip": 0, "progress": 0, "revision": 0, "parties": {}, "concurrent": 0, "events": []},
    "U04-U05": {"slip": 14, "progress": 13, "revision": 1, "parties": {"OWN": 1}, "concurrent": 13,
                "events": ["EV03", "EV04"]},
    "U05-U06": {"slip": -1, "progress": 1, "revision": -2, "parties": {"OWN": 1, "CON": -2},
                "concurrent": 0, "events": ["EV03", "EV10"]},
    "U06-U07": {"slip": 14, "progress": 0, "revision": 14, "parties": {"CON": 14}, "concurrent": 0,
                "events": ["EV11"]},
    "U07-U08": {"slip": 1, "progress": 1, "revision": 0, "parties": {"CON": 1}, "concurrent": 0,
                "events": ["EV05"]},
    "U08-U09": {"slip": 1, "progress": 1, "revision": 0, "parties": {"CON": 1}, "concurrent": 0,
                "events": ["EV05"]},
    "U09-U10": {"slip": 0, "progress": 0, "revision": 0, "parties": {}, "concurrent": 0, "events": []},
}
CONCURRENCY_PARTIES = ["CON", "OWN"]
# The delay ledger over the whole record (calendar days).
LEDGER_TOTAL = {"excusable_compensable": 2, "excusable_noncompensable": 14, "non_excusable": 16,
                "concurrent": 13, "gains": -2, "unexplained": 0, "total": FINAL_SLIP_DAYS}
# But-for (collapsed as-built from U10, forensic.analysis.butfor): days by which completion
# would have been earlier without each party's delays, then the combined cases.
# Events without a fragnet take out what the record shows they cost (issue 17):
# the contractor's curtain wall labour shortage EV05, for one, 6/4/4/2 days on
# the elevations, not their whole time on site; EV10 and EV11 are not represented.
BUT_FOR_DAYS = {"OWN": 9, "CON": 2, "WX": 0, "UTL": 0, "all owner delays": 9, "all events": 36,
                "all excusable events": 22}
BUT_FOR_OVERLAP = 0
AREAS = {
    "GEN": "general milestones", "PRE": "design, reviews and off-site fabrication",
    "SITE": "site establishment and enabling works", "HALL": "civic hall",
    "LIB": "library wing", "RIV": "river terrace and flood wall",
    "SYS": "utilities, central plant, commissioning and handover",
}

SNAPSHOT_IDS = tuple(m[0] for m in MONTHS)
DATA_DATES = {m[0]: m[1] for m in MONTHS}
