"""forensic: delay and forensic schedule analysis from a casefile folder.

The data flows one way: load (:mod:`forensic.casefile.reading`) -> schedule
(:mod:`forensic.core.engine`) -> compare and analyse -> attribute -> report.
The results support, and do not replace, the judgement of a qualified
scheduling professional.
"""

from forensic.core.version import __version__

# The Python front door (docs/python.md). Each function takes a casefile
# folder or a loaded ``Casefile`` and returns the result object the CLI
# prints; imports are lazy so that ``import forensic`` stays light.
# ``forensic.analysis.windows`` and ``forensic.analysis.impact`` are the analysis modules
# (their functions: ``forensic.analysis.attribution.analyse_delay`` and
# ``forensic.analysis.impact.time_impact``), so the front door names below avoid them.

__all__ = ["__version__", "but_for", "load", "recover", "schedule"]


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
