"""The ``forensic`` command group and the error handling every command shares."""

from __future__ import annotations

import os

import click

from .. import __version__
from ..errors import ForensicError

__all__ = ["main"]


class _Group(click.Group):
    """A group that shows library errors as ``Error: ...`` (exit 1), never a traceback."""

    def invoke(self, ctx: click.Context):
        try:
            return super().invoke(ctx)
        except (click.exceptions.ClickException, click.exceptions.Exit, click.exceptions.Abort):
            raise
        except ForensicError as exc:
            raise click.ClickException(str(exc)) from None
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


@click.group(cls=_Group, context_settings={"help_option_names": ["-h", "--help"], "max_content_width": 100})
@click.version_option(__version__, prog_name="forensic")
def main() -> None:
    """Delay and forensic schedule analysis from a casefile folder.

    A casefile holds the baseline programme, the monthly updates, calendars,
    parties, delay events and fragnets (see casefiles/README.md). Start with
    `forensic demo`, then `forensic check` and `forensic schedule` on your own.

    The results support, and do not replace, the judgement of a qualified
    scheduling professional; entitlement depends on the contract and the
    applicable law.
    """
