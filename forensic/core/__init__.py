"""The core: the records of a casefile, calendars, the units of delay, the
critical path method and the ``Table`` that analyses return.

Everything here is a pure function over the frozen dataclasses of
:mod:`forensic.core.model`: no file is read or written. ``errors`` is the
one exception hierarchy; ``calendars`` the working-day arithmetic;
``units`` counts delay in the casefile's unit; ``engine`` schedules a
snapshot by the critical path method (Kelley and Walker 1959; AACE RP
49R-06 for the longest path); ``tables`` is the result type. Nothing in
the core imports from the layers above it.
"""

from forensic.core.faces import lazy_face

__all__ = ["Activity", "Calendar", "Casefile", "CasefileError", "Event", "ForensicError", "Fragnet", "InputProblem", "Link", "Party", "Project", "ScheduleResult", "ScheduledActivity", "Snapshot", "Table", "add_workdays", "schedule", "schedule_snapshot", "unit_counter", "unit_shift", "workdays_between"]

__getattr__, __dir__ = lazy_face(__name__, {
    "Activity": ".model",
    "Calendar": ".model",
    "Casefile": ".model",
    "CasefileError": ".errors",
    "Event": ".model",
    "ForensicError": ".errors",
    "Fragnet": ".model",
    "InputProblem": ".errors",
    "Link": ".model",
    "Party": ".model",
    "Project": ".model",
    "ScheduleResult": ".engine",
    "ScheduledActivity": ".engine",
    "Snapshot": ".model",
    "Table": ".tables",
    "add_workdays": ".calendars",
    "schedule": ".engine",
    "schedule_snapshot": ".engine",
    "unit_counter": ".units",
    "unit_shift": ".units",
    "workdays_between": ".calendars",
})
