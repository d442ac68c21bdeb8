"""forensic: delay and forensic schedule analysis from a casefile folder.

The data flows one way: load (:mod:`forensic.casefile.reading`) -> schedule
(:mod:`forensic.core.engine`) -> compare and analyse -> attribute -> report.
The results support, and do not replace, the judgement of a qualified
scheduling professional.
"""

from forensic.core.version import __version__

# The Python front door (docs/python.md). Each function takes a casefile
# folder or a loaded ``Casefile`` and returns the result object the CLI
# prints; imports are lazy so that ``import forensic`` stays light. The
# analysis modules live under ``forensic.analysis``, so these names are free.

__all__ = ["__version__", "but_for", "eot", "impact", "load", "recover", "schedule", "windows"]


def load(path):
    """Load and validate a casefile folder (:func:`forensic.casefile.load_casefile`)."""
    from forensic.casefile.reading import load_casefile

    return load_casefile(path)


def _casefile(casefile):
    from forensic.core.model import Casefile

    return casefile if isinstance(casefile, Casefile) else load(casefile)


def schedule(casefile, snapshot=None):
    """The CPM schedule of one snapshot (default: the latest), a ``ScheduleResult`` (Kelley and Walker 1959)."""
    from forensic.core.engine import schedule_snapshot

    cf = _casefile(casefile)
    return schedule_snapshot(cf, snapshot or cf.snapshots[-1].id)


def but_for(casefile, party=None, event=None, snapshot=None):
    """But-for (collapsed as-built) analysis, a ``ButForReport`` (AACE RP 29R-03 MIP 3.8)."""
    from forensic.analysis.butfor import but_for as _but_for

    return _but_for(_casefile(casefile), party=party, event=event, snapshot_id=snapshot)


def recover(casefile, snapshot, target=None, days=None, objective="cost"):
    """The least-cost acceleration plan, a ``RecoveryResult`` (time-cost trade-off, Kelley 1961; Fulkerson 1961)."""
    from forensic.analysis.recovery import recover as _recover

    return _recover(_casefile(casefile), snapshot, target=target, days=days, objective=objective)


def windows(casefile, windows=None):
    """Windows analysis with the half-step split, attribution, concurrency and both ledgers.

    A ``DelayAnalysis`` (AACE RP 29R-03 MIP 3.3/3.4; SCL Protocol 2nd ed.);
    ``windows`` is a sequence of snapshot ids bounding the windows, or
    ``["auto"]``, as ``forensic windows --windows``.
    """
    from forensic.analysis.attribution.delay import analyse_delay

    return analyse_delay(_casefile(casefile), list(windows) if windows is not None else None)


def impact(casefile, events=None, into=None, series=False):
    """Time impact analysis (AACE RP 52R-06; RP 29R-03 MIP 3.6/3.7), as ``forensic impact``.

    ``events`` one event id: an ``ImpactResult``; a list of ids or ``None``
    (every event): an ``ImpactSeries`` (each alone and cumulatively, into
    ``into`` or each event's own unimpacted update); ``series=True``: the
    contemporaneous series, a ``ContemporaneousSeries``, each event in the
    last update before it.
    """
    from forensic.analysis.impact import time_impact, time_impact_series, time_impacts

    cf = _casefile(casefile)
    if series:
        if into is not None:
            msg = "impact(series=True) inserts each event into its own update: leave out into"
            raise ValueError(msg)
        return time_impact_series(cf, [events] if isinstance(events, str) else events)
    if isinstance(events, str):
        return time_impact(cf, events, into=into)
    return time_impacts(cf, events, into=into)


def eot(casefile, sensitivity=True):
    """The delay summary per event, every method side by side and reconciled, a ``DelaySummary``.

    As ``forensic eot`` (AACE RP 29R-03 on the choice of method and the
    cross-check between methods; SCL Protocol 2nd ed.); ``sensitivity=False``
    leaves out the re-runs under alternative settings.
    """
    from forensic.analysis.eot import delay_summary

    return delay_summary(_casefile(casefile), sensitivity=sensitivity)
