"""The ``gainshape`` command: a study from a shell or a scheduler script.

    gainshape run RECIPE.json INPUT... --out DIR [--scheduler ADDRESS] [--workers N]
    gainshape describe RECIPE.json --sfreq 500
    gainshape history FILE [--full]
    gainshape about
    gainshape --version

Exit codes: 0 done; 1 some recordings failed (the others are done, the
table says which); 2 bad usage or input, a missing extra, a file that
cannot be read, or another run on the same output folder (nothing was
done); 130 interrupted (Ctrl-C: the workers are stopped, nothing is
half-written).
"""

from __future__ import annotations

import argparse
import sys
import warnings
from pathlib import Path

__all__ = ["main"]

EXIT_DONE, EXIT_SOME_FAILED, EXIT_USAGE, EXIT_INTERRUPTED = 0, 1, 2, 130


def main(argv=None) -> int:
    """Run the command line; returns the exit code.

    Examples
    --------
    >>> main(["describe", "missing.json", "--sfreq", "250"])  # doctest: +SKIP
    2
    """
    args = _parser().parse_args(argv)
    try:
        return args.command(args)
    except (ValueError, OSError, TypeError, ImportError) as err:
        print(f"gainshape {args.name}: {err}", file=sys.stderr)
        return EXIT_USAGE
    except KeyboardInterrupt as err:
        count, total = getattr(err, "done", None), getattr(err, "total", None)  # a study's
        done = f"{count} of {total} recordings done" if count is not None else "no recording done"
        print(f"gainshape {args.name}: interrupted: {done}, nothing half-written",
              file=sys.stderr)
        return EXIT_INTERRUPTED


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="gainshape", description="Filter EEG recordings with gain-curve recipes.",
        epilog="Exit codes: 0 done; 1 some recordings failed (the others are done); "
               "2 bad usage or input (nothing was done).")
    from ._version import __version__

    parser.add_argument("--version", action="version", version=f"gainshape {__version__}")
    commands = parser.add_subparsers(required=True, metavar="COMMAND")
    run = commands.add_parser("run", help="filter recordings (a BIDS root or files) with a recipe",
                              description="Filter every recording with a recipe, one Dask task "
                                          "each; outputs, sidecars, band_change.nc and methods.txt "
                                          "go to --out.")
    run.add_argument("recipe", help="a recipe file (gainshape.write_recipe)")
    run.add_argument("inputs", nargs="+", help="a BIDS root folder, or recording files")
    run.add_argument("--out", required=True, help="output folder (a BIDS derivatives folder)")
    run.add_argument("--scheduler", help="address of a running Dask scheduler to use")
    run.add_argument("--workers", type=int, help="worker processes of the local cluster "
                                                 "(default: one per core)")
    for entity in ("subject", "session", "task"):
        run.add_argument(f"--{entity}", action="append", help=f"only this {entity} of a BIDS "
                                                             "root (repeatable)")
    run.add_argument("--overwrite", action="store_true", help="redo recordings that are up to date")
    run.add_argument("--allow-short", action="store_true",
                     help="filter recordings shorter than their own files state (truncated)")
    run.add_argument("--quiet", action="store_true", help="no progress bar")
    run.set_defaults(command=_run, name="run")
    describe = commands.add_parser("describe", help="print the filter a recipe realizes at a rate")
    describe.add_argument("recipe", help="a recipe file")
    describe.add_argument("--sfreq", type=float, required=True, help="sampling rate in Hz")
    describe.set_defaults(command=_describe, name="describe")
    history = commands.add_parser("history", help="print a file's filter steps and methods paragraph")
    history.add_argument("file", help="a FIF file written by gainshape")
    history.add_argument("--full", action="store_true",
                         help="the full methods paragraph: every stop band and edge")
    history.set_defaults(command=_history, name="history")
    about = commands.add_parser("about", help="versions, platform and optional features, "
                                              "for a bug report")
    about.set_defaults(command=_about, name="about")
    return parser


def _about(args) -> int:
    from .about import about

    print(about())
    return EXIT_DONE


def _run(args) -> int:
    from .studies.stamps import unchanged_study

    inputs = args.inputs[0] if len(args.inputs) == 1 and Path(args.inputs[0]).is_dir() else args.inputs
    selection = {"subjects": args.subject, "sessions": args.session, "tasks": args.task}
    kept = None if args.overwrite else unchanged_study(args.recipe, inputs, Path(args.out),
                                                       selection, band_change=True)
    if kept is not None:  # answered from file stamps: no MNE, no cluster
        print(_table_text([[source, "up to date", 0.0, ""] for source, *_ in kept]))
        return EXIT_DONE
    from .studies.study import run_study

    table = run_study(args.recipe, inputs, args.out, args.scheduler, overwrite=args.overwrite,
                      workers=args.workers, allow_short=args.allow_short,
                      verbose=not args.quiet, **selection)
    print(_table_text(table[["source", "status", "seconds", "error"]].values.tolist()))
    for source, said in zip(table["source"], table["warnings"]):
        if said:
            print(f"\nWarnings for {Path(source).name}:\n  " + said.replace("\n", "\n  "))
    return EXIT_SOME_FAILED if (table["status"] == "failed").any() else EXIT_DONE


def _table_text(rows) -> str:
    """The run's table as text: source, status, seconds, error (columns aligned).

    >>> print(_table_text([["a_raw.fif", "filtered", 1.234, ""]]))
    source     status    seconds  error
    a_raw.fif  filtered     1.23
    """
    cells = [["source", "status", "seconds", "error"]]
    cells += [[str(src), str(status), f"{seconds:.2f}", str(error)]
              for src, status, seconds, error in rows]
    widths = [max(len(row[i]) for row in cells) for i in range(4)]
    lines = ["  ".join([row[0].ljust(widths[0]), row[1].ljust(widths[1]),
                        row[2].rjust(widths[2]), row[3]]).rstrip() for row in cells]
    return "\n".join(lines)


def _describe(args) -> int:
    from .record.recipes import read_recipe, recipe_design

    realized = recipe_design(read_recipe(args.recipe), args.sfreq)
    print(realized.curve.describe())
    for label, value in realized.summary():
        print(f"{label}: {value}")
    return EXIT_DONE


def _history(args) -> int:
    import mne

    from .record.steps import curve_words, history
    from .record.methods import methods_text

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # MNE's file-naming advice is not the point here
            raw = mne.io.read_raw_fif(args.file, preload=False, verbose=False)
    except Exception as err:  # one line, whatever the reader's complaint
        raise ValueError(f"cannot read {args.file} as a FIF recording "
                         f"({type(err).__name__}: {str(err).splitlines()[0] if str(err) else ''})"
                         ) from None
    steps = history(raw)
    print(f"{len(steps)} step{'s' if len(steps) != 1 else ''} recorded in {args.file}")
    for number, step in enumerate(steps, start=1):
        print(f"{number}. {step.get('time', '?')}: {step['realized'].get('kind', '?')} filter, "
              f"{curve_words(step['curve'])}, designed at {step['design'].get('sfreq', '?')} Hz")
    print()
    print(methods_text(raw, detail="full" if args.full else "brief"))
    if steps and not args.full:
        print(f"\n(Every stop band and edge: gainshape history {args.file} --full)")
    return EXIT_DONE


if __name__ == "__main__":
    raise SystemExit(main())
