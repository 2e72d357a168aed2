"""The ``nestfit`` command line: parse arguments, read files, call the public API, print.

No statistics here: every number printed comes from a result object. Each
subcommand lives in its own module under ``nestfit._commands`` exposing
``register(subparsers)``, which adds its parser and sets ``run`` as the
handler; modules there are discovered automatically. Bad input ends with a
one-line message on stderr and exit status 1 (2 for usage errors, from
argparse), never a traceback.
"""

from __future__ import annotations

import argparse
import importlib
import pkgutil
import sys
from collections.abc import Sequence

from nestfit import __version__
from nestfit.errors import NestfitError, ParseError

__all__ = ["main"]


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="nestfit",
        description="Build group-mean models and compare them as nested least-squares fits.",
    )
    parser.add_argument("--version", action="version", version=f"nestfit {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    import nestfit._commands as commands

    for info in sorted(pkgutil.iter_modules(commands.__path__), key=lambda m: m.name):
        if not info.name.startswith("_"):
            importlib.import_module(f"nestfit._commands.{info.name}").register(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``nestfit`` command; returns the exit status."""
    args = _parser().parse_args(argv)
    try:
        return int(args.run(args))
    except NestfitError as exc:
        message = exc.one_line() if isinstance(exc, ParseError) else " ".join(str(exc).split())
        print(f"nestfit {args.command}: error: {message}", file=sys.stderr)
        return 1
    except OSError as exc:
        print(f"nestfit {args.command}: error: {exc.strerror or exc}: "
              f"{getattr(exc, 'filename', '') or ''}", file=sys.stderr)
        return 1


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
