"""forensic: delay and forensic schedule analysis from a casefile folder.

The data flows one way: load (:mod:`forensic.casefile`) -> schedule
(:mod:`forensic.engine`) -> compare and analyse -> attribute -> report.
The results support, and do not replace, the judgement of a qualified
scheduling professional.
"""

__version__ = "0.1.0"
