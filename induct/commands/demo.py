"""``induct demo``: run the main job on the bundled fictional scenario."""

from __future__ import annotations

from . import respond


def register(subparsers):
    p = subparsers.add_parser(
        "demo",
        help="run the forward model on the bundled fictional scenario (Ilmare) and print the table",
        description="Forward induction response of the bundled fictional moon Ilmare at its driving periods.",
    )
    p.add_argument("--scenario", default="ilmare", help="bundled scenario name or TOML file (default ilmare)")
    return p


def run(args) -> int:
    import argparse

    ns = argparse.Namespace(scenario=args.scenario, periods_h=None, degree=1, json=False, csv=None)
    return respond.run(ns)
