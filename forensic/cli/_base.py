"""The ``forensic`` command group and the error handling every command shares."""

from __future__ import annotations

import os
import signal
import sys
import threading

import click

from forensic.casefile.limits import Limits
from forensic.core.errors import ForensicError, printable
from forensic.core.version import __version__

from ._progress import PROGRESS_KEY

__all__ = ["main"]


# Each command, the module that defines it, and the line ``forensic --help`` shows for it. A
# command's module (and the libraries it needs: numpy, networkx, scipy, reportlab, openpyxl)
# is imported only when that command runs, so start-up and --help stay quick (click's lazy
# loading pattern: list_commands / get_command).
COMMANDS: dict[str, tuple[str, str]] = {
    "batch": ("batch", "Check and analyse (windows, half-step, ledger) every casefile under a folder."),
    "but-for": ("impact", "But-for analysis: collapse the as-built schedule (AACE RP 29R-03 MIP 3.8)."),
    "check": ("check", "Load and validate every snapshot of CASEFILE."),
    "compare": ("compare", "List what changed in CASEFILE from snapshot OLD to snapshot NEW."),
    "demo": ("demo", "Copy the demo casefile to a folder, run the main job on it, write its report."),
    "eot": ("eot", "The delay summary per event: windows, time impact and but-for side by side."),
    "export": ("export", "Run every analysis on CASEFILE and write all their tables."),
    "impact": ("impact", "Time impact analysis: insert an event into its unimpacted update."),
    "import": ("importer", "Build a casefile from CSV or XLSX exports described by a mapping."),
    "recover": ("recover", "Plan the cheapest way to win back days on a snapshot."),
    "report": ("report", "Write the PDF narrative report of CASEFILE."),
    "schedule": ("schedule", "Schedule one snapshot of CASEFILE by the critical path method."),
    "synth": ("synth", "Write an invented casefile of a large programme to OUT_DIR."),
    "windows": ("windows", "Windows analysis of CASEFILE with the half-step split and the ledger."),
}


class _Group(click.Group):
    """A group that shows library errors as ``Error: ...`` (exit 1), never a traceback.

    Its commands are loaded lazily from :data:`COMMANDS`.
    """

    def list_commands(self, ctx: click.Context) -> list[str]:
        return sorted(set(super().list_commands(ctx)) | set(COMMANDS))

    def get_command(self, ctx: click.Context, cmd_name: str):
        if cmd_name not in self.commands and cmd_name in COMMANDS:
            import importlib

            importlib.import_module(f"{__package__}.{COMMANDS[cmd_name][0]}")  # registers it on the group
        return super().get_command(ctx, cmd_name)

    def format_commands(self, ctx: click.Context, formatter: click.HelpFormatter) -> None:
        """The command list of ``--help`` from :data:`COMMANDS`, without importing any command."""
        rows = [(name, COMMANDS[name][1] if name in COMMANDS else (self.commands[name].get_short_help_str(60)))
                for name in self.list_commands(ctx)]
        if rows:
            with formatter.section("Commands"):
                formatter.write_dl(rows)

    def invoke(self, ctx: click.Context):
        if threading.current_thread() is threading.main_thread() and \
                getattr(signal.getsignal(signal.SIGINT), "forensic_early", False):
            # From here Ctrl-C is a KeyboardInterrupt again (the entry point's
            # early handler exits at once), so that an interrupted write can
            # remove its temporary file before the message below.
            signal.signal(signal.SIGINT, signal.default_int_handler)
        try:
            return super().invoke(ctx)
        except click.exceptions.NoSuchOption as exc:
            if exc.option_name in _GROUP_OPTIONS and ctx.invoked_subcommand:
                exc.message = exc.message.rstrip(".") + (
                    f" after the command. {exc.option_name} is an option of forensic itself: put it "
                    f"before the command (forensic {exc.option_name} N {ctx.invoked_subcommand} ...)."
                )
            exc.message = printable(exc.message)
            raise
        except click.exceptions.ClickException as exc:
            exc.message = printable(exc.message)  # a value quoted from a hostile input stays inert
            raise
        except (click.exceptions.Exit, click.exceptions.Abort):
            raise
        except ForensicError as exc:
            raise click.ClickException(printable(str(exc))) from None
        except BrokenPipeError:
            # The reader went away (``forensic ... | head``): stop quietly, as
            # the Python docs advise ("Note on SIGPIPE", signal module), with
            # stdout pointed at devnull so the final flush cannot fail again.
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
            ctx.exit(1)
        except KeyboardInterrupt:
            # The interrupt has unwound through every write (each removes its temporary
            # file on the way out). Leave at once with 130: a clean interpreter shutdown
            # after an interrupt during a lazy import was seen to die of SIGINT (-2).
            click.echo("Interrupted; nothing was written.", err=True)
            if any(getattr(sys.modules.get(m), "PROGRAM", False) for m in ("forensic.__main__", "__main__")):
                # the real program only (the script, or python -m forensic), never a caller's process
                sys.stdout.flush()
                sys.stderr.flush()
                os._exit(130)
            ctx.exit(130)
        except Exception as exc:  # a bug: say so plainly, keep the traceback for developers
            if os.environ.get("FORENSIC_DEBUG"):
                raise
            msg = (
                f"internal error ({type(exc).__name__}: {exc}); please report it with the "
                "command you ran (FORENSIC_DEBUG=1 shows the traceback)"
            )
            raise click.ClickException(printable(msg)) from None


_GROUP_OPTIONS = ("--max-activities", "--max-links", "--max-file-mb", "--progress")
_DEFAULT = Limits()
_MB = 1024 * 1024


@click.group(cls=_Group, context_settings={"help_option_names": ["-h", "--help"], "max_content_width": 100})
@click.version_option(__version__, prog_name="forensic")
@click.option("--max-activities", type=click.IntRange(min=1), default=_DEFAULT.max_activities,
              envvar="FORENSIC_MAX_ACTIVITIES", show_default=True, show_envvar=True,
              help="Most activities read from one snapshot or fragnet table.")
@click.option("--max-links", type=click.IntRange(min=1), default=_DEFAULT.max_links,
              envvar="FORENSIC_MAX_LINKS", show_default=True, show_envvar=True,
              help="Most links read from one snapshot or fragnet table.")
@click.option("--max-file-mb", type=click.IntRange(min=1), default=_DEFAULT.max_file_bytes // _MB,
              envvar="FORENSIC_MAX_FILE_MB", show_default=True, show_envvar=True,
              help="Largest casefile file read, in MiB (checked before it is read).")
@click.option("--progress", is_flag=True, envvar="FORENSIC_PROGRESS", show_envvar=True,
              help="Status lines on stderr even when it is not a terminal (by default they show only at a "
              "terminal, for work of more than about a second).")
@click.pass_context
def main(ctx: click.Context, max_activities: int, max_links: int, max_file_mb: int, progress: bool) -> None:
    """Delay and forensic schedule analysis from a casefile folder.

    A casefile holds the baseline programme, the monthly updates, calendars,
    parties, delay events and fragnets (see casefiles/README.md). Start with
    `forensic demo`, which copies the demo casefile to forensic-demo/riverside
    (the folder the examples use), then `forensic check` and `forensic
    schedule` on your own.

    The results support, and do not replace, the judgement of a qualified
    scheduling professional; entitlement depends on the contract and the
    applicable law.

    The --max-* options (or their environment variables) set the ceilings
    on what any command loads, so a hostile casefile cannot exhaust memory;
    see docs/robustness.md.

    Example: forensic --max-activities 5000 check forensic-demo/riverside
    """
    ctx.obj = Limits(max_file_bytes=max_file_mb * _MB, max_activities=max_activities, max_links=max_links)
    ctx.meta[PROGRESS_KEY] = progress
