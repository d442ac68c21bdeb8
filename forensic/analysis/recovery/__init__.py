"""Acceleration and recovery: the time-cost trade-off on the remaining work.

Which remaining activities should be shortened, and by how many whole
working days, so that the completion is met by a target date at the least
cost (or by the fewest activities shortened, with cost as the tie-breaker)?
This is the project time-cost trade-off of Kelley and Walker (1959), Kelley
(1961) and Fulkerson (1961), which they solved as a linear program; with
whole days of crashing and several calendars it becomes a mixed-integer
program, solved here exactly by ``scipy.optimize.milp`` (HiGHS branch and
bound with a zero optimality gap) within a time limit.

``results`` holds the result types and the limits, which the others share
and none imports back; ``network`` reads the remaining network as the
engine sees it (status, durations, the links that bind, the range of each
boundary); ``program`` writes the mixed-integer program over it (the model
notes are there); ``solver`` solves it (lexicographic objectives, the time
limit); ``planner`` confirms every plan by the engine (``apply_plan``);
``curve`` gives the time-cost curve; ``acceleration`` joins them
(``recover``); ``tables`` gives the tables and the JSON object.

Only remaining work is shortened: the duration of work not started, the
remaining duration of work in progress. Finished work and milestones are
never shortened, an activity never by more than its ``crash_days``, and
never below one working day of remaining work. An activity with
``crash_days`` but no ``crash_cost`` cannot be priced and is not shortened
(a warning says so). Days recovered, the curve's steps and ``days`` in the
``working-days`` delay unit are working days of the completion activity's
calendar (named in the result), since that is the calendar its date moves
on.

References
----------
Kelley, J. E. (1961). Critical-path planning and scheduling: mathematical
basis. *Operations Research* 9(3), 296-320.
Fulkerson, D. R. (1961). A network flow computation for project cost
curves. *Management Science* 7(2), 167-178.
Kelley, J. E. and Walker, M. R. (1959). Critical-path planning and
scheduling. *Proceedings of the Eastern Joint Computer Conference*, 160-173.
Wiest, J. D. (1981). Precedence diagramming method: some unusual
characteristics and their implications for project managers. *Journal of
Operations Management* 1(3), 121-130 (from memory).
"""

from forensic.core.faces import lazy_face

__all__ = ["CURVE_COLUMNS", "DEFAULT_TIME_LIMIT", "MAX_SOLVES", "MAX_TIME_LIMIT", "OBJECTIVES", "PLAN_COLUMNS", "CurvePoint", "RecoveryPlan", "RecoveryResult", "Shortening", "apply_plan", "recover", "recovery_curve_table", "recovery_json", "recovery_plan_table"]

__getattr__, __dir__ = lazy_face(__name__, {
    "CURVE_COLUMNS": ".tables",
    "DEFAULT_TIME_LIMIT": ".results",
    "MAX_SOLVES": ".results",
    "MAX_TIME_LIMIT": ".results",
    "OBJECTIVES": ".results",
    "PLAN_COLUMNS": ".tables",
    "CurvePoint": ".results",
    "RecoveryPlan": ".results",
    "RecoveryResult": ".results",
    "Shortening": ".results",
    "apply_plan": ".planner",
    "recover": ".acceleration",
    "recovery_curve_table": ".tables",
    "recovery_json": ".tables",
    "recovery_plan_table": ".tables",
})
