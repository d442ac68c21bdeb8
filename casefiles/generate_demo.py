"""Generate the demo casefile ``casefiles/riverside/``.

The project, the town, the river and every party are invented for this
tool: the Merrowby Riverside Library and Civic Hall, built for Merrowby
Town Council by Tarrant & Vell Builders on the bank of the river Sallow.

How the record is made
----------------------
1. A baseline network (``_baseline``) of about 170 activities in six areas.
2. An *as-built* network: the last programme (baseline + both fragnets +
   the revisions) with the durations that the work really took and the
   out-of-sequence start, scheduled once with the real engine from the
   baseline data date. Its early dates are the as-built dates.
3. Each monthly update is the programme known at its data date (the
   fragnets and revisions introduced by then) with progress read off the
   as-built dates: finished before the data date, in progress across it
   (remaining = working days from the data date to the as-built finish),
   or not started. Two deliberate deviations: one actual finish reported
   wrongly and corrected a month later.

Everything is deterministic (no randomness), so running the script again
reproduces the committed files byte for byte::

    python casefiles/generate_demo.py            # rewrites casefiles/riverside
    python casefiles/generate_demo.py --out DIR  # writes the casefile into DIR

The story (what happened each month and what the analyses should find) is
in ``MONTHS`` and ``EVENTS`` below, in the casefile's ``README.md`` and, as
numbers for tests, in its ``story.toml``.
"""

from __future__ import annotations

import argparse
import csv
import io
import sys
from datetime import date, timedelta
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from forensic.core.calendars import workdays_between  # noqa: E402
from forensic.core.engine import ScheduleResult, schedule  # noqa: E402
from forensic.core.model import Activity, Calendar, Link, Project, Snapshot, frozen_mapping  # noqa: E402

__all__ = ["NAME", "generate", "main"]

NAME = "riverside"
PROJECT_NAME = "Merrowby Riverside Library and Civic Hall"
COMPLETION = "M900"
CONTRACT_COMPLETION = date(2027, 6, 10)
RIV_KEY_DATE = date(2027, 3, 25)  # sectional completion: river terrace open for the festival

ACT_COLUMNS = (
    "id", "name", "kind", "duration", "remaining", "actual_start", "actual_finish",
    "calendar", "constraint", "constraint_date", "party", "area", "percent_complete",
    "crash_days", "crash_cost",
)
LINK_COLUMNS = ("pred", "succ", "type", "lag")
EVENT_COLUMNS = (
    "id", "title", "party", "category", "start", "finish", "activities", "fragnet", "reference",
)

PARTIES = (
    ("OWN", "Merrowby Town Council (employer)", "owner"),
    ("CON", "Tarrant & Vell Builders Ltd (main contractor)", "contractor"),
    ("WX", "Exceptional weather and river flooding", "neutral"),
    ("UTL", "Sallow Valley Power Networks (statutory utility)", "neutral"),
)

# ---------------------------------------------------------------- calendars


def _days(first: date, last: date) -> list[date]:
    return [first + timedelta(n) for n in range((last - first).days + 1)]


PUBLIC_HOLIDAYS = [
    date(2026, 4, 3), date(2026, 4, 6), date(2026, 5, 4), date(2026, 5, 25),
    date(2026, 8, 31), date(2026, 12, 25), date(2026, 12, 28), date(2027, 1, 1),
    date(2027, 3, 26), date(2027, 3, 29), date(2027, 5, 3), date(2027, 5, 31),
    date(2027, 8, 30), date(2027, 12, 27), date(2027, 12, 28),
]
SITE_SHUTDOWN = _days(date(2026, 12, 21), date(2027, 1, 1))  # Christmas shutdown, 5-day site
FRAME_SHUTDOWN = _days(date(2026, 12, 24), date(2027, 1, 1))  # shorter for the frame gangs
FACTORY_SHUTDOWN = _days(date(2026, 8, 3), date(2026, 8, 14))  # fabricators' summer closure


def _holidays(*extra: list[date], workdays: tuple[str, ...]) -> tuple[date, ...]:
    names = ("mon", "tue", "wed", "thu", "fri", "sat", "sun")
    days = set(PUBLIC_HOLIDAYS)
    for block in extra:
        days.update(block)
    return tuple(sorted(d for d in days if names[d.weekday()] in workdays))


WEEK5 = ("mon", "tue", "wed", "thu", "fri")
WEEK6 = (*WEEK5, "sat")
WEEK7 = (*WEEK6, "sun")
CALENDARS = {
    "5d": Calendar("5d", WEEK5, _holidays(SITE_SHUTDOWN, workdays=WEEK5)),
    "6d": Calendar("6d", WEEK6, _holidays(FRAME_SHUTDOWN, workdays=WEEK6)),
    "7d": Calendar("7d", WEEK7, ()),
    "fab": Calendar(
        "fab", WEEK5, _holidays(FACTORY_SHUTDOWN, FRAME_SHUTDOWN, workdays=WEEK5)
    ),
}
CALENDAR_NOTES = {
    "5d": "site works: Monday-Friday, public holidays, Christmas shutdown 21 Dec 2026 - 1 Jan 2027",
    "6d": "frame and substructure gangs: Monday-Saturday, public holidays, 24 Dec - 1 Jan",
    "7d": "curing, drying and testing: every day",
    "fab": "off-site fabrication: Monday-Friday, public holidays, factory closed 3-14 Aug 2026",
}
PROJECT = Project(
    name=PROJECT_NAME,
    default_calendar="5d",
    completion=COMPLETION,
    contract_completion=CONTRACT_COMPLETION,
    delay_unit="calendar-days",
    progress_logic="retained",
    critical_float=0,
)

# ------------------------------------------------------------------ network

Spec = dict  # one activity: the columns of activities.csv that do not change with progress


class _Net:
    """An ordered activity list and link list, built by the helpers below."""

    def __init__(self) -> None:
        self.acts: dict[str, Spec] = {}
        self.links: list[tuple[str, str, str, int]] = []

    def a(self, id_, name, dur, area, cal="5d", party="CON", kind="task", crash=None,
          constraint=None):
        if id_ in self.acts:
            raise ValueError(f"duplicate activity {id_}")
        self.acts[id_] = {
            "id": id_, "name": name, "kind": kind, "duration": dur, "calendar": cal,
            "constraint": constraint[0] if constraint else None,
            "constraint_date": constraint[1] if constraint else None,
            "party": party, "area": area,
            "crash_days": crash[0] if crash else None,
            "crash_cost": crash[1] if crash else None,
        }

    def ms(self, id_, name, area, start=False, constraint=None):
        self.a(id_, name, 0, area, kind="opening-milestone" if start else "closing-milestone",
               constraint=constraint)

    def l(self, pred, succ, typ="FS", lag=0):  # noqa: E743 - short name reads like the table
        self.links.append((pred, succ, typ, lag))

    def chain(self, *ids):
        for p, s in zip(ids, ids[1:], strict=False):
            self.l(p, s)


BL_DATE = date(2026, 3, 2)
LEVELS = ("L0", "L1", "L2", "L3")
FIT_TRADES = (  # library fit-out per level: (code, name, duration, crash days, cost per day)
    ("MEP1", "mechanical and electrical first fix", 15, (3, 2400)),
    ("DRY", "drylining and partitions", 12, (3, 1800)),
    ("MEP2", "mechanical and electrical second fix", 10, (2, 2400)),
    ("CEIL", "suspended ceilings", 8, (2, 1500)),
    ("FLR", "floor finishes", 6, None),
    ("JNR", "joinery and library shelving", 10, (2, 1600)),
    ("DEC", "decoration", 6, None),
)


def _baseline() -> _Net:
    n = _Net()
    # General milestones.
    n.ms("M000", "Notice to proceed", "GEN", start=True)
    # Pre-construction: design, owner's reviews, fabrication (area PRE).
    pre = [
        ("PRE-STL", "hall steelwork", 20, 10, 25),
        ("PRE-FAC", "curtain wall and cladding", 25, 10, 40),
        ("PRE-MEP", "building services", 30, 10, None),
        ("PRE-SEAT", "raked seating and stage machinery", 20, 10, 45),
    ]
    for code, what, d_des, d_rev, d_fab in pre:
        n.a(f"{code}-DES", f"Contractor's design: {what}", d_des, "PRE")
        n.a(f"{code}-REV", f"Employer's review and acceptance: {what}", d_rev, "PRE", party="OWN")
        n.l("M000", f"{code}-DES")
        n.l(f"{code}-DES", f"{code}-REV")
        if d_fab:
            n.a(f"{code}-FAB", f"Fabricate and deliver: {what}", d_fab, "PRE", cal="fab")
            n.l(f"{code}-REV", f"{code}-FAB")
    for code, what, d in (("PRE-AHU", "air handling units", 50), ("PRE-SWG", "main switchgear", 45),
                          ("PRE-LIFT", "library lifts", 60)):
        n.a(code, f"Manufacture and deliver {what}", d, "PRE", cal="fab")
        n.l("PRE-MEP-REV", code)
    n.a("PRE-SHELF-INFO", "Employer's information: shelving layout and loadings", 20, "PRE",
        party="OWN")
    n.a("PRE-SHELF-FAB", "Manufacture library shelving", 40, "PRE", cal="fab")
    n.chain("M000", "PRE-SHELF-INFO", "PRE-SHELF-FAB")
    n.a("PRE-RIV-CONS", "River authority consent for the outfall (employer to obtain)", 60, "PRE",
        party="OWN")
    n.l("M000", "PRE-RIV-CONS")

    # Site establishment and enabling works (area SITE).
    n.a("SITE-010", "Site set-up, welfare and hoarding", 10, "SITE")
    n.a("SITE-020", "Demolish the old boat store", 10, "SITE")
    n.a("SITE-030", "Site clearance and piling mat", 8, "SITE", cal="6d")
    n.a("SITE-040", "Divert the existing water main", 15, "SITE")
    n.a("SITE-050", "Tower crane base", 4, "SITE", cal="6d")
    n.a("SITE-055", "Cure tower crane base", 7, "SITE", cal="7d")
    n.a("SITE-060", "Erect tower crane", 4, "SITE")
    n.a("SITE-070", "Temporary site power and lighting", 5, "SITE")
    n.chain("M000", "SITE-010", "SITE-020", "SITE-030", "SITE-050", "SITE-055", "SITE-060")
    n.l("SITE-010", "SITE-040")
    n.l("SITE-010", "SITE-070")
    for id_, name, d in (("SITE-EXT-W", "Permanent water connection", 5),
                         ("SITE-EXT-F", "Foul sewer connection", 8),
                         ("SITE-EXT-T", "Telecoms ducts and chambers", 6)):
        n.a(id_, name, d, "SITE")
        n.l("SITE-040", id_)
        n.l(id_, "SYS-COM-EL")

    # Civic hall (area HALL): substructure, steel frame, envelope, interior.
    n.a("HALL-SUB-PILE", "Hall bored piling", 30, "HALL", cal="6d")
    n.a("HALL-SUB-CAPS", "Hall pile caps and ground beams", 20, "HALL", cal="6d")
    n.a("HALL-SUB-PIT", "Orchestra pit and services trenches", 15, "HALL", cal="6d")
    n.a("HALL-SUB-SLAB", "Hall ground slab", 10, "HALL", cal="6d")
    n.a("HALL-SUB-CURE", "Cure hall ground slab", 10, "HALL", cal="7d")
    n.l("SITE-030", "HALL-SUB-PILE")
    n.l("SITE-040", "HALL-SUB-PILE")
    n.l("HALL-SUB-PILE", "HALL-SUB-CAPS", "SS", 10)
    n.l("HALL-SUB-PILE", "HALL-SUB-CAPS", "FF", 5)
    n.chain("HALL-SUB-CAPS", "HALL-SUB-PIT", "HALL-SUB-SLAB", "HALL-SUB-CURE")
    n.a("HALL-FRM-COL", "Erect hall columns and foyer frame", 15, "HALL", cal="6d")
    n.a("HALL-FRM-TRS", "Erect long-span roof trusses", 20, "HALL", cal="6d")
    n.a("HALL-FRM-DECK", "Hall metal roof deck", 15, "HALL", cal="6d")
    n.a("HALL-FRM-ALN", "Align, bolt up and inspect hall frame", 5, "HALL")
    n.ms("M-HALL-FRM", "Hall frame complete", "HALL")
    n.l("HALL-SUB-CAPS", "HALL-FRM-COL")
    n.l("SITE-060", "HALL-FRM-COL")
    n.l("PRE-STL-FAB", "HALL-FRM-COL")
    n.chain("HALL-FRM-COL", "HALL-FRM-TRS", "HALL-FRM-DECK", "HALL-FRM-ALN", "M-HALL-FRM")
    n.a("HALL-ENV-ROOF", "Hall roof membrane and insulation", 20, "HALL")
    n.a("HALL-ENV-CLD-N", "Hall rainscreen cladding, north elevation", 18, "HALL")
    n.a("HALL-ENV-CLD-E", "Hall rainscreen cladding, east elevation", 18, "HALL")
    n.a("HALL-ENV-CLD-W", "Hall rainscreen cladding, west elevation", 18, "HALL")
    n.a("HALL-ENV-GLZ", "Foyer curtain wall", 20, "HALL")
    n.ms("M200", "Hall watertight", "HALL")
    n.l("M-HALL-FRM", "HALL-ENV-ROOF")
    n.l("M-HALL-FRM", "HALL-ENV-CLD-N")
    n.chain("HALL-ENV-CLD-N", "HALL-ENV-CLD-E", "HALL-ENV-CLD-W")
    n.l("M-HALL-FRM", "HALL-ENV-GLZ")
    n.l("PRE-FAC-FAB", "HALL-ENV-GLZ")
    for x in ("HALL-ENV-ROOF", "HALL-ENV-CLD-W", "HALL-ENV-GLZ"):
        n.l(x, "M200")
    hall_int = [
        ("HALL-INT-SCAF", "Erect full-height birdcage scaffold", 8, None),
        ("HALL-INT-HLMEP", "High-level services first fix", 30, (4, 2600)),
        ("HALL-INT-RAFT", "Acoustic ceiling rafts", 15, (3, 2200)),
        ("HALL-INT-LGT", "Stage lighting bars and rigging", 10, None),
        ("HALL-INT-STRK", "Strike birdcage scaffold", 5, None),
        ("HALL-INT-SEAT", "Install raked seating structure", 20, (4, 3100)),
        ("HALL-INT-STG", "Install stage and stage machinery", 25, (3, 3400)),
        ("HALL-INT-WALL", "Acoustic wall panels", 20, (4, 1900)),
        ("HALL-INT-LLMEP", "Low-level services second fix", 15, (3, 2400)),
        ("HALL-INT-FLR", "Hall floor finishes", 10, None),
        ("HALL-INT-DEC", "Hall decoration", 10, None),
    ]
    for id_, name, d, crash in hall_int:
        n.a(id_, name, d, "HALL", crash=crash)
    n.l("M200", "HALL-INT-SCAF")
    n.l("HALL-SUB-CURE", "HALL-INT-SCAF")
    n.chain("HALL-INT-SCAF", "HALL-INT-HLMEP", "HALL-INT-RAFT", "HALL-INT-LGT", "HALL-INT-STRK",
            "HALL-INT-SEAT")
    n.l("HALL-INT-HLMEP", "HALL-INT-RAFT", "SS", 10)
    n.l("PRE-SEAT-FAB", "HALL-INT-SEAT")
    n.l("HALL-INT-STRK", "HALL-INT-STG")
    n.l("PRE-SEAT-FAB", "HALL-INT-STG")
    n.l("HALL-INT-STRK", "HALL-INT-WALL")
    n.l("HALL-INT-WALL", "HALL-INT-LLMEP", "SS", 5)
    n.l("HALL-INT-SEAT", "HALL-INT-FLR")
    n.l("HALL-INT-LLMEP", "HALL-INT-FLR")
    n.chain("HALL-INT-FLR", "HALL-INT-DEC")
    n.l("HALL-INT-STG", "HALL-INT-DEC")
    n.a("HALL-INT-FOY", "Foyer fit-out, bar and box office", 30, "HALL", crash=(5, 1700))
    n.l("M200", "HALL-INT-FOY")
    n.a("HALL-BOH-MEP", "Back-of-house services: dressing rooms and green room", 15, "HALL")
    n.a("HALL-BOH-FIT", "Back-of-house fit-out: dressing rooms and green room", 20, "HALL")
    n.l("M200", "HALL-BOH-MEP")
    n.chain("HALL-BOH-MEP", "HALL-BOH-FIT", "M-HALL-RDY")
    n.a("HALL-TST-ACOU", "Acoustic testing and tuning", 10, "HALL", cal="7d")
    n.a("HALL-TST-STG", "Stage machinery load tests", 7, "HALL", cal="7d")
    n.ms("M-HALL-RDY", "Hall ready for commissioning", "HALL")
    n.l("HALL-INT-DEC", "HALL-TST-ACOU")
    n.l("HALL-INT-STG", "HALL-TST-STG")
    for x in ("HALL-TST-ACOU", "HALL-TST-STG", "HALL-INT-FOY"):
        n.l(x, "M-HALL-RDY")

    # Library wing (area LIB): substructure, concrete frame, envelope, fit-out.
    n.a("LIB-SUB-PILE", "Library CFA piling", 20, "LIB", cal="6d")
    n.a("LIB-SUB-CAPS", "Library pile caps and ground beams", 15, "LIB", cal="6d")
    n.a("LIB-SUB-PIT", "Lift pits and basement book store walls", 10, "LIB", cal="6d")
    n.a("LIB-SUB-SLAB", "Library ground slab", 8, "LIB", cal="6d")
    n.a("LIB-SUB-CURE", "Cure library ground slab", 7, "LIB", cal="7d")
    n.l("SITE-030", "LIB-SUB-PILE")
    n.l("LIB-SUB-PILE", "LIB-SUB-CAPS", "SS", 8)
    n.l("LIB-SUB-PILE", "LIB-SUB-CAPS", "FF", 4)
    n.chain("LIB-SUB-CAPS", "LIB-SUB-PIT", "LIB-SUB-SLAB", "LIB-SUB-CURE")
    prev = "LIB-SUB-CURE"
    for lvl, nm in (("L1", "level 1"), ("L2", "level 2"), ("L3", "level 3"), ("RF", "roof")):
        n.a(f"LIB-{lvl}-COL", f"Library columns and cores to {nm}", 6, "LIB", cal="6d")
        n.a(f"LIB-{lvl}-SLB", f"Library {nm} slab: formwork, reinforcement, pour", 8, "LIB",
            cal="6d")
        n.a(f"LIB-{lvl}-CUR", f"Cure library {nm} slab and strike", 7, "LIB", cal="7d")
        n.chain(prev, f"LIB-{lvl}-COL", f"LIB-{lvl}-SLB", f"LIB-{lvl}-CUR")
        prev = f"LIB-{lvl}-CUR"
    n.l("SITE-060", "LIB-L1-COL")
    n.ms("M100", "Library frame complete", "LIB")
    n.l("LIB-RF-CUR", "M100")
    n.a("LIB-ENV-ROOF", "Library roofing and roof plant deck", 15, "LIB")
    n.l("M100", "LIB-ENV-ROOF")
    cw = ["LIB-ENV-CW-N", "LIB-ENV-CW-E", "LIB-ENV-CW-S", "LIB-ENV-CW-W"]
    for x, side in zip(cw, ("north", "east", "south", "west"), strict=True):
        n.a(x, f"Library curtain wall, {side} elevation", 15, "LIB")
    n.l("M100", cw[0])
    n.l("PRE-FAC-FAB", cw[0])
    for p, s in zip(cw, cw[1:], strict=False):
        n.l(p, s, "SS", 8)
        n.l(p, s, "FF", 3)
    n.ms("M-LIB-WT", "Library watertight", "LIB")
    n.l("LIB-ENV-ROOF", "M-LIB-WT")
    n.l(cw[-1], "M-LIB-WT")
    slab_above = {"L0": "LIB-L1-CUR", "L1": "LIB-L2-CUR", "L2": "LIB-L3-CUR", "L3": "LIB-RF-CUR"}
    for lvl in LEVELS:
        ids = []
        for code, what, d, crash in FIT_TRADES:
            x = f"LIB-{lvl}-{code}"
            n.a(x, f"Library {lvl}: {what}", d, "LIB", crash=crash)
            ids.append(x)
        n.l(slab_above[lvl], ids[0])
        n.l("PRE-MEP-REV", ids[0])
        n.l(ids[0], ids[1], "SS", 5)
        n.l(ids[0], ids[1], "FF", 3)
        n.l("M-LIB-WT", ids[1])
        n.chain(*ids[1:])
        n.l("PRE-SHELF-FAB", f"LIB-{lvl}-JNR")
    for code, *_ in FIT_TRADES:  # each trade gang works up the building
        for lo, hi in zip(LEVELS, LEVELS[1:], strict=False):
            n.l(f"LIB-{lo}-{code}", f"LIB-{hi}-{code}")
    n.a("LIB-LIFT-INS", "Install library lifts", 20, "LIB", crash=(4, 2100))
    n.a("LIB-LIFT-TST", "Lift testing and certification", 5, "LIB", cal="7d")
    n.l("LIB-SUB-PIT", "LIB-LIFT-INS")
    n.l("M-LIB-WT", "LIB-LIFT-INS")
    n.l("PRE-LIFT", "LIB-LIFT-INS")
    n.chain("LIB-LIFT-INS", "LIB-LIFT-TST")
    n.a("LIB-AHU", "Lift and install rooftop air handling units", 8, "LIB")
    n.l("LIB-ENV-ROOF", "LIB-AHU")
    n.l("PRE-AHU", "LIB-AHU")
    n.a("LIB-B-RACK", "Basement book store: mobile shelving", 10, "LIB")
    n.l("LIB-L0-MEP2", "LIB-B-RACK")
    n.ms("M-LIB-RDY", "Library ready for commissioning", "LIB")
    n.l("LIB-B-RACK", "M-LIB-RDY")
    for x in ("LIB-L3-DEC", "LIB-LIFT-TST", "LIB-AHU"):
        n.l(x, "M-LIB-RDY")
    n.l("M-LIB-WT", "SITE-080")  # tower crane comes down once the library is closed in

    # River terrace and flood wall (area RIV).
    riv = [
        ("RIV-SHP-1", "Sheet pile river wall, section 1 (upstream)", 12, None, None),
        ("RIV-SHP-2", "Sheet pile river wall, section 2 (centre)", 12, None, None),
        ("RIV-SHP-3", "Sheet pile river wall, section 3 (downstream)", 12, None, None),
        ("RIV-CAP-1", "Capping beam, section 1", 8, "6d", None),
        ("RIV-CAP-2", "Capping beam, section 2", 8, "6d", None),
        ("RIV-CAP-3", "Capping beam, section 3", 8, "6d", None),
        ("RIV-ANC", "Ground anchors and tie rods", 12, None, (3, 1400)),
        ("RIV-BKF", "Backfill behind the river wall", 10, None, (2, 1100)),
        ("RIV-SCR", "Rock armour scour protection at the wall toe", 12, None, (2, 1300)),
        ("RIV-OUT", "Drainage outfall through the river wall", 8, None, None),
        ("RIV-DRN", "Site drainage and attenuation tank", 15, None, (3, 1200)),
        ("RIV-CRP", "Service yard and access road", 15, None, (3, 1000)),
        ("RIV-SUBB", "Terrace sub-base", 8, None, (2, 900)),
        ("RIV-PAV", "Stone paving to the river terrace", 20, None, (4, 1500)),
        ("RIV-STP", "River steps and landing stage", 15, None, (3, 1700)),
        ("RIV-PNT", "Floating pontoon and gangway", 10, None, None),
        ("RIV-BAL", "Terrace balustrades", 10, None, (2, 800)),
        ("RIV-LGT", "Terrace lighting", 8, None, None),
        ("RIV-LND", "Soft landscaping and planting", 10, None, (2, 700)),
    ]
    for id_, name, d, cal, crash in riv:
        n.a(id_, name, d, "RIV", cal=cal or "5d", crash=crash)
    # In-river work is allowed only from June (river authority's fish-spawning window).
    n.acts["RIV-SHP-1"]["constraint"] = "start-from"
    n.acts["RIV-SHP-1"]["constraint_date"] = date(2026, 5, 18)
    n.a("RIV-CUR", "Cure capping beams", 7, "RIV", cal="7d")
    n.ms("M-RIV", "River terrace complete", "RIV")
    n.l("SITE-020", "RIV-SHP-1")
    n.chain("RIV-SHP-1", "RIV-SHP-2", "RIV-SHP-3")
    for k in (1, 2, 3):
        n.l(f"RIV-SHP-{k}", f"RIV-CAP-{k}")
    n.chain("RIV-CAP-1", "RIV-CAP-2", "RIV-CAP-3", "RIV-CUR", "RIV-ANC", "RIV-BKF", "RIV-SCR",
            "RIV-OUT", "RIV-DRN", "RIV-CRP", "RIV-SUBB", "RIV-PAV", "RIV-BAL", "RIV-LGT",
            "RIV-LND", "M-RIV")
    n.l("PRE-RIV-CONS", "RIV-OUT")
    n.chain("RIV-BKF", "RIV-STP", "RIV-PNT", "RIV-BAL")
    # Sectional completion: the terrace must open for the river festival.
    n.acts["M-RIV"]["constraint"] = "finish-by"
    n.acts["M-RIV"]["constraint_date"] = RIV_KEY_DATE

    # Central plant, utilities, commissioning and handover (area SYS).
    n.a("SITE-080", "Dismantle tower crane", 4, "SITE")
    n.a("SYS-SUB", "Utility substation and incoming HV cable", 30, "SYS", party="UTL",
        constraint=("start-from", date(2026, 9, 1)))
    n.a("SYS-ENG", "Utility energises the permanent supply", 2, "SYS", party="UTL")
    n.ms("M400", "Permanent power available", "SYS")
    n.l("SITE-070", "SYS-SUB")
    n.chain("SYS-SUB", "SYS-ENG", "M400")
    n.a("SYS-SWG", "Install main switchgear and distribution boards", 10, "SYS")
    n.l("PRE-SWG", "SYS-SWG")
    n.l("LIB-L0-MEP1", "SYS-SWG")
    n.l("SYS-SWG", "SYS-ENG")
    n.a("SYS-BMS", "Building management system installation", 20, "SYS", crash=(4, 2000))
    n.l("SYS-SWG", "SYS-BMS")
    comm = [
        ("SYS-COM-EL", "Commission electrical installation", 10, "5d", (2, 2600)),
        ("SYS-COM-ME", "Commission heating, ventilation and cooling", 15, "5d", (3, 2800)),
        ("SYS-COM-FIRE", "Commission fire alarm and sprinklers", 10, "5d", (2, 2500)),
        ("SYS-IST", "Integrated systems test, fire and life safety", 5, "7d", None),
        ("SYS-BCI", "Building control completion inspection", 3, "5d", None),
        ("SYS-SNAG", "Snagging and defects clearance", 15, "5d", (3, 2200)),
        ("SYS-OM", "Handover files, manuals and staff training", 10, "5d", None),
    ]
    for id_, name, d, cal, crash in comm:
        n.a(id_, name, d, "SYS", cal=cal, crash=crash)
    for x in ("M400", "M-LIB-RDY", "M-HALL-RDY", "SYS-BMS"):
        n.l(x, "SYS-COM-EL")
    n.chain("SYS-COM-EL", "SYS-COM-ME")
    n.l("SYS-COM-EL", "SYS-COM-FIRE")
    n.l("SYS-COM-ME", "SYS-IST")
    n.l("SYS-COM-FIRE", "SYS-IST")
    n.chain("SYS-IST", "SYS-BCI", "SYS-SNAG")
    n.l("SYS-COM-EL", "SYS-OM", "SS", 5)
    n.a("SITE-090", "Remove site set-up and reinstate", 10, "SITE")
    n.l("SITE-080", "SITE-090")
    n.l("RIV-LND", "SITE-090", "SS", 5)
    n.ms(COMPLETION, "Practical completion", "GEN")
    for x in ("SYS-SNAG", "SYS-OM", "SITE-090", "M-RIV"):
        n.l(x, COMPLETION)
    return n


# ----------------------------------------------------------------- fragnets

# EV03: the council orders a climate-controlled local-history archive on
# library level 3 (change order CO-01), instructed on 8 July 2026.
CO1_DATE = date(2026, 7, 8)
# EV07: the utility finds the planned incoming cable route blocked and must
# redesign and relay it; notice given on 26 October 2026.
UTL_DATE = date(2026, 10, 26)


def _fragnet_ev03() -> _Net:
    n = _Net()
    n.ms("CO1-INS", "Change order CO-01 instructed: local-history archive", "LIB", start=True,
         constraint=("start-from", CO1_DATE))
    n.a("CO1-DES", "Employer's design of the archive room and its services", 15, "LIB",
        party="OWN")
    n.a("CO1-STR", "Strengthen level 3 slab and add archive plant plinth", 8, "LIB", cal="6d")
    n.a("CO1-PLT", "Manufacture archive climate plant", 30, "LIB", cal="fab")
    n.a("CO1-MEP", "Install archive climate plant and gas suppression", 10, "LIB", crash=(2, 2900))
    n.l("M000", "CO1-INS")
    n.chain("CO1-INS", "CO1-DES", "CO1-STR")
    n.l("CO1-DES", "CO1-PLT")
    n.l("LIB-L2-CUR", "CO1-STR")
    n.l("CO1-STR", "LIB-L3-COL")
    n.l("CO1-PLT", "CO1-MEP")
    n.l("LIB-L3-MEP1", "CO1-MEP")
    n.l("CO1-MEP", "LIB-L3-MEP2")
    n.l("CO1-MEP", "SYS-COM-ME")
    return n


def _fragnet_ev07() -> _Net:
    n = _Net()
    n.ms("UTL-NOT", "Utility notice: incoming cable route blocked", "SYS", start=True,
         constraint=("start-from", UTL_DATE))
    n.a("UTL-RTE", "Utility redesigns the incoming cable route", 20, "SYS", party="UTL")
    n.a("UTL-CBL", "Utility lays the replacement incoming cable", 15, "SYS", party="UTL")
    n.l("M000", "UTL-NOT")
    n.chain("UTL-NOT", "UTL-RTE", "UTL-CBL", "SYS-ENG")
    return n


# Which update each fragnet is analysed in (time impact analysis: inserted
# into the update whose data date is the last on or before the event's start,
# AACE RP 52R-06), the update that first carries its activities as part of
# the programme, and the delay to completion the story states for it.
FRAGNETS = {
    "EV03": {"build": _fragnet_ev03, "tia_update": "U04", "in_programme_from": "U05",
             "tia_days": 7},
    "EV07": {"build": _fragnet_ev07, "tia_update": "U07", "in_programme_from": "U09",
             "tia_days": 0},
}


# -------------------------------------------------------------------- story

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

# --------------------------------------------------------------- simulation

SNAPSHOT_IDS = tuple(m[0] for m in MONTHS)
DATA_DATES = {m[0]: m[1] for m in MONTHS}


def _rank(snapshot_id: str) -> int:
    return SNAPSHOT_IDS.index(snapshot_id)


def _programme(snapshot_id: str) -> _Net:
    """The programme as known at a snapshot: fragnets taken in and revisions made by then."""
    net = _baseline()
    k = _rank(snapshot_id)
    for spec in FRAGNETS.values():
        if _rank(spec["in_programme_from"]) <= k:
            frag = spec["build"]()
            net.acts.update(frag.acts)
            net.links.extend(frag.links)
    for sid, rev in LOGIC_REVISIONS.items():
        if _rank(sid) <= k:
            for link in rev["remove"]:
                net.links.remove(link)
            net.links.extend(rev["add"])
    for sid, rev in DURATION_REVISIONS.items():
        if _rank(sid) <= k:
            for aid, d in rev.items():
                net.acts[aid]["duration"] = d
    return net


def _activity(spec: Spec, **progress) -> Activity:
    return Activity(
        id=spec["id"], name=spec["name"], duration=spec["duration"], kind=spec["kind"],
        calendar=spec["calendar"], constraint=spec["constraint"],
        constraint_date=spec["constraint_date"], party=spec["party"], area=spec["area"],
        crash_days=spec["crash_days"],
        crash_cost=None if spec["crash_cost"] is None else float(spec["crash_cost"]),
        **progress,
    )


def _snapshot_of(net: _Net, sid: str, data_date: date, progress: dict[str, dict]) -> Snapshot:
    acts = {
        aid: _activity(spec, **progress.get(aid, {"remaining": spec["duration"]}))
        for aid, spec in net.acts.items()
    }
    links = tuple(Link(p, s, t, lag) for p, s, t, lag in net.links)
    return Snapshot(id=sid, data_date=data_date, activities=frozen_mapping(acts), links=links,
                    role="baseline" if sid == "BL" else "update")


def _as_built() -> dict[str, tuple[date, date]]:
    """As-built (start, finish) of every activity: the last programme as the work really went."""
    net = _programme(SNAPSHOT_IDS[-1])
    for aid, d in AS_BUILT_DURATIONS.items():
        net.acts[aid]["duration"] = d
    for link in AS_BUILT_LINKS["remove"]:
        net.links.remove(link)
    net.links.extend(AS_BUILT_LINKS["add"])
    for aid, (kind, day) in AS_BUILT_CONSTRAINTS.items():
        net.acts[aid]["constraint"], net.acts[aid]["constraint_date"] = kind, day
    res = schedule(_snapshot_of(net, "AS-BUILT", BL_DATE, {}), CALENDARS, PROJECT)
    return {aid: (r.early_start, r.early_finish) for aid, r in res.activities.items()}


def _progress(net: _Net, data_date: date, built: dict[str, tuple[date, date]]) -> dict[str, dict]:
    """Progress at a data date, read off the as-built dates."""
    out: dict[str, dict] = {}
    for aid, spec in net.acts.items():
        start, finish = built[aid]
        cal = CALENDARS[spec["calendar"]]
        if spec["kind"] != "task":
            if finish < data_date:
                out[aid] = {"actual_start": finish, "actual_finish": finish, "remaining": 0,
                            "percent_complete": 100.0}
            else:
                out[aid] = {"remaining": 0, "percent_complete": 0.0}
        elif finish < data_date:
            out[aid] = {"actual_start": start, "actual_finish": finish, "remaining": 0,
                        "percent_complete": 100.0}
        elif start < data_date:
            remaining = workdays_between(cal, data_date, finish + timedelta(1))
            done = workdays_between(cal, start, data_date)
            out[aid] = {"actual_start": start, "remaining": remaining,
                        "percent_complete": float(round(100 * done / (done + remaining)))}
        else:
            out[aid] = {"remaining": spec["duration"], "percent_complete": 0.0}
    return out


def build_snapshots() -> dict[str, Snapshot]:
    """Every snapshot of the casefile, in memory (baseline first)."""
    built = _as_built()
    snaps: dict[str, Snapshot] = {}
    for sid in SNAPSHOT_IDS:
        net = _programme(sid)
        dd = DATA_DATES[sid]
        prog = {} if sid == "BL" else _progress(net, dd, built)
        aid, wrong_in, _, early = ACTUAL_CORRECTION
        if sid == wrong_in and "actual_finish" in prog[aid]:
            cal = CALENDARS[net.acts[aid]["calendar"]]
            reported = _add_workdays(cal, prog[aid]["actual_finish"], -early)
            prog[aid] = {**prog[aid], "actual_finish": reported}
        snaps[sid] = _snapshot_of(net, sid, dd, prog)
    return snaps


def _add_workdays(cal: Calendar, d: date, n: int) -> date:
    from forensic.core.calendars import add_workdays

    return add_workdays(cal, d, n)


def schedule_all(snaps: dict[str, Snapshot]) -> dict[str, ScheduleResult]:
    return {sid: schedule(s, CALENDARS, PROJECT) for sid, s in snaps.items()}


# ------------------------------------------------------------------ writing


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, float):
        return str(int(v)) if v == int(v) else repr(v)
    return str(v)


def _csv(rows: list[dict], columns: tuple[str, ...]) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(columns)
    for row in rows:
        w.writerow([_cell(row.get(c)) for c in columns])
    return buf.getvalue()


def _activity_rows(acts) -> list[dict]:
    rows = []
    for a in acts:
        rows.append({
            "id": a.id, "name": a.name, "kind": a.kind, "duration": a.duration,
            "remaining": a.remaining, "actual_start": a.actual_start,
            "actual_finish": a.actual_finish, "calendar": a.calendar, "constraint": a.constraint,
            "constraint_date": a.constraint_date, "party": a.party, "area": a.area,
            "percent_complete": a.percent_complete, "crash_days": a.crash_days,
            "crash_cost": a.crash_cost,
        })
    return rows


def _link_rows(links) -> list[dict]:
    return [{"pred": x.pred, "succ": x.succ, "type": x.type, "lag": x.lag} for x in links]


def _toml_list(items) -> str:
    return "[" + ", ".join(items) + "]"


def _manifest() -> str:
    out = [
        "# Demo casefile: an invented project (see README.md). Generated by",
        "# casefiles/generate_demo.py; edit the generator, not this file.",
        'format = "forensic-casefile/2"',
        'events = "events.csv"',
        "",
        "[project]",
        f'name = "{PROJECT_NAME}"',
        f'completion = "{COMPLETION}"',
        f"contract_completion = {CONTRACT_COMPLETION.isoformat()}",
        f'default_calendar = "{PROJECT.default_calendar}"',
        f'delay_unit = "{PROJECT.delay_unit}"',
        f'progress_logic = "{PROJECT.progress_logic}"',
        f"critical_float = {PROJECT.critical_float}",
    ]
    for pid, name, role in PARTIES:
        out += ["", "[[party]]", f'id = "{pid}"', f'name = "{name}"', f'role = "{role}"']
    for cid, cal in CALENDARS.items():
        out += [
            "", f"# {CALENDAR_NOTES[cid]}", "[[calendar]]", f'id = "{cid}"',
            "workdays = " + _toml_list(f'"{d}"' for d in cal.workdays),
            "holidays = " + _toml_list(d.isoformat() for d in cal.holidays),
            "extra_workdays = []",
        ]
    for sid in SNAPSHOT_IDS:
        out += ["", "[[snapshot]]", f'id = "{sid}"']
        if sid == "BL":
            out.append('role = "baseline"')
        out += [
            f"data_date = {DATA_DATES[sid].isoformat()}",
            f'activities = "snapshots/{sid}/activities.csv"',
            f'links = "snapshots/{sid}/links.csv"',
        ]
    return "\n".join(out) + "\n"


def _events_csv() -> str:
    rows = [
        {"id": eid, "title": title, "party": party, "start": start, "finish": finish,
         "activities": " ".join(acts), "fragnet": frag, "reference": ref}
        for eid, title, party, start, finish, acts, frag, ref in EVENTS
    ]
    return _csv(rows, EVENT_COLUMNS)


def fragnet_as_filed(eid: str) -> _Net:
    """The fragnet as written to ``fragnets/<eid>/``.

    Its activities carry the ids that the same work has in the updates that
    later take the change into the programme (``CO1-...`` from U05,
    ``UTL-...`` from U09), so the time impact, windows and but-for analyses
    follow one piece of work under one id. Inserting it into an update that
    already has those ids is refused by the time impact analysis.
    """
    return FRAGNETS[eid]["build"]()


def _fragnet_files(eid: str) -> dict[str, str]:
    frag = fragnet_as_filed(eid)
    acts = [_activity(spec, remaining=spec["duration"], percent_complete=0.0)
            for spec in frag.acts.values()]
    links = [Link(p, s, t, lag) for p, s, t, lag in frag.links]
    return {
        f"fragnets/{eid}/activities.csv": _csv(_activity_rows(acts), ACT_COLUMNS),
        f"fragnets/{eid}/links.csv": _csv(_link_rows(links), LINK_COLUMNS),
    }


def story_facts(snaps: dict[str, Snapshot], res: dict[str, ScheduleResult]) -> dict:
    """The numbers the story states, computed from the schedules (and checked by ``_check``)."""
    facts = {
        "completion": {sid: r.completion for sid, r in res.items()},
        "slip_days": {sid: (r.completion - CONTRACT_COMPLETION).days for sid, r in res.items()},
        "secondary_float": {sid: r[SECONDARY_PATH].total_float for sid, r in res.items()},
        "path_areas": {
            sid: sorted({snaps[sid].activities[a].area for a in r.longest_path}
                        & {"HALL", "LIB", "RIV"})
            for sid, r in res.items()
        },
    }
    return facts


def tia_delay(snaps: dict[str, Snapshot], eid: str) -> int:
    """Calendar days the fragnet of ``eid`` adds to its update's completion (a plain insertion)."""
    spec = FRAGNETS[eid]
    snap = snaps[spec["tia_update"]]
    frag = fragnet_as_filed(eid)
    acts = dict(snap.activities)
    acts.update({k: _activity(v, remaining=v["duration"]) for k, v in frag.acts.items()})
    links = snap.links + tuple(Link(p, s, t, lag) for p, s, t, lag in frag.links)
    impacted = Snapshot(snap.id, snap.data_date, frozen_mapping(acts), links, snap.role)
    before = schedule(snap, CALENDARS, PROJECT).completion
    after = schedule(impacted, CALENDARS, PROJECT).completion
    return (after - before).days


def _check(snaps: dict[str, Snapshot], res: dict[str, ScheduleResult]) -> None:
    """Refuse to write a record whose data does not tell the story told in README and story.toml."""
    facts = story_facts(snaps, res)
    problems = []
    if res["BL"].completion != CONTRACT_COMPLETION:
        problems.append(f"baseline completion {res['BL'].completion} is not the contract date")
    if facts["slip_days"][SNAPSHOT_IDS[-1]] != FINAL_SLIP_DAYS:
        problems.append(f"final slip {facts['slip_days'][SNAPSHOT_IDS[-1]]} != {FINAL_SLIP_DAYS}")
    if facts["path_areas"][EARLY_PATH[0]] != [EARLY_PATH[1]]:
        problems.append(f"early critical path areas {facts['path_areas'][EARLY_PATH[0]]}")
    if facts["path_areas"][LATE_PATH[0]] != [LATE_PATH[1]]:
        problems.append(f"late critical path areas {facts['path_areas'][LATE_PATH[0]]}")
    both = facts["path_areas"][CONCURRENCY["critical_in"]]
    if both != ["HALL", "LIB"]:
        problems.append(f"{CONCURRENCY['critical_in']} should have hall and library critical: {both}")
    floats = [facts["secondary_float"][s] for s in SNAPSHOT_IDS]
    if any(b > a for a, b in zip(floats, floats[1:], strict=False)) or floats[-1] > 0:
        problems.append(f"secondary path float does not erode to critical: {floats}")
    upd, act, pred = OUT_OF_SEQUENCE
    a, p = snaps[upd].activities[act], snaps[upd].activities[pred]
    if not (a.is_started and not p.is_finished):
        problems.append(f"{upd}: {act} is not out of sequence")
    aid, wrong_in, fixed_in, _ = ACTUAL_CORRECTION
    if snaps[wrong_in].activities[aid].actual_finish == snaps[fixed_in].activities[aid].actual_finish:
        problems.append(f"{aid}: actual finish not corrected")
    for eid, spec in FRAGNETS.items():
        gain = tia_delay(snaps, eid)
        if gain != spec["tia_days"]:
            problems.append(f"fragnet {eid} delays completion by {gain} days, not {spec['tia_days']}")
    slips = facts["slip_days"]
    for a, b in zip(SNAPSHOT_IDS, SNAPSHOT_IDS[1:], strict=False):
        told = WINDOW_FINDINGS[f"{a}-{b}"]
        if told["slip"] != slips[b] - slips[a]:
            problems.append(f"window {a}-{b} slips {slips[b] - slips[a]}, the story says {told['slip']}")
        if told["progress"] + told["revision"] != told["slip"]:
            problems.append(f"window {a}-{b}: progress + revision is not the slip")
        if sum(told["parties"].values()) + told["concurrent"] != told["slip"]:
            problems.append(f"window {a}-{b}: parties + concurrent is not the slip")
    for r in res.values():
        if r.warnings:
            problems.append("; ".join(r.warnings))
    if problems:
        raise SystemExit("demo casefile does not tell its story:\n  " + "\n  ".join(problems))


def _story_toml(facts: dict) -> str:
    def table(name: str, values: dict, fmt) -> list[str]:
        return ["", f"[{name}]", *(f"{k} = {fmt(v)}" for k, v in values.items())]

    out = [
        "# Key facts of the demo story, for tests and for checking analyses against.",
        "# Generated by casefiles/generate_demo.py from the schedules of the snapshots",
        "# (forensic.core.engine.schedule, calendar-day slips against the contract date).",
        f'casefile = "{NAME}"',
        f'completion_milestone = "{COMPLETION}"',
        f"contract_completion = {CONTRACT_COMPLETION.isoformat()}",
        f"baseline_completion = {facts['completion']['BL'].isoformat()}",
        "baseline_gap_days = 0",
        f'final_update = "{SNAPSHOT_IDS[-1]}"',
        f"final_slip_days = {FINAL_SLIP_DAYS}",
        f'secondary_path_activity = "{SECONDARY_PATH}"',
        f"secondary_path_key_date = {RIV_KEY_DATE.isoformat()}",
        f'secondary_path_critical_from = "{SECONDARY_CRITICAL_FROM}"',
        "",
        "[critical_path_moves]",
        f'early_update = "{EARLY_PATH[0]}"',
        f'early_area = "{EARLY_PATH[1]}"',
        f'late_update = "{LATE_PATH[0]}"',
        f'late_area = "{LATE_PATH[1]}"',
        "",
        "[concurrency]",
        f'owner_event = "{CONCURRENCY["owner_event"]}"',
        f'contractor_event = "{CONCURRENCY["contractor_event"]}"',
        f"start = {CONCURRENCY['start'].isoformat()}",
        f"finish = {CONCURRENCY['finish'].isoformat()}",
        f'window = ["{CONCURRENCY["window"][0]}", "{CONCURRENCY["window"][1]}"]',
        f'critical_in = "{CONCURRENCY["critical_in"]}"',
        f"days = {WINDOW_FINDINGS['-'.join(CONCURRENCY['window'])]['concurrent']}",
        "parties = " + _toml_list(f'"{x}"' for x in CONCURRENCY_PARTIES),
        'owner_path_area = "LIB"',
        'contractor_path_area = "HALL"',
        "",
        "[out_of_sequence]",
        f'update = "{OUT_OF_SEQUENCE[0]}"',
        f'activity = "{OUT_OF_SEQUENCE[1]}"',
        f'unfinished_predecessor = "{OUT_OF_SEQUENCE[2]}"',
        "",
        "[actual_correction]",
        f'activity = "{ACTUAL_CORRECTION[0]}"',
        f'reported_in = "{ACTUAL_CORRECTION[1]}"',
        f'corrected_in = "{ACTUAL_CORRECTION[2]}"',
        "",
        "[logic_revision]",
        f'update = "{next(iter(LOGIC_REVISIONS))}"',
        "removed = " + _toml_list(f'["{p}", "{s}", "{t}"]'
                                  for p, s, t, _ in LOGIC_REVISIONS["U06"]["remove"]),
        "added = " + _toml_list(f'["{p}", "{s}", "{t}"]'
                                for p, s, t, _ in LOGIC_REVISIONS["U06"]["add"]),
        "",
        "[duration_revision]",
        f'update = "{next(iter(DURATION_REVISIONS))}"',
        *(f'"{k}" = {v}' for k, v in DURATION_REVISIONS["U07"].items()),
    ]
    for eid, spec in FRAGNETS.items():
        out += ["", f"[fragnets.{eid}]", f'folder = "fragnets/{eid}"',
                f'tia_update = "{spec["tia_update"]}"',
                f'in_programme_from = "{spec["in_programme_from"]}"',
                f"tia_days = {spec['tia_days']}"]
    out += ["", "# What the windows analysis finds in each window: slip, half-step split,",
            "# days by party (concurrent days apart), concurrent days, events behind the slip."]
    for label, f in WINDOW_FINDINGS.items():
        parties = "{" + ", ".join(f"{k} = {v}" for k, v in f["parties"].items()) + "}"
        out += ["", f"[windows.{label}]", f"slip = {f['slip']}", f"progress_slip = {f['progress']}",
                f"revision_slip = {f['revision']}", f"by_party = {parties}",
                f"concurrent = {f['concurrent']}",
                "events = " + _toml_list(f'"{e}"' for e in f["events"])]
    out += ["", "[ledger_total]", *(f"{k} = {v}" for k, v in LEDGER_TOTAL.items())]
    out += ["", "# But-for (collapsed as-built from the last update): days earlier without each",
            "# party's delays.", "[but_for]", *(f'"{k}" = {v}' for k, v in BUT_FOR_DAYS.items())]
    out += table("slip_days", facts["slip_days"], str)
    out += table("forecast_completion", facts["completion"], lambda d: d.isoformat())
    out += table("secondary_float", facts["secondary_float"], str)
    out += table("critical_areas", facts["path_areas"],
                 lambda v: _toml_list(f'"{x}"' for x in v))
    parties = {eid: party for eid, _, party, *_ in EVENTS}
    out += table("event_party", parties, lambda v: f'"{v}"')
    return "\n".join(out) + "\n"


def _readme(snaps: dict[str, Snapshot], facts: dict) -> str:
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
    for sid, dd, text in MONTHS:
        areas = ", ".join(facts["path_areas"][sid]) or "-"
        lines.append(
            f"| {sid} | {dd.isoformat()} | {facts['completion'][sid].isoformat()} | "
            f"{facts['slip_days'][sid]:+d} | {facts['secondary_float'][sid]} | {areas} | {text} |"
        )
    slips = facts["slip_days"]
    windows = [
        f"{a}-{b}: {slips[b] - slips[a]:+d}" for a, b in zip(SNAPSHOT_IDS, SNAPSHOT_IDS[1:],
                                                               strict=False)
    ]
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
    c = CONCURRENCY
    def findings(label: str) -> str:
        f = WINDOW_FINDINGS[label]
        parts = [f"{p} {d:+d}" for p, d in f["parties"].items()]
        if f["concurrent"]:
            parts.append(f"concurrent {f['concurrent']}")
        who = ", ".join(parts) or "-"
        evs = " ".join(f["events"]) or "-"
        return (f"| {label} | {f['slip']:+d} | {f['progress']:+d} | {f['revision']:+d} | {who} | "
                f"{evs} |")

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
        *(findings(label) for label in WINDOW_FINDINGS),
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
    return "\n".join(lines) + "\n"


def files() -> dict[str, str]:
    """Every file of the casefile: relative path -> text."""
    snaps = build_snapshots()
    res = schedule_all(snaps)
    _check(snaps, res)
    facts = story_facts(snaps, res)
    out = {"casefile.toml": _manifest(), "events.csv": _events_csv()}
    for sid, snap in snaps.items():
        out[f"snapshots/{sid}/activities.csv"] = _csv(
            _activity_rows(snap.activities.values()), ACT_COLUMNS)
        out[f"snapshots/{sid}/links.csv"] = _csv(_link_rows(snap.links), LINK_COLUMNS)
    for eid in FRAGNETS:
        out.update(_fragnet_files(eid))
    out["story.toml"] = _story_toml(facts)
    out["README.md"] = _readme(snaps, facts)
    return out


def generate(out_dir: Path) -> list[Path]:
    """Write the casefile into ``out_dir`` (created if needed); returns the files written."""
    written = []
    for rel, text in files().items():
        path = Path(out_dir) / rel
        path.parent.mkdir(parents=True, exist_ok=True)
        tmp = path.with_name(path.name + ".tmp")
        with open(tmp, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
        tmp.replace(path)
        written.append(path)
    return written


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=Path(__file__).resolve().parent / NAME,
                        help="folder to write the casefile into (default: %(default)s)")
    args = parser.parse_args(argv)
    paths = generate(args.out)
    print(f"wrote {len(paths)} files to {args.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
