"""Run the statmargin command line with a stop signal or a fault at one named stage of a run.

Used by ``test_interrupt.py`` to interrupt a real process at a chosen moment,
the way a user's Ctrl+C or a shutdown would::

    python interrupt_runner.py STAGE ACTION statmargin-arguments...

STAGE is where the run is hit: ``read`` (reading the data), ``analyse`` (the
analyses), ``build`` (assembling the new workbook), ``temp-written`` (the
temporary file is written, before its check), ``verify`` (during the check),
``rename`` (just before the temporary file replaces the workbook) or
``replaced`` (just after). ACTION is ``SIGINT`` or ``SIGTERM`` (sent to the
process itself, so it arrives exactly there) or ``fault`` (an input/output
error raised there).
"""

from __future__ import annotations

import errno
import os
import signal
import sys
from collections.abc import Callable
from typing import Any

STAGES = ("read", "analyse", "build", "temp-written", "verify", "rename", "replaced")
WRITE_STAGES = ("temp-written", "verify", "rename")


def _fire(action: str) -> None:
    if action == "fault":
        raise OSError(errno.EIO, "injected fault")
    os.kill(os.getpid(), getattr(signal, action))


def _before(module: Any, name: str, action: str) -> None:
    original: Callable[..., Any] = getattr(module, name)

    def wrapped(*args: Any, **kwargs: Any) -> Any:
        _fire(action)
        return original(*args, **kwargs)

    setattr(module, name, wrapped)


def _after_replace(action: str) -> None:
    original = os.replace

    def replaced(src: Any, dst: Any, *args: Any, **kwargs: Any) -> None:
        original(src, dst, *args, **kwargs)
        _fire(action)

    os.replace = replaced  # type: ignore[assignment]


def install(stage: str, action: str) -> None:
    """Arrange for ``action`` to happen when the run reaches ``stage``."""
    from statmargin.designs import engine
    from statmargin.io.file import sink
    from statmargin.read import reader

    if stage == "read":
        _before(reader, "read_table", action)
    elif stage == "analyse":
        _before(engine, "run_answers", action)
    elif stage == "build":
        _before(sink, "build_package", action)
    elif stage == "temp-written":
        _before(sink, "verify", action)
    elif stage == "verify":
        _before(sink, "office_document_part", action)  # called half way through the check
    elif stage == "rename":
        _before(sink, "before_replace", action)
    elif stage == "replaced":
        _after_replace(action)
    else:
        raise SystemExit(f"unknown stage {stage!r}; one of {', '.join(STAGES)}")


def main(argv: list[str]) -> None:
    """Install the stage's action, then run the command line (which exits with its code)."""
    stage, action, *args = argv[1:]
    # A suite started with Ctrl+C ignored (nohup, some CI runners) passes that on; a user's terminal does not.
    signal.signal(signal.SIGINT, signal.default_int_handler)
    install(stage, action)
    from statmargin.cli import main as cli

    cli(args=args, prog_name="statmargin")


if __name__ == "__main__":
    main(sys.argv)
