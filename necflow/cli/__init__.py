"""The ``necflow`` command: one sub-command per job, thin.

This package alone parses arguments, prints and decides exit statuses; the
library under it takes plain arguments, returns results and raises
:class:`necflow.errors.NecflowError` for everything a user can cause.  Each
module holds one group of sub-commands: its parsers (``add_parsers``), the
checks of its options and its printing:

* :mod:`necflow.cli.evaluate`: ``check``, ``evaluate``
* :mod:`necflow.cli.report`: ``report``
* :mod:`necflow.cli.optimize`: ``optimize``
* :mod:`necflow.cli.progress`: progress on stderr (rich's display on a
  terminal, plain lines otherwise) for a study and for the steps of the other
  long commands; the jobs report steps through an ``on_step`` callback and
  never print
* :mod:`necflow.cli.batch`: ``batch``
* :mod:`necflow.cli.calibrate`: ``fit``, ``trim``, ``tolerance``
* :mod:`necflow.cli.start`: ``new`` (starter designs and examples), ``schema``

Errors arrive as :class:`necflow.errors.NecflowError` and are mapped to one
line on stderr and an exit status here, and only here (:func:`main`):

====  ==========================================================
0     success
1     the job cannot give what was asked: ``check`` found a modelling rule
      broken at error level, and ``evaluate`` refuses to solve such a model
      (the same rule); ``trim`` reached none of its targets
2     bad input (design file, arguments, missing files); every problem of a
      design file is printed, one line each
3     the engine failed on a valid model
70    an internal error (a bug: rerun with ``--debug`` and report it)
130   interrupted (SIGINT, Ctrl-C)
143   ``optimize`` stopped by SIGTERM (its study is saved)
====  ==========================================================

The parsers (:mod:`necflow.cli.parsers`) are argparse alone; a command's
module, with the numerical libraries it needs, is imported only when that
command runs, so that ``necflow --help`` starts fast.
"""

from __future__ import annotations

import argparse
import importlib
import sys
import traceback
import warnings

from necflow import __version__
from necflow.cli import parsers
from necflow.cli.status import INTERNAL_ERROR, INTERRUPTED, NOT_MET, OK, TERMINATED
from necflow.errors import ConfigError, NecflowError, NecflowWarning

#: Most problems of one design file printed; the rest are counted.
MAX_PROBLEMS = 20

__all__ = ["INTERNAL_ERROR", "INTERRUPTED", "NOT_MET", "OK", "TERMINATED", "main"]

#: Commands that report their steps (:class:`necflow.cli.progress.Steps`);
#: ``optimize`` follows its study with its own display.
STEPPED = ("check", "evaluate", "report", "batch", "fit", "trim", "tolerance")


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="necflow",
        description="Model an HF wire antenna with its feed system: SWR, impedances and "
        "the full loss budget from a YAML design file.")
    p.add_argument("--version", action="version", version=f"necflow {__version__}")
    p.add_argument("--debug", action="store_true",
                   help="show Python tracebacks for errors")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    parsers.add_evaluate_parsers(sub)    # check, evaluate
    parsers.add_report_parsers(sub)      # report
    parsers.add_optimize_parsers(sub)    # optimize
    parsers.add_batch_parsers(sub)       # batch
    parsers.add_calibrate_parsers(sub)   # fit, trim, tolerance
    parsers.add_start_parsers(sub)       # new, schema
    return p


def _show_warning(message, category, filename, lineno, file=None, line=None):
    text = str(message).replace("\n", " ")
    prefix = "warning" if issubclass(category, NecflowWarning) else category.__name__
    print(f"necflow: {prefix}: {text}", file=sys.stderr)


def main(argv: list[str] | None = None) -> int:
    """Entry point; returns the exit status."""
    argv = list(sys.argv[1:] if argv is None else argv)
    args = _parser().parse_args(argv)
    old = warnings.showwarning
    warnings.showwarning = _show_warning
    args.progress = None
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("default", NecflowWarning)
            if args.command in STEPPED:   # on a terminal, shown while the modules load
                args.progress = importlib.import_module("necflow.cli.progress").Steps(
                    args.command, sys.stderr)
            module, name = args.handler.split(":")
            handler = getattr(importlib.import_module(module), name)   # the command's module
            return int(handler(args) or OK)
    except NecflowError as exc:
        _stop(args)
        if args.debug:
            traceback.print_exc()
        design = getattr(args, "design", None)
        if (isinstance(exc, ConfigError) and design and exc.line is None
                and exc.file in (None, str(design)) and exc.field
                and not exc.field.startswith("--")):
            exc = importlib.import_module("necflow.config.load").locate(exc, design)
        # a design file's problems all at once, one line each (at most MAX_PROBLEMS)
        for line in (exc.lines(MAX_PROBLEMS) if isinstance(exc, ConfigError) else [str(exc)]):
            print(f"necflow: error: {line}", file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:
        _stop(args)
        print("necflow: interrupted", file=sys.stderr)
        return INTERRUPTED
    except Exception as exc:  # a bug, not a user error: still one line by default
        _stop(args)
        if args.debug:
            traceback.print_exc()
        print(f"necflow: internal error: {type(exc).__name__}: {exc} "
              "(rerun with --debug for the traceback)".replace("\n", " "), file=sys.stderr)
        return INTERNAL_ERROR
    finally:
        _stop(args)
        warnings.showwarning = old


def _stop(args) -> None:
    """Close the command's progress display, if it has one (idempotent)."""
    if getattr(args, "progress", None) is not None:
        args.progress.close()
