"""The ``gvflow`` command.

::

    gvflow demo [--method standard_step|ivp] [--steps N] [--plot FILE.png] [--csv FILE]
    gvflow run REACH.json [--method standard_step|ivp] [--steps N] [--plot FILE.png] [--csv FILE]
    gvflow schema

``demo`` solves the bundled demo reach, ``run`` a reach file (see
:mod:`gvflow.io`); both print the profile summary (segments, profile types,
jumps, controls and a short station table) and the safety caution, and can
write the long-section figure and the full station table. ``schema`` prints
the JSON schema of reach files. Bad input ends the command with exit code 2
and a one-line message on standard error (a plausibility warning is one
line "gvflow: warning: ..." after the report); a fault inside gvflow itself ends
it with exit code 3 and a one-line message (never a traceback).
"""

from __future__ import annotations

import argparse
import json
import sys
import warnings

from .errors import GVFlowWarning

CAUTION = (
    "CAUTION: results are for planning and checking. Verify them against local codes and "
    "standards, and have a licensed engineer review any design that relies on them."
)

METHODS = ("standard_step", "ivp")


def _solve_and_report(reach, args) -> int:
    from .io import write_profile_csv

    profile = reach.solve(method=args.method, n_steps=args.steps)
    summary = profile.summary()
    # (the files first: where one cannot be written the command stops before showing any result)
    written = []
    if args.plot:
        _write_plot(profile, args.plot)
        written.append(f"Long section written to {args.plot}")
    if args.csv:
        write_profile_csv(profile, args.csv)
        written.append(f"Station table ({profile.x.size} stations) written to {args.csv}")
    if reach.name:
        print(reach.name)
    print(summary)
    print()
    for line in written:
        print(line)
    if written:
        print()
    print(CAUTION)
    return 0


def _write_plot(profile, path) -> None:
    from matplotlib.figure import Figure

    from .plot import plot_profile

    fig = Figure(figsize=(10.0, 4.8), layout="constrained")
    plot_profile(profile, fig.add_subplot())
    fig.savefig(path, dpi=150)


def _demo(args) -> int:
    from .io import demo_reach

    return _solve_and_report(demo_reach(), args)


def _run(args) -> int:
    from .io import read_reach

    return _solve_and_report(read_reach(args.reach), args)


def _schema(args) -> int:
    from .io import reach_schema

    print(json.dumps(reach_schema(), indent=2))
    return 0


def _parser() -> argparse.ArgumentParser:
    from ._version import __version__

    parser = argparse.ArgumentParser(
        prog="gvflow",
        description="Gradually varied flow profiles in open channels: solve a reach, print its profile, "
                    "plot its long section.",
        epilog=CAUTION)
    parser.add_argument("--version", action="version", version=f"gvflow {__version__}")
    sub = parser.add_subparsers(dest="command", required=True, metavar="{demo,run,schema}")

    def solve_options(p):
        p.add_argument("--method", choices=METHODS, default="standard_step",
                       help="profile marcher (default: standard_step)")
        p.add_argument("--steps", type=int, default=100, metavar="N",
                       help="computation steps per segment, at least 2 (default: 100)")
        p.add_argument("--plot", metavar="FILE.png", help="write the long-section figure to FILE")
        p.add_argument("--csv", metavar="FILE", help="write the station table (one row per station) to FILE")

    demo = sub.add_parser("demo", help="solve the bundled demo reach and print a summary",
                          description="Solve the bundled demo reach (an invented gated canal, steep chute and "
                                      "stilling reach) and print a summary.", epilog=CAUTION)
    solve_options(demo)
    demo.set_defaults(func=_demo)
    run = sub.add_parser("run", help="solve a reach file and print a summary",
                         description="Solve the reach described in a JSON reach file and print a summary.",
                         epilog=CAUTION)
    run.add_argument("reach", metavar="REACH.json", help="reach file (see 'gvflow schema')")
    solve_options(run)
    run.set_defaults(func=_run)
    schema = sub.add_parser("schema", help="print the JSON schema of reach files",
                            description="Print the JSON schema (draft 2020-12) of reach files.")
    schema.set_defaults(func=_schema)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the ``gvflow`` command with ``argv`` (default: the process arguments); return the exit code."""
    args = _parser().parse_args(argv)
    caught = []
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", GVFlowWarning)
            code = args.func(args)
        _show_warnings(caught)
        return code
    except (ValueError, OSError) as exc:
        _show_warnings(caught)  # (they may explain the error)
        _one_line_error(str(exc))
        return 2
    except (RecursionError, MemoryError) as exc:
        _one_line_error(f"the input is too large or too deeply nested to process ({type(exc).__name__}); "
                        "check the reach file")
        return 2
    except Exception as exc:  # a fault of gvflow, not of the input: still one line, no traceback
        _one_line_error(f"{type(exc).__name__}: {exc}; please report it with the reach file",
                        prefix="gvflow: internal error: ")
        return 3


def _show_warnings(caught) -> None:
    """Plausibility warnings once each, as one line each; others as Python shows them."""
    seen = set()
    for w in caught:
        if issubclass(w.category, GVFlowWarning):
            if str(w.message) not in seen:
                seen.add(str(w.message))
                _one_line_error(str(w.message), prefix="gvflow: warning: ")
        else:
            warnings.showwarning(w.message, w.category, w.filename, w.lineno)


def _one_line_error(text: str, prefix: str = "gvflow: error: ", limit: int = 1000) -> None:
    """Print ``text`` to standard error as one line of at most about ``limit`` characters."""
    message = " ".join(text.split())
    if len(message) > limit:
        message = message[:limit] + "... (message cut)"
    print(prefix + message, file=sys.stderr)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
