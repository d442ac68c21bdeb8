"""The ``forensic`` command group and the error handling every command shares."""

from __future__ import annotations

import os
import sys

import click

from .. import __version__
from ..casefile import Limits
from ..errors import ForensicError

__all__ = ["main"]


class _Group(click.Group):
    """A group that shows library errors as ``Error: ...`` (exit 1), never a traceback."""

    def invoke(self, ctx: click.Context):
        try:
            return super().invoke(ctx)
        except click.exceptions.NoSuchOption as exc:
            if exc.option_name in _GROUP_OPTIONS and ctx.invoked_subcommand:
                exc.message = exc.message.rstrip(".") + (
                    f" after the command. {exc.option_name} is an option of forensic itself: put it "
                    f"before the command (forensic {exc.option_name} N {ctx.invoked_subcommand} ...)."
                )
            raise
        except (click.exceptions.ClickException, click.exceptions.Exit, click.exceptions.Abort):
            raise
        except ForensicError as exc:
            raise click.ClickException(str(exc)) from None
        except BrokenPipeError:
            # The reader went away (``forensic ... | head``): stop quietly, as
            # the Python docs advise ("Note on SIGPIPE", signal module), with
            # stdout pointed at devnull so the final flush cannot fail again.
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
            ctx.exit(1)
        except KeyboardInterrupt:
            click.echo("Interrupted; nothing was written.", err=True)
            ctx.exit(130)
        except Exception as exc:  # a bug: say so plainly, keep the traceback for developers
            if os.environ.get("FORENSIC_DEBUG"):
                raise
            msg = (
                f"internal error ({type(exc).__name__}: {exc}); please report it with the "
                "command you ran (FORENSIC_DEBUG=1 shows the traceback)"
            )
            raise click.ClickException(msg) from None


_GROUP_OPTIONS = ("--max-activities", "--max-links", "--max-file-mb")
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
@click.pass_context
def main(ctx: click.Context, max_activities: int, max_links: int, max_file_mb: int) -> None:
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
