"""The analyses: each a pure function from a loaded casefile to a result object.

``quality`` (DCMA 14-point and practitioners' checks), ``compare`` (what
changed between two updates), ``windows`` (AACE RP 29R-03 MIP 3.3/3.4
windows with the half-step split), ``attribution`` (every day of a window
attributed to activities, events and parties, concurrency and the ledger),
``impact`` (RP 52R-06 time impact analysis with fragnets, MIP 3.6/3.7),
``butfor`` (MIP 3.8/3.9 collapsed as-built), ``recovery`` (the time-cost
trade-off, Kelley 1961 and Fulkerson 1961), ``asbuilt`` and
``asbuilt_path`` (as-planned versus as-built, MIP 3.1/3.2), ``trend`` and
``nearcritical`` (completion trend, float erosion), ``eot`` and
``sensitivity`` (the delay summary per event across the methods);
``runcache`` (what one call computed, handed out again to its later steps,
passed explicitly, never global). They import only the core and the
casefile layer.
"""

from forensic.core.faces import lazy_face

__all__ = ["analyse_delay", "analyse_windows", "as_planned_vs_as_built", "assess_casefile", "but_for", "compare_snapshots", "completion_trend", "delay_summary", "recover", "time_impact", "time_impact_series", "time_impacts"]

__getattr__, __dir__ = lazy_face(__name__, {
    "analyse_delay": ".attribution",
    "analyse_windows": ".windows",
    "as_planned_vs_as_built": ".asbuilt",
    "assess_casefile": ".quality",
    "but_for": ".butfor",
    "compare_snapshots": ".compare",
    "completion_trend": ".trend",
    "delay_summary": ".eot",
    "recover": ".recovery",
    "time_impact": ".impact",
    "time_impact_series": ".impact",
    "time_impacts": ".impact",
})
