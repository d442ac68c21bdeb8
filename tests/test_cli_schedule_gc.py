"""`forensic schedule` pauses the cycle collector for the command and gives it back as it found it."""

from __future__ import annotations

import gc
import json
from pathlib import Path

from click.testing import CliRunner

from forensic.cli import main

DEMO = Path(__file__).resolve().parent.parent / "casefiles" / "riverside"


def test_the_collector_is_back_on_after_the_command_and_off_during_it(monkeypatch):
    import forensic.cli.schedule as command

    seen = []
    real = command.load_lazily

    def load(*args, **kwargs):
        seen.append(gc.isenabled())
        return real(*args, **kwargs)

    monkeypatch.setattr(command, "load_lazily", load)
    assert gc.isenabled()
    frozen = gc.get_freeze_count()
    result = CliRunner().invoke(main, ["schedule", str(DEMO), "--json"])
    assert result.exit_code == 0, result.output
    assert json.loads(result.output)["activities"]
    assert seen == [False]
    assert gc.isenabled()
    assert gc.get_freeze_count() == frozen  # nothing of the caller's kept out of later collections


def test_a_collector_switched_off_by_the_caller_stays_off():
    gc.disable()
    try:
        result = CliRunner().invoke(main, ["schedule", str(DEMO), "--snapshot", "BL", "--csv"])
        assert result.exit_code == 0, result.output
        assert not gc.isenabled()
    finally:
        gc.enable()


def test_a_failing_command_still_gives_the_collector_back(tmp_path, monkeypatch):
    import forensic.cli.schedule as command

    seen = []
    real = command.load_lazily

    def load(*args, **kwargs):
        seen.append(gc.isenabled())
        return real(*args, **kwargs)

    monkeypatch.setattr(command, "load_lazily", load)
    (tmp_path / "casefile.toml").write_text("not [valid toml", encoding="utf-8")
    result = CliRunner().invoke(main, ["schedule", str(tmp_path), "--json"])
    assert result.exit_code != 0 and "TOML" in result.output
    assert seen == [False]  # it failed inside the command, with the collector paused
    assert gc.isenabled()


def test_only_the_program_keeps_its_last_objects_from_the_collector_as_it_ends(monkeypatch):
    """``run()`` (the ``forensic`` program) freezes what is alive when the command ends, even on error.

    The freeze saves the shutdown's collector passes over every object still
    alive; a caller running the command in its own process (``main``, as
    above) keeps every object collectable.
    """
    import forensic.__main__ as program
    import forensic.cli as cli

    def failing(**_kw):
        raise SystemExit(1)

    monkeypatch.setattr(cli, "main", failing)
    monkeypatch.setattr(program.signal, "signal", lambda *_a: None)  # the test's own Ctrl-C handler stays
    threshold = gc.get_threshold()
    before = gc.get_freeze_count()
    try:
        try:
            program.run()
        except SystemExit as exc:
            assert exc.code == 1
        assert gc.get_freeze_count() > before
    finally:
        gc.unfreeze()
        gc.set_threshold(*threshold)
        program.PROGRAM = False
