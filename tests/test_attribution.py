"""Attribution of a window's slip to activities, events and parties; concurrency; the ledger."""

from dataclasses import replace
from datetime import date

from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.analysis.attribution.delay import (
    analyse_delay,
    contributors_table,
    delay_json,
    ledger_table,
)
from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.core.model import Activity, Fragnet, Link, frozen_mapping

from .delay_cases import D0, casefile, day, event, ms, snap, task
from .test_windows import chain_case, logic_change_case, random_updates


def contributors(att):
    return [(c.activity, c.days, c.event, c.party, c.category) for c in att.contributors]


def test_single_chain_delayed_by_one_owner_event():
    """A's 4 lost days (worked in test_windows) all go to the owner's event EV1 (compensable)."""
    base = chain_case()
    cf = casefile(base.snapshots, [event("EV1", "OWN", "excusable-compensable", day(3), day(6), ["A"])])
    att = analyse_delay(cf).attributions[0]
    # Chain M <- B <- A: v(M) = v(B) = v(A) = 4 and A has no driver, so A keeps all 4.
    assert contributors(att) == [("A", 4, "EV1", "OWN", "excusable-compensable")]
    assert dict(att.by_party) == {"OWN": 4}
    assert (att.unexplained, att.concurrent.days) == (0, 0)


def test_no_event_leaves_the_days_with_the_performer_unexplained():
    """Without an event A's 4 days go to its performer, the contractor, flagged unexplained."""
    att = analyse_delay(chain_case()).attributions[0]
    assert contributors(att) == [("A", 4, None, "CON", "non-excusable")]
    assert att.unexplained == 4


def test_event_outside_the_window_does_not_cover():
    """An event dated after the later data date covers nothing in this window (rule: dates overlap)."""
    cf = casefile(chain_case().snapshots, [event("EV9", "OWN", "excusable-compensable", day(40), day(45), ["A"])])
    att = analyse_delay(cf).attributions[0]
    assert att.contributors[0].event is None


def late_finish_case():
    """A(10) -> B(10) -> M; A finished 2 days late on day 11 and B was held at the data date, day 12."""
    bl = snap("BL", D0, [task("A", 10, party="OWN"), task("B", 10), ms()], [("A", "B"), ("B", "M")], role="baseline")
    u1 = snap(
        "U01", day(12),
        [task("A", 10, party="OWN", actual_start=D0, actual_finish=day(11)), task("B", 10), ms()],
        [("A", "B"), ("B", "M")],
    )
    return casefile([bl, u1])


def test_late_finish_and_slow_start_are_split_along_the_path():
    """A finished 2 late, B could start day 12 and did: A 2, B 0 (slip 2; worked by hand)."""
    att = analyse_delay(late_finish_case()).attributions[0]
    # BL: A 0-9, B 10-19; half-step: B 12-21: v(B) = 2 = v(A), so A takes both days.
    assert contributors(att) == [("A", 2, None, "OWN", "excusable-compensable")]


def parallel_case(c_finish):
    """A(10) -> M and C(6) -> M; at day 10 A has 3 days left (owner event), C finished on ``c_finish``."""
    acts = [task("A", 10), task("C", 6), ms()]
    links = [("A", "M"), ("C", "M")]
    bl = snap("BL", D0, acts, links, role="baseline")
    u1 = snap(
        "U01", day(10),
        [task("A", 10, actual_start=D0, remaining=3), task("C", 6, actual_start=D0, actual_finish=c_finish), ms()],
        links,
    )
    return casefile([bl, u1], [event("EV1", "OWN", "excusable-compensable", day(2), day(4), ["A"])])


def test_parallel_paths_only_the_longer_delay_counts():
    """C finishes 3 days late but inside its 4 days of float: the slip of 3 is all the owner's."""
    att = analyse_delay(parallel_case(day(8))).attributions[0]
    # BL completion day 9; A now days 10-12, so completion day 12: slip 3. C (planned 0-5) ends day 8.
    assert contributors(att) == [("A", 3, "EV1", "OWN", "excusable-compensable")]
    assert att.concurrent.days == 0
    assert dict(att.by_party) == {"OWN": 3}


def concurrent_case():
    """A(10) and C(10) in parallel to M; at day 10 each has 3 days left, A by owner event, C by the contractor."""
    acts = [task("A", 10), task("C", 10), ms()]
    links = [("A", "M"), ("C", "M")]
    bl = snap("BL", D0, acts, links, role="baseline")
    u1 = snap(
        "U01", day(10),
        [task("A", 10, actual_start=D0, remaining=3), task("C", 10, actual_start=D0, remaining=3), ms()],
        links,
    )
    return casefile([bl, u1], [event("EV1", "OWN", "excusable-compensable", day(2), day(4), ["A"])])


def test_true_concurrency_removing_either_alone_recovers_nothing():
    """Both paths 3 days late: either removed alone recovers 0, both together 3: 3 concurrent days (SCL core principle 10)."""
    att = analyse_delay(concurrent_case()).attributions[0]
    assert dict(att.concurrent.recovered_alone) == {"CON": 0, "OWN": 0}
    assert att.concurrent.recovered_together == 3
    assert att.concurrent.days == 3
    assert att.concurrent.parties == ("CON", "OWN")
    assert att.concurrent.events == ("EV1",)
    assert sum(c.days for c in att.contributors) == 3
    assert {c.category for c in att.contributors} == {"concurrent"}
    assert dict(att.by_party) == {}


def test_partial_concurrency_leaves_the_longer_delay_its_excess():
    """A 5 days late, C 3: owner alone recovers 2, contractor 0, both 5: 3 concurrent and 2 owner (worked by hand)."""
    base = concurrent_case()
    bl = base.snapshots[0]
    u1 = snap(
        "U01", day(10),
        [task("A", 10, actual_start=D0, remaining=5), task("C", 10, actual_start=D0, remaining=3), ms()],
        [("A", "M"), ("C", "M")],
    )
    att = analyse_delay(casefile([bl, u1], base.events)).attributions[0]
    assert att.concurrent.days == 3
    assert dict(att.by_party) == {"OWN": 2}


def hidden_case():
    """Window 1: owner event costs A 4 days; window 2: the contractor's C runs 4 days slow inside the float that made."""
    links = [("A", "B"), ("B", "M"), ("C", "M")]
    bl = snap("BL", D0, [task("A", 10), task("B", 10), task("C", 15), ms()], links, role="baseline")
    u1 = snap(
        "U01", day(10),
        [task("A", 10, actual_start=D0, remaining=4), task("B", 10), task("C", 15, actual_start=D0, remaining=5), ms()],
        links,
    )
    u2 = snap(
        "U02", day(17),
        [
            task("A", 10, actual_start=D0, actual_finish=day(13)),
            task("B", 10, actual_start=day(14), remaining=7),
            task("C", 15, actual_start=D0, remaining=4),
            ms(),
        ],
        links,
    )
    return casefile([bl, u1, u2], [event("EV1", "OWN", "excusable-compensable", day(3), day(6), ["A"])])


def test_contractor_slow_progress_hidden_by_owner_earlier_delay():
    """Window 2 slips 0: C (planned to finish day 14) now ends day 20, inside B's new finish of day 23."""
    an = analyse_delay(hidden_case())
    w1, w2 = an.attributions
    assert dict(w1.by_party) == {"OWN": 4}
    # U01: B days 14-23, M day 23. U02: B 7 left from day 17 -> day 23; C 4 left -> day 20.
    assert an.windows.windows[1].slip == 0
    assert w2.contributors == ()
    assert an.ledger.total.excusable_compensable == 4
    assert an.ledger.total.non_excusable == 0


def test_logic_change_is_unattributed_revision():
    """The new B -> C link (no event) leaves its 5 days as unattributed revision."""
    att = analyse_delay(logic_change_case()).attributions[0]
    assert att.contributors == ()
    assert att.unattributed_revision == 5
    assert dict(att.by_party) == {"unattributed-revision": 5}


def test_revision_brought_in_by_a_fragnet_goes_to_its_event():
    """U01 inserts the owner's fragnet F1 (4 days) between B and M: 4 revision days to EV2."""
    bl = snap("BL", D0, [task("A", 10), task("B", 5), ms()], [("A", "B"), ("B", "M")], role="baseline")
    u1 = snap(
        "U01", day(10),
        [task("A", 10, actual_start=D0, actual_finish=day(9)), task("B", 5), task("F1", 4, party="OWN"), ms()],
        [("A", "B"), ("B", "F1"), ("F1", "M")],
    )
    frag = Fragnet("EV2", frozen_mapping({"F1": Activity("F1", "redesign", 4)}), ())
    ev = event("EV2", "OWN", "excusable-compensable", day(8), day(12), [], fragnet="EV2")
    att = analyse_delay(casefile([bl, u1], [ev], fragnets={"EV2": frag})).attributions[0]
    assert [(s.event, s.days, s.activities) for s in att.revision] == [("EV2", 4, ("F1",))]
    assert att.unattributed_revision == 0
    assert dict(att.by_party) == {"OWN": 4}


def test_gain_goes_to_the_performer_and_the_gains_line():
    """A finishes 2 days early and B starts at once: -2 to A's performer, in the ledger's gains."""
    bl = snap("BL", D0, [task("A", 10), task("B", 10), ms()], [("A", "B"), ("B", "M")], role="baseline")
    u1 = snap(
        "U01", day(8),
        [task("A", 10, actual_start=D0, actual_finish=day(7)), task("B", 10), ms()],
        [("A", "B"), ("B", "M")],
    )
    an = analyse_delay(casefile([bl, u1]))
    assert contributors(an.attributions[0]) == [("A", -2, None, "CON", "non-excusable")]
    assert an.ledger.total.gains == -2
    assert an.ledger.total.non_excusable == 0


def test_ledger_is_cumulative_and_balances():
    """Hidden case: per-window totals 4 and 0, cumulative 4, equal to the total slip (ledger balance)."""
    an = analyse_delay(hidden_case())
    assert [e.total for e in an.ledger.windows] == [4, 0]
    assert [e.total for e in an.ledger.cumulative] == [4, 4]
    assert an.ledger.balanced and an.ledger.total_slip == 4
    assert ledger_table(an).rows[-1][0] == "total"
    assert contributors_table(an).records()[0]["activity"] == "A"


def test_json_has_the_documented_keys():
    """The JSON object carries the keys issue 5 spells out (a contract, docs/windows.md)."""
    data = delay_json(analyse_delay(concurrent_case()))
    # concurrency and float_ledger: issue 16
    assert set(data) == {"unit", "windows", "ledger", "concurrency", "float_ledger"}
    assert set(data["float_ledger"]) == {"unit", "margin", "windows", "cumulative"}
    w = data["windows"][0]
    for key in (
        "from", "to", "start", "end", "completion_before", "completion_after", "half_step_completion",
        "slip", "progress_slip", "revision_slip", "critical_path_before", "critical_path_after",
        "contributors", "by_party", "concurrent", "unexplained", "pacing", "slices", "float_used",
    ):
        assert key in w
    assert set(w["contributors"][0]) == {"activity", "days", "event", "party", "category"}


@settings(max_examples=60, deadline=None)
@given(random_updates())
def test_contributors_and_ledger_conserve_the_slip(cf):
    """Conservation: contributors sum to the progress slip; by_party + concurrent to the slip; the ledger balances."""
    an = analyse_delay(cf)
    for w, att in zip(an.windows.windows, an.attributions, strict=True):
        assert sum(c.days for c in att.contributors) == w.progress_slip
        assert sum(s.days for s in att.revision) + att.unattributed_revision == w.revision_slip
        assert sum(att.by_party.values()) + att.concurrent.days == w.slip
    assert an.ledger.balanced
    assert an.ledger.total.total == an.ledger.total_slip


@st.composite
def mixed_parties(draw):
    """Random updates whose activities belong to the owner, the contractor or nobody, with two events."""
    cf = draw(random_updates())
    parties = draw(st.lists(st.sampled_from(["OWN", "CON", None]), min_size=12, max_size=12))
    snaps = []
    for s in cf.snapshots:
        acts = {a.id: (replace(a, party=parties[i]) if a.kind == "task" else a) for i, a in enumerate(s.activities.values())}
        snaps.append(replace(s, activities=frozen_mapping(acts)))
    evs = [
        event("E1", "OWN", "excusable-compensable", day(0), day(draw(st.integers(0, 10))), ["T0", "T1"]),
        event("E2", "WX", "excusable-noncompensable", day(2), day(5), ["T1", "T2"]),
    ]
    return casefile(snaps, evs)


@settings(max_examples=60, deadline=None)
@given(mixed_parties())
def test_conservation_holds_with_events_and_several_parties(cf):
    """Conservation with events, three parties and concurrency tests running (exact sums, no rounding)."""
    an = analyse_delay(cf)
    for w, att in zip(an.windows.windows, an.attributions, strict=True):
        assert sum(c.days for c in att.contributors) == w.progress_slip
        assert sum(att.by_party.values()) + att.concurrent.days == w.slip
        assert att.concurrent.days >= 0
    assert an.ledger.balanced


def revision_concurrency_case(a_left=3):
    """A(10) -> M and B(10) -> M; at day 10 A (contractor, EV2) has ``a_left`` days left, and U01 takes in the owner's fragnet F1 (4 days) after B."""
    bl = snap("BL", D0, [task("A", 10), task("B", 10), ms()], [("A", "M"), ("B", "M")], role="baseline")
    u1 = snap(
        "U01", day(10),
        [task("A", 10, actual_start=D0, remaining=a_left), task("B", 10, actual_start=D0, actual_finish=day(9)),
         task("F1", 4, party="OWN"), ms()],
        [("A", "M"), ("B", "F1"), ("F1", "M")],
    )
    frag = Fragnet("EV1", frozen_mapping({"F1": Activity("F1", "owner's change", 4, party="OWN")}), ())
    evs = [
        event("EV1", "OWN", "excusable-compensable", day(8), day(13), ["F1"], fragnet="EV1"),
        event("EV2", "CON", "non-excusable", day(2), day(9), ["A"]),
    ]
    return casefile([bl, u1], evs, fragnets={"EV1": frag})


def test_concurrency_of_an_owner_revision_and_a_contractor_progress_delay():
    """Owner's fragnet (revision, +4) and contractor's slow A (progress, +3) on parallel paths: 3 concurrent, 1 owner (SCL core principle 10; worked by hand)."""
    an = analyse_delay(revision_concurrency_case())
    w, att = an.windows.windows[0], an.attributions[0]
    # BL: M on day 9. Half-step: A days 10-12, M day 12 (progress 3). U01: F1 days 10-13, M day 13 (revision 1).
    assert (w.slip, w.progress_slip, w.revision_slip) == (4, 3, 1)
    # Without EV2 alone the owner's F1 still holds M to day 13; without EV1 alone A holds it to day 12.
    assert dict(att.concurrent.recovered_alone) == {"CON": 0, "OWN": 1}
    assert att.concurrent.recovered_together == 4
    assert (att.concurrent.days, att.concurrent.parties, att.concurrent.events) == (3, ("CON", "OWN"), ("EV1", "EV2"))
    assert dict(att.by_party) == {"OWN": 1}
    assert [(c.activity, c.days, c.category) for c in att.contributors] == [("A", 3, "concurrent")]
    assert [(s.event, s.days, s.category) for s in att.revision] == [("EV1", 1, "excusable-compensable")]
    assert an.ledger.total.concurrent == 3 and an.ledger.total.excusable_compensable == 1
    assert an.ledger.balanced


def test_owner_revision_longer_than_a_parallel_contractor_delay_keeps_its_excess():
    """A only 1 day late inside the owner's 4-day fragnet delay: 1 concurrent day, the owner keeps the 3 only it explains (worked by hand)."""
    att = analyse_delay(revision_concurrency_case(a_left=1)).attributions[0]
    # Half-step: A day 10, M day 10 (progress 1); U01: M day 13 (revision 3). R(OWN) = 3, R(CON) = 0, R(all) = 4.
    assert dict(att.concurrent.recovered_alone) == {"CON": 0, "OWN": 3}
    assert att.concurrent.days == 1
    assert dict(att.by_party) == {"OWN": 3}
    assert [(c.activity, c.days, c.category) for c in att.contributors] == [("A", 1, "concurrent")]


def replan_case(with_event=True):
    """A(10) -> B(5) -> M; U01 at day 10: A finished on time, the contractor re-plans B to 8 days."""
    links = [("A", "B"), ("B", "M")]
    bl = snap("BL", D0, [task("A", 10), task("B", 5), ms()], links, role="baseline")
    u1 = snap("U01", day(10), [task("A", 10, actual_start=D0, actual_finish=day(9)), task("B", 8), ms()], links)
    evs = [event("EV3", "CON", "non-excusable", day(8), day(12), ["B"])] if with_event else []
    return casefile([bl, u1], evs)


def test_contractor_replan_event_takes_the_duration_revision():
    """B re-planned 5 -> 8 days: the 3 revision days go to the contractor's re-plan event EV3, not to unattributed revision."""
    att = analyse_delay(replan_case()).attributions[0]
    # BL: B days 10-14; U01: B days 10-17: revision slip 3 (worked by hand).
    assert [(s.event, s.days, s.party, s.activities) for s in att.revision] == [("EV3", 3, "CON", ("B",))]
    assert att.unattributed_revision == 0
    assert dict(att.by_party) == {"CON": 3}
    assert analyse_delay(replan_case(with_event=False)).attributions[0].unattributed_revision == 3


def test_weekend_after_a_delay_belongs_to_the_delay():
    """5-day calendar: A loses 1 working day, so B (not started) slips over the weekend: all 3 calendar days go to A's event."""
    bl = snap("BL", D0, [task("A", 4), task("B", 1), ms()], [("A", "B"), ("B", "M")], role="baseline")
    u1 = snap(
        "U01", day(2),
        [task("A", 4, actual_start=D0, remaining=3), task("B", 1), ms()],
        [("A", "B"), ("B", "M")],
    )
    cf = casefile([bl, u1], [event("EV2", "CON", "non-excusable", D0, day(3), ["A"])], cal="5d")
    att = analyse_delay(cf).attributions[0]
    # BL: A Mon 5 - Thu 8 Jan, B Fri 9 Jan. U01 (data date Wed 7): A 7-9 Jan (v = 1), B Mon 12 Jan (v = 3).
    assert analyse_delay(cf).windows.windows[0].slip == 3
    assert contributors(att) == [("A", 3, "EV2", "CON", "non-excusable")]


@st.composite
def revising_parties(draw):
    """Mixed parties plus a contractor re-plan event on some tasks and, sometimes, an owner fragnet added by the later update."""
    cf = draw(mixed_parties())
    bl, u1 = cf.snapshots
    named = draw(st.lists(st.sampled_from([a for a in u1.activities if a != "M"]), min_size=1, max_size=4, unique=True))
    evs = [*cf.events, event("E3", "CON", "non-excusable", day(0), day(20), named)]
    fragnets = {}
    if draw(st.booleans()):
        first = next(iter(u1.activities))
        f1 = Activity("F1", "owner's change", draw(st.integers(1, 8)), party="OWN")
        acts = {**u1.activities, "F1": f1}
        links = (*u1.links, Link(first, "F1"), Link("F1", "M"))
        u1 = replace(u1, activities=frozen_mapping(acts), links=links)
        fragnets["E4"] = Fragnet("E4", frozen_mapping({"F1": f1}), ())
        evs.append(event("E4", "OWN", "excusable-compensable", day(1), day(6), [], fragnet="E4"))
    return replace(cf, snapshots=(bl, u1), events=tuple(evs), fragnets=frozen_mapping(fragnets))


@settings(max_examples=60, deadline=None)
@given(revising_parties())
def test_conservation_holds_with_revision_events_and_whole_window_concurrency(cf):
    """Conservation with re-plan and fragnet events: every sum exact, concurrent days only of involved parties, within the slip's positive shares."""
    an = analyse_delay(cf)
    for w, att in zip(an.windows.windows, an.attributions, strict=True):
        assert sum(c.days for c in att.contributors) == w.progress_slip
        assert sum(s.days for s in att.revision) + att.unattributed_revision == w.revision_slip
        assert sum(att.by_party.values()) + att.concurrent.days == w.slip
        conc = [x for x in (*att.contributors, *att.revision) if x.category == "concurrent"]
        assert sum(x.days for x in conc) == att.concurrent.days >= 0
        assert all(x.party in att.concurrent.parties and x.days > 0 for x in conc)
    assert an.ledger.balanced


# --- fault 1 of issue 16: added work that holds a start keeps its event in any grouping ---


def added_work_case():
    """A(10) -> B(10) -> M; the contractor finishes A 3 days late, then the owner's change adds X(6) between A and B.

    BL (day 0): A 0-9, B 10-19, M day 19.
    U01 (day 13): A finished 0-12 (EV2, contractor); X added (A -> X -> B), not started: X 13-18, B 19-28.
    U02 (day 22): X finished 13-18; B started day 19, 7 days left: B 19-28, M day 28.
    """
    links = [("A", "B"), ("B", "M")]
    bl = snap("BL", D0, [task("A", 10), task("B", 10), ms()], links, role="baseline")
    links1 = [*links, ("A", "X"), ("X", "B")]
    a_done = task("A", 10, actual_start=D0, actual_finish=day(12))
    u1 = snap("U01", day(13), [a_done, task("B", 10), task("X", 6, party="OWN"), ms()], links1)
    x_done = task("X", 6, party="OWN", actual_start=day(13), actual_finish=day(18))
    u2 = snap("U02", day(22), [a_done, task("B", 10, actual_start=day(19), remaining=7), x_done, ms()], links1)
    return casefile(
        [bl, u1, u2],
        [
            event("EV2", "CON", "non-excusable", day(8), day(12), ["A"]),
            event("EV1", "OWN", "excusable-compensable", day(13), day(18), ["X"]),
        ],
    )


def test_added_work_holding_a_start_keeps_its_event_when_windows_are_grouped():
    """Monthly: contractor 3, owner 6; one window BL-U02 must give the same (worked by hand).

    Monthly, BL-U01: half-step (BL plan, U01 progress) A 0-12, B 13-22, M day 22:
    progress 3, all A's (EV2, contractor); U01 adds X: completion day 28,
    revision 6, EV1's (the added work is its listed activity). U01-U02: 0.
    One window BL-U02: the half-step (BL plan, U02 progress) has B started
    day 19, so M day 28: progress 9, revision 0. B has no engine driver (it
    started); before the fix the walk gave 3 to A (finished day 12 >= B's
    planned start day 10, v(A) = 3) and left 6 with B, the contractor's,
    unexplained: owner 0. Now B's later-update predecessor X (added) held
    it: X finished day 18 against the latest finish that would not have
    held B's planned start, day 9: hold 9 > v(A) = 3, so X takes the 9;
    X was held by A (A finished day 12, X started day 13): A inherits
    clamp(v(A) = 3, 0, 9) = 3 and X keeps 6. Owner 6, contractor 3, as monthly.
    (Contributor rule of forensic.analysis.attribution.contributors; AACE RP 29R-03 protocol 3.4:
    the half-step split must not move an event's delay to another party.)
    """
    cf = added_work_case()
    monthly = analyse_delay(cf)
    assert [dict(a.by_party) for a in monthly.attributions] == [{"CON": 3, "OWN": 6}, {}]
    grouped = analyse_delay(cf, ["U02"])
    (att,) = grouped.attributions
    assert (grouped.windows.windows[0].progress_slip, grouped.windows.windows[0].revision_slip) == (9, 0)
    assert contributors(att) == [
        ("A", 3, "EV2", "CON", "non-excusable"),
        ("X", 6, "EV1", "OWN", "excusable-compensable"),
    ]
    assert dict(att.by_party) == {"CON": 3, "OWN": 6}
    assert att.concurrent.days == 0 and grouped.ledger.balanced


def test_demo_grouped_u02_u06_keeps_the_owner_change_order():
    """Demo, --windows U02,U06: CO-01 (EV03) keeps a share of window U02-U06 (issue 16, fault 1).

    Worked by hand from the demo's U02 and U06 records (casefiles/riverside):
    in U02 LIB-L3-COL was planned to start 2026-07-28; in U06 it started
    2026-09-05, held by the added CO1-STR (finished 2026-09-04), whose hold
    is 4 Sep - 27 Jul = 39 calendar days; its old predecessor LIB-L2-CUR
    finished 2026-08-17, 21 days late (v = 21), which would not have held it
    past 18 Aug: the added CO-01 work held the start about 18 days more. The
    half-step's progress slip of the window is 15, so the 15 days reaching
    LIB-L3-COL go to CO1-STR and on, through the added design work CO1-DES
    and the instruction CO1-INS (all EV03's fragnet), to EV03: none to the
    contractor's frame gang (EV09), whose lateness float had absorbed.
    """
    an = analyse_delay(load_casefile(demo_source()), ["U02", "U06"])
    att = an.attributions[1]
    assert att.window_label == "U02-U06"
    ev03 = sum(c.days for c in att.contributors if c.event == "EV03")
    assert ev03 == an.windows.windows[1].progress_slip == 15
    assert att.by_party.get("OWN", 0) > 0
    assert not any(c.event == "EV09" for c in att.contributors)
    assert an.ledger.balanced


# --- the concurrency rule (manifest key ``concurrency``; issue 16) -------------------


def with_rule(cf, rule):
    return replace(cf, project=replace(cf.project, concurrency=rule))


def test_time_only_rule_keeps_the_concurrent_days_apart():
    """time-only (the default): the 3 concurrent days of the revision case give time, no money (SCL core principle 10).

    Worked in test_concurrency_of_an_owner_revision_and_a_contractor_progress_delay:
    slip 4, R(OWN) = 1, R(CON) = 0, R(all) = 4: 3 concurrent, 1 the owner's.
    """
    att = analyse_delay(with_rule(revision_concurrency_case(), "time-only")).attributions[0]
    assert (att.concurrent.rule, att.concurrent.found, att.concurrent.days) == ("time-only", 3, 3)
    assert dict(att.by_party) == {"OWN": 1} and dict(att.concurrent.by_rule) == {}


def test_apportion_rule_splits_the_concurrent_days_by_critical_delay():
    """apportion: the 3 concurrent days split 4 : 3 between owner and contractor (worked by hand).

    Critical delay = what a party's delays alone cost = R(all) - R(all but it):
    owner 4 - R(CON) = 4 - 0 = 4 (its fragnet alone holds M to day 13),
    contractor 4 - R(OWN) = 4 - 1 = 3 (A alone holds M to day 12).
    3 x 4/7 = 1.71, 3 x 3/7 = 1.29: floors 1 and 1, the spare day to the
    larger remainder (5/7, the owner's): owner 2, contractor 1. With the
    owner's own day: owner 3, contractor 1, total 4 = slip.
    (Apportionment in the ratio of the parties' delay: AACE RP 29R-03
    sec. 4.2, from memory; largest remainder: common practice.)
    """
    an = analyse_delay(with_rule(revision_concurrency_case(), "apportion"))
    att = an.attributions[0]
    assert att.concurrent.found == 3 and att.concurrent.days == 0
    assert dict(att.concurrent.critical) == {"CON": 3, "OWN": 4}
    assert dict(att.concurrent.by_rule) == {"CON": 1, "OWN": 2}
    assert dict(att.by_party) == {"CON": 1, "OWN": 3}
    assert an.ledger.total.concurrent == 0 and an.ledger.balanced
    assert an.ledger.total.excusable_compensable == 3 and an.ledger.total.non_excusable == 1


def test_dominant_rule_gives_the_concurrent_days_to_the_longer_delay():
    """dominant: the owner's fragnet (critical delay 4 > the contractor's 3) drives completion: owner 4 (worked by hand)."""
    an = analyse_delay(with_rule(revision_concurrency_case(), "dominant"))
    att = an.attributions[0]
    assert dict(att.concurrent.by_rule) == {"OWN": 3}
    assert dict(att.by_party) == {"OWN": 4}
    assert an.ledger.balanced


def test_dominant_rule_on_a_tie_leaves_the_days_concurrent():
    """Both paths exactly 3 days late (critical delay 3 each): no dominant cause, 3 stay concurrent (SCL Part B, from memory)."""
    att = analyse_delay(with_rule(concurrent_case(), "dominant")).attributions[0]
    assert (att.concurrent.found, att.concurrent.days) == (3, 3)
    assert dict(att.by_party) == {}


def test_rule_is_in_the_json_and_read_from_the_manifest(tmp_path):
    """``concurrent.rule`` in every window; the manifest key is read (casefile format v2, [project] concurrency)."""
    doc = delay_json(analyse_delay(with_rule(concurrent_case(), "apportion")))
    assert doc["windows"][0]["concurrent"]["rule"] == "apportion"
    assert doc["concurrency"]["rule"] == "apportion"
    assert {"days", "parties", "events", "rule"} <= set(doc["windows"][0]["concurrent"])


def test_manifest_concurrency_key_is_read_and_checked(tmp_path):
    """[project] concurrency = "dominant" is read; an unknown rule is refused naming the key (casefile format v2)."""
    import pytest  # noqa: PLC0415

    from forensic.casefile.demo import copy_demo  # noqa: PLC0415
    from forensic.core.errors import CasefileError  # noqa: PLC0415

    folder = copy_demo(tmp_path / "case")
    manifest = folder / "casefile.toml"
    text = manifest.read_text(encoding="utf-8")
    manifest.write_text(text.replace("critical_float = 0\n", 'critical_float = 0\nconcurrency = "dominant"\n'), encoding="utf-8")
    assert load_casefile(folder).project.concurrency == "dominant"
    manifest.write_text(text.replace("critical_float = 0\n", 'critical_float = 0\nconcurrency = "half"\n'), encoding="utf-8")
    with pytest.raises(CasefileError) as err:
        load_casefile(folder)
    assert "concurrency" in str(err.value) and "half" in str(err.value)
    assert load_casefile(demo_source()).project.concurrency == "time-only"  # the default


# --- fault 2 of issue 16: concurrency judged on dates, sequential delays never concurrent ---


def sequential_case():
    """Owner stops path A 3-7 Jan (5 days); the contractor stops path B 21-30 Jan (10 days); B had 3 days of float.

    7-day calendar. BL (1 Jan 2026): A(30) 1-30 Jan, B(27) 1-27 Jan (float 3),
    both -> T(30) 31 Jan - 1 Mar -> M (1 Mar).
    U01 (14 Jan): A worked 1-2 and 8-13 Jan, 22 days left (14 Jan - 4 Feb);
    B 14 left (14-27 Jan); T 5 Feb - 6 Mar: +5.
    U02 (1 Feb): A 4 left (1-4 Feb); B stopped 21-30 Jan, 6 left (1-6 Feb);
    T 7 Feb - 8 Mar: +7 in all.
    """
    jan = lambda n: date(2026, 1, n)  # noqa: E731
    links = [("A", "T"), ("B", "T"), ("T", "M")]
    plan = [task("A", 30, party="OWN"), task("B", 27), task("T", 30), ms()]
    bl = snap("BL", jan(1), plan, links, role="baseline")

    def upd(sid, dd, a_left, b_left):
        acts = [task("A", 30, party="OWN", actual_start=jan(1), remaining=a_left),
                task("B", 27, actual_start=jan(1), remaining=b_left), task("T", 30), ms()]
        return snap(sid, dd, acts, links)

    evs = [
        event("EVO", "OWN", "excusable-compensable", jan(3), jan(7), ["A"]),
        event("EVC", "CON", "non-excusable", jan(21), jan(30), ["B"]),
    ]
    return casefile([bl, upd("U01", jan(14), 22, 14), upd("U02", date(2026, 2, 1), 4, 6)], evs)


def test_sequential_delays_are_not_concurrent_in_one_window():
    """Monthly: owner 5, contractor 2; one window BL-U02 must give the same, concurrent 0 (worked by hand).

    Monthly: BL-U01, A's 5 days (EVO): T waits for A to 4 Feb, +5, owner.
    U01-U02: B 10 days stopped against its float, now 3 + 5 = 8: +2, contractor.
    One window BL-U02, before issue 16: the walk went T <- B (v 10 > v(A) 5)
    and the whole-window but-for test gave contractor 3, concurrent 4, owner 0,
    recovered_together 6. Now the window is cut on 21 Jan, where the
    contractor's event begins (the owner's ended on 7 Jan: no overlap).
    Day 21 Jan reconstructed from U02: A 4 left + 11 working days from 21 Jan
    to 1 Feb, no event on A then: 15 left (21 Jan - 4 Feb); B 6 + 11 - 10
    days of EVC = 7 left (21-27 Jan, as planned). Slice 1 (1-21 Jan): T after
    4 Feb, +5, A's, EVO: owner 5. Slice 2 (21 Jan - 1 Feb): B to 6 Feb
    (v = 10), A on time: +2, contractor. Concurrent 0: the delays act on
    different days (SCL Protocol 2nd ed., core principle 10 and Part B:
    concurrency needs delays of roughly the same time, each of which would
    have delayed completion on its own).
    """
    cf = sequential_case()
    monthly = analyse_delay(cf)
    assert [dict(a.by_party) for a in monthly.attributions] == [{"OWN": 5}, {"CON": 2}]
    one = analyse_delay(cf, ["U02"])
    (att,) = one.attributions
    assert one.windows.windows[0].slip == 7
    assert dict(att.by_party) == {"OWN": 5, "CON": 2}
    assert att.concurrent.days == 0 and att.concurrent.found == 0
    # Path switch (tests/test_slices.py): on 29 Jan B has worked 28 - 8 event days = 20 of its 21 days
    # free of EVC, 27 - 20 = 7 left, to 4 Feb; A 28 - 5 = 23 of 26, 30 - round(26 * 23 / 26) = 7 left, to
    # 4 Feb: B joins the driving work (on 28 Jan B ran to 3 Feb, A to 4 Feb). So 21-29 Jan is a slice
    # of its own, 0 days (T still after 4 Feb), and B's 2 days fall after the switch.
    jan = lambda n: date(2026, 1, n)  # noqa: E731
    assert [(s.start, s.end) for s in att.slices] == [(jan(1), jan(21)), (jan(21), jan(29)), (jan(29), date(2026, 2, 1))]
    assert [[(d.activity, d.event, d.party, d.days) for d in s.delays] for s in att.slices] == [
        [("A", "EVO", "OWN", 5)], [], [("B", "EVC", "CON", 2)]
    ]
    assert one.ledger.balanced
    doc = delay_json(one)["windows"][0]["slices"]
    assert set(doc[0]) == {"start", "end", "driving_path", "delays"}
    assert set(doc[0]["delays"][0]) == {"activity", "event", "party", "days"}


def test_parallel_critical_delays_on_the_same_days_are_concurrent():
    """A (owner) and C (contractor) both stopped on days 2-4, 3 days each, on parallel critical paths: 3 concurrent.

    Same days, one slice (no cut): the but-for test of the slice gives
    R(OWN) = R(CON) = 0, R(all) = 3 (worked in
    test_true_concurrency_removing_either_alone_recovers_nothing); SCL
    Protocol 2nd ed., core principle 10.
    """
    base = concurrent_case()
    evs = [*base.events, event("EV2", "CON", "non-excusable", day(2), day(4), ["C"])]
    att = analyse_delay(casefile(base.snapshots, evs)).attributions[0]
    assert len(att.slices) == 1
    assert att.concurrent.days == 3 and att.concurrent.parties == ("CON", "OWN")
    assert dict(att.by_party) == {}


DEMO = load_casefile(demo_source())
DEMO_UPDATES = [s.id for s in DEMO.snapshots[1:-1]]


@settings(max_examples=12, deadline=None)
@given(
    st.lists(st.sampled_from(DEMO_UPDATES), unique=True, max_size=5).map(lambda ids: sorted(ids, key=DEMO_UPDATES.index)),
    st.sampled_from(["time-only", "apportion", "dominant"]),
)
def test_ledger_balances_to_the_slip_under_random_groupings_of_windows(ids, rule):
    """Any grouping of the demo's windows and any concurrency rule: every window's sums exact, the ledger balances to 43 (issue 16)."""
    an = analyse_delay(with_rule(DEMO, rule), ids or None)
    assert an.ledger.total_slip == 43 and an.ledger.balanced
    for w, att in zip(an.windows.windows, an.attributions, strict=True):
        assert sum(c.days for c in att.contributors) == w.progress_slip
        assert sum(s.days for s in att.revision) + att.unattributed_revision == w.revision_slip
        assert sum(att.by_party.values()) + att.concurrent.days == w.slip
        assert sum(d.days for sl in att.slices for d in sl.delays) + att.unattributed_revision == w.slip
        assert att.slices[0].start == w.start and att.slices[-1].end == w.end


@settings(max_examples=40, deadline=None)
@given(revising_parties(), st.integers(0, 12), st.integers(0, 12), st.sampled_from(["time-only", "apportion", "dominant"]))
def test_conservation_holds_when_events_cut_the_window_into_slices(cf, a, b, rule):
    """Two more events on random, maybe separate, dates cut the window: every sum still exact under each rule."""
    acts = [x for x in cf.snapshots[-1].activities if x != "M"]
    evs = [*cf.events, event("S1", "OWN", "excusable-compensable", day(a), day(a), acts[:1]),
           event("S2", "CON", "non-excusable", day(b), day(b + 1), acts[-1:])]
    an = analyse_delay(with_rule(replace(cf, events=tuple(evs)), rule))
    for w, att in zip(an.windows.windows, an.attributions, strict=True):
        assert sum(c.days for c in att.contributors) == w.progress_slip
        assert sum(s.days for s in att.revision) + att.unattributed_revision == w.revision_slip
        assert sum(att.by_party.values()) + att.concurrent.days == w.slip
    assert an.ledger.balanced


def test_possible_pacing_is_flagged_not_decided():
    """Owner's A 4 days late drives M; the contractor's C runs 5 late against 2 days of float: possible pacing (worked by hand).

    BL (day 0): A(10) 0-9 and C(8) 0-7 -> M day 9; C's float 2.
    U01 (day 10): A 4 left (EV1, owner, days 2-5): 10-13, M day 13, +4.
    C 3 left (EV2, contractor, days 3-7): 10-12, 5 late (more than its
    float of 2, so alone it would have cost 3), float in the half-step
    13 - 12 = 1: absorbed by the float the owner's delay made. Flagged:
    C, EV2, 5 days, beside EV1; the figures are not changed by the flag
    (the but-for test still finds R(OWN) = 1, R(CON) = 0, R(all) = 4: 3
    concurrent, 1 owner). SCL Protocol 2nd ed., Part B on pacing (from memory).
    """
    links = [("A", "M"), ("C", "M")]
    bl = snap("BL", D0, [task("A", 10, party="OWN"), task("C", 8), ms()], links, role="baseline")
    u1 = snap("U01", day(10), [task("A", 10, party="OWN", actual_start=D0, remaining=4),
                               task("C", 8, actual_start=D0, remaining=3), ms()], links)
    evs = [event("EV1", "OWN", "excusable-compensable", day(2), day(5), ["A"]),
           event("EV2", "CON", "non-excusable", day(3), day(7), ["C"])]
    an = analyse_delay(casefile([bl, u1], evs))
    att = an.attributions[0]
    assert [(p.activity, p.event, p.party, p.days, p.owner_events) for p in att.pacing] == [("C", "EV2", "CON", 5, ("EV1",))]
    assert (att.concurrent.days, dict(att.by_party)) == (3, {"OWN": 1})
    assert delay_json(an)["windows"][0]["pacing"][0]["activity"] == "C"
