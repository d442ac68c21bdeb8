"""The baseline network of the demo: about 170 activities in seven areas, built area by area.

:class:`Net` is an ordered activity list and link list; :func:`baseline`
builds the baseline programme (general milestones, pre-construction,
site, civic hall, library wing, river terrace, systems and handover) in
the order the casefile's tables list them. The critical path method
(Kelley and Walker 1959) then schedules it with the project's engine.
"""

from __future__ import annotations

from datetime import date

from .setting import COMPLETION, RIV_KEY_DATE

Spec = dict  # one activity: the columns of activities.csv that do not change with progress


class Net:
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


def baseline() -> Net:
    """The baseline programme, area by area, in the order of the casefile's tables."""
    n = Net()
    _start_and_preconstruction(n)
    _site(n)
    _civic_hall(n)
    _library(n)
    _river_terrace(n)
    _systems_and_handover(n)
    return n


def _start_and_preconstruction(n: Net) -> None:
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


def _site(n: Net) -> None:
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


def _civic_hall(n: Net) -> None:
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


def _library(n: Net) -> None:
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


def _river_terrace(n: Net) -> None:
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


def _systems_and_handover(n: Net) -> None:
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
