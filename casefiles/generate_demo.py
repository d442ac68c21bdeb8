"""Generate the demo casefile ``casefiles/riverside/``.

The project, the town, the river and every party are invented for this
tool: the Merrowby Riverside Library and Civic Hall, built for Merrowby
Town Council by Tarrant & Vell Builders on the bank of the river Sallow.

How the record is made
----------------------
1. A baseline network (``riverside_generator.network.baseline``) of about 170
   activities in seven areas.
2. An *as-built* network: the last programme (baseline + both fragnets +
   the revisions) with the durations that the work really took and the
   out-of-sequence start, scheduled once with the real engine from the
   baseline data date. Its early dates are the as-built dates.
3. Each monthly update is the programme known at its data date (the
   fragnets and revisions introduced by then) with progress read off the
   as-built dates: finished before the data date, in progress across it
   (remaining = working days from the data date to the as-built finish),
   or not started. Two deliberate deviations: one actual finish reported
   wrongly and corrected a month later.

Everything is deterministic (no randomness), so running the script again
reproduces the committed files byte for byte::

    python casefiles/generate_demo.py            # rewrites casefiles/riverside
    python casefiles/generate_demo.py --out DIR  # writes the casefile into DIR

The story (what happened each month and what the analyses should find) is
in ``MONTHS`` and ``EVENTS`` (``riverside_generator/story.py``), in the
casefile's ``README.md`` and, as numbers for tests, in its ``story.toml``.
The modules of the generator are in ``casefiles/riverside_generator/``;
this script joins them and writes the files.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from casefiles.riverside_generator.facts import check_story, story_facts, tia_delay  # noqa: E402
from casefiles.riverside_generator.fragnets import FRAGNETS, fragnet_as_filed  # noqa: E402
from casefiles.riverside_generator.readme import readme  # noqa: E402
from casefiles.riverside_generator.setting import (  # noqa: E402
    ACT_COLUMNS,
    CALENDARS,
    LINK_COLUMNS,
    NAME,
    PROJECT,
)
from casefiles.riverside_generator.simulation import build_snapshots, schedule_all  # noqa: E402
from casefiles.riverside_generator.story import DATA_DATES, EVENTS, MONTHS, SNAPSHOT_IDS  # noqa: E402
from casefiles.riverside_generator.story_toml import story_toml  # noqa: E402
from casefiles.riverside_generator.tables import (  # noqa: E402
    activity_rows,
    csv_text,
    events_csv,
    fragnet_files,
    link_rows,
    manifest_text,
)

# The script's own names, and those of its modules that tests and readers use through it.
__all__ = [
    "CALENDARS",
    "DATA_DATES",
    "EVENTS",
    "FRAGNETS",
    "MONTHS",
    "NAME",
    "PROJECT",
    "SNAPSHOT_IDS",
    "build_snapshots",
    "files",
    "fragnet_as_filed",
    "generate",
    "main",
    "schedule_all",
    "story_facts",
    "tia_delay",
]


def files() -> dict[str, str]:
    """Every file of the casefile: relative path -> text."""
    snaps = build_snapshots()
    res = schedule_all(snaps)
    check_story(snaps, res)
    facts = story_facts(snaps, res)
    out = {"casefile.toml": manifest_text(), "events.csv": events_csv()}
    for sid, snap in snaps.items():
        out[f"snapshots/{sid}/activities.csv"] = csv_text(
            activity_rows(snap.activities.values()), ACT_COLUMNS)
        out[f"snapshots/{sid}/links.csv"] = csv_text(link_rows(snap.links), LINK_COLUMNS)
    for eid in FRAGNETS:
        out.update(fragnet_files(eid))
    out["story.toml"] = story_toml(facts)
    out["README.md"] = readme(snaps, facts)
    return out


def generate(out_dir: Path) -> list[Path]:
    """Write the casefile into ``out_dir`` (created if needed); returns the files written."""
    written = []
    for rel, text in files().items():
        path = Path(out_dir) / rel
        path.parent.mkdir(parents=True, exist_ok=True)
        tmp = path.with_name(path.name + ".tmp")
        with open(tmp, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
        tmp.replace(path)
        written.append(path)
    return written


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=Path(__file__).resolve().parent / NAME,
                        help="folder to write the casefile into (default: %(default)s)")
    args = parser.parse_args(argv)
    paths = generate(args.out)
    print(f"wrote {len(paths)} files to {args.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
