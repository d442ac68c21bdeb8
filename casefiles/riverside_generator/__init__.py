"""The modules of the demo casefile's generator (``casefiles/generate_demo.py`` runs them).

``setting`` holds the project, the parties and the calendars; ``network``
builds the baseline network area by area; ``fragnets`` the two fragnets;
``story`` is the month-by-month story, the events, the revisions, the
as-built record and the findings the analyses should reach;
``simulation`` turns them into the snapshots; ``facts`` computes the
story's numbers from the schedules and refuses a record that does not tell
the story; ``tables``, ``story_toml`` and ``readme`` write the files.
"""

__all__: list[str] = []
