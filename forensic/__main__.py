"""``python -m forensic`` (and the ``forensic`` script) runs the command line.

Ctrl-C is handled from the first instant: the command line's imports
(numpy, networkx, click, and for ``report`` reportlab) take a noticeable
fraction of a second, and a Ctrl-C during them would otherwise end in a
Python traceback. Until a command starts, an interrupt prints one line and
exits with status 130 (128 + SIGINT, the shell convention); nothing has been
written by then. Once a command runs, the ``forensic`` group handles it
(temporary files removed, the same line, status 130).
"""

import signal
import sys


class _EarlyInterruptHandler:
    """The SIGINT handler until a command starts: one line, then exit with status 130."""

    forensic_early = True  # the group puts the default handler back (forensic.cli._base)

    def __call__(self, signum, frame):  # pragma: no cover - timing dependent
        sys.stderr.write("Interrupted; nothing was written.\n")
        sys.stderr.flush()
        import os

        os._exit(130)


_interrupted_early = _EarlyInterruptHandler()


PROGRAM = False  # true once run() starts: the command line may then leave with os._exit on Ctrl-C


def run() -> None:
    """The ``forensic`` entry point: install the early Ctrl-C handler, then import and run the CLI."""
    global PROGRAM
    PROGRAM = True
    try:
        if signal.getsignal(signal.SIGINT) is not signal.SIG_IGN:  # ignored (nohup, a background job): keep so
            signal.signal(signal.SIGINT, _interrupted_early)
    except ValueError:  # not the main thread: leave the handler alone
        pass
    _fewer_collections()
    from .cli import main

    try:
        main(prog_name="forensic")
    finally:
        _no_collections_at_exit()


def _fewer_collections() -> None:
    """Run the cycle collector's youngest generation every 100,000 allocations, not every 700.

    A command builds hundreds of thousands of records that live until it
    ends and hold no reference cycles; at Python's default threshold the
    collector scans them again and again (synth 20,000 activities x 24
    updates, ``forensic windows``: 20.4 s at the default, 18.0 s here, the
    same 300 MB peak; switching it off saved no more and let memory grow to
    1.2 GB). Only the program does this: a caller that runs the commands in
    its own process keeps its own setting.
    """
    import gc

    _, older, oldest = gc.get_threshold()
    gc.set_threshold(100_000, older, oldest)


def _no_collections_at_exit() -> None:
    """Keep the objects still alive out of the collector's passes while the interpreter shuts down.

    The program ends when the command returns: the interpreter then frees
    the loaded modules and runs the cycle collector over every object still
    alive (hundreds of thousands with numpy and pandas loaded), about 0.1 s
    of a 1 s command on 50,000 activities. :func:`gc.freeze` moves them out
    of its reach; they are freed by reference counting as usual, exit
    handlers still run, and nothing outlives the process. Only the program
    does this, when it ends (a caller running the commands in its own process
    is not affected).
    """
    import gc

    gc.freeze()


if __name__ == "__main__":
    run()
