"""``induct demo``: run the main job end to end on the bundled fictional scenario."""

from __future__ import annotations


def register(subparsers):
    p = subparsers.add_parser(
        "demo",
        help="run the whole job on the bundled fictional moon Ilmare: figures and a report",
        description=(
            "Forward response, driving spectrum, flyby prediction, feasibility maps, amplitude-phase diagram, "
            "period/altitude separation and inversion of synthetic measurements for the fictional moon Ilmare. "
            "Writes every figure (PNG and PDF), the data files and report.md into the output folder."
        ),
    )
    p.add_argument("--out", default="induct-demo", metavar="DIR", help="output folder (default ./induct-demo)")
    p.add_argument("--fast", action="store_true", help="coarse grids: a quick look in a few seconds")
    p.add_argument("--no-progress", action="store_true", help="no progress bar")
    return p


def run(args) -> int:
    from induct.cli.demo import LIMITS, run_demo

    steps, report = run_demo(args.out, fast=args.fast, progress=not (args.no_progress or args.quiet))
    first = steps[0].output.strip().splitlines()
    print("\n".join(first))
    print()
    for step in steps[1:]:
        print(f"- {step.title} ({step.seconds:.1f} s)")
        if step.argv[0] == "invert":
            print("\n".join("    " + line for line in step.output.strip().splitlines()[:14]))
    print()
    print(LIMITS)
    print(f"\nFigures, data and the report (report.md) are in {report.parent.resolve()}")
    return 0
