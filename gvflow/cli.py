"""The ``gvflow`` command."""

from __future__ import annotations

import argparse
import sys

CAUTION = (
    "CAUTION: results are for planning and checking. Verify them against local codes and "
    "have a licensed engineer review any design."
)


def _demo(args) -> int:
    import gvflow as gv

    sec = gv.Trapezoidal(bottom_width=4.0, side_slope=2.0)
    print("gvflow demo: uniform and critical flow in a 4 m trapezoidal canal (z = 2, n = 0.022)")
    print(f"{'Q [m³/s]':>9} {'slope':>8} {'yn [m]':>8} {'yc [m]':>8} {'class':>9}")
    for q in (5.0, 20.0, 60.0):
        for s in (0.0005, 0.02):
            yn = gv.normal_depth(sec, q, s, 0.022)
            yc = gv.critical_depth(sec, q)
            print(f"{q:9.1f} {s:8.4f} {yn:8.3f} {yc:8.3f} {gv.slope_class(sec, q, s, 0.022):>9}")
    print()
    print(CAUTION)
    return 0


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="gvflow", description="Gradually varied flow profiles.")
    sub = parser.add_subparsers(dest="command", required=True)
    sub.add_parser("demo", help="solve the bundled demo and print a summary")
    args = parser.parse_args(argv)
    try:
        return {"demo": _demo}[args.command](args)
    except ValueError as exc:
        print(f"gvflow: error: {exc}", file=sys.stderr)
        return 2


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
