"""The demo's two fragnets: change order CO-01 (EV03) and the utility's cable re-route (EV07).

A fragnet is the network of added work that represents one delay event,
inserted into the update before the event for a time impact analysis (AACE
RP 52R-06; RP 29R-03 MIP 3.6/3.7). Its activities carry the ids the same
work has once the updates take the change into the programme.
"""

from __future__ import annotations

from datetime import date

from .network import Net

# EV03: the council orders a climate-controlled local-history archive on
# library level 3 (change order CO-01), instructed on 8 July 2026.
CO1_DATE = date(2026, 7, 8)
# EV07: the utility finds the planned incoming cable route blocked and must
# redesign and relay it; notice given on 26 October 2026.
UTL_DATE = date(2026, 10, 26)


def fragnet_ev03() -> Net:
    n = Net()
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


def fragnet_ev07() -> Net:
    n = Net()
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
    "EV03": {"build": fragnet_ev03, "tia_update": "U04", "in_programme_from": "U05",
             "tia_days": 7},
    "EV07": {"build": fragnet_ev07, "tia_update": "U07", "in_programme_from": "U09",
             "tia_days": 0},
}


def fragnet_as_filed(eid: str) -> Net:
    """The fragnet as written to ``fragnets/<eid>/``.

    Its activities carry the ids that the same work has in the updates that
    later take the change into the programme (``CO1-...`` from U05,
    ``UTL-...`` from U09), so the time impact, windows and but-for analyses
    follow one piece of work under one id. Inserting it into an update that
    already has those ids is refused by the time impact analysis.
    """
    return FRAGNETS[eid]["build"]()
