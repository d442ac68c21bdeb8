"""Attribution: every day of a window's slip handed to activities, events and parties.

``results`` holds the result types that the others share and none
imports back: ``contributors`` hands the progress slip back along the
driving path to activities, events and parties; ``revision`` shares out
the revision slip to the events that brought it in; ``floatuse`` keeps
the float ledger (float used on near-critical paths, by party);
``concurrency`` applies the but-for test for concurrent delay
inside a window and takes the concurrent days out (SCL Delay and
Disruption Protocol, 2nd ed.); ``ledger`` keeps the days by category per
window and cumulative; ``delay`` joins them (``analyse_delay``).
"""

from forensic.core.faces import lazy_face

__all__ = ["CONCURRENT", "DelayAnalysis", "UNASSIGNED", "WindowAttribution", "analyse_delay", "attribute_window", "concurrency_table", "contributors_table", "delay_json", "ledger_table"]

__getattr__, __dir__ = lazy_face(__name__, {
    "CONCURRENT": ".concurrency",
    "DelayAnalysis": ".results",
    "UNASSIGNED": ".contributors",
    "WindowAttribution": ".results",
    "analyse_delay": ".delay",
    "attribute_window": ".delay",
    "concurrency_table": ".concurrency",
    "contributors_table": ".contributors",
    "delay_json": ".delay",
    "ledger_table": ".ledger",
})
