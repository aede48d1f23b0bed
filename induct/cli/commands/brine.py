"""``induct brine``: conductivity and freezing point of seawater or a single-salt brine.

Examples::

    induct brine --solute seawater --salinity 35 --temperature 0 --pressure 50
    induct brine --solute MgSO4 --salinity 0:200:11 --temperature 0 --csv table.csv
    induct brine --solute seawater --salinity 35 --pressure 0:300:7 --json

Each of --salinity, --temperature, --pressure takes a value or a range
``lo:hi:n`` (n evenly spaced values, ends included); ranges give a table over
all combinations. A range starting with a minus sign needs the ``=`` form
(``--temperature=-4:0:5``), since argparse would read it as an option. Without --temperature the conductivity is evaluated at the
freezing point. Extrapolated rows are marked ``*`` and their flags listed.
A single point that is invalid (frozen, above saturation, ...) is an error
(exit 2); in a table, invalid rows are shown with the reason and the command
exits 2 only if no row is valid.
"""

from __future__ import annotations

import csv
import datetime
import itertools
import json

import numpy as np

from induct import __version__
from induct.brine import SOLUTES, conductivity, describe_flags, freezing_point, get_solute


def _units(rec):
    """Units of the output columns for one solute record (salinity unit from the registry)."""
    return {
        "salinity": rec.salinity.meaning,
        "temperature_C": "degC (ITS-90)",
        "pressure_MPa": "MPa (sea pressure)",
        "conductivity_S_per_m": "S/m",
        "freezing_point_C": "degC (ITS-90)",
    }


def _salinity_units_help():
    """'seawater: SP; NaCl, MgSO4, KCl: g/kg' -- the salinity label of every registered solute."""
    by_label = {}
    for name, rec in SOLUTES.items():
        by_label.setdefault(rec.salinity.label, []).append(name)
    return "; ".join(f"{', '.join(names)}: {label}" for label, names in by_label.items())


def register(subparsers):
    """Add the ``brine`` sub-parser and return it."""
    p = subparsers.add_parser(
        "brine",
        help="ocean/brine conductivity (S/m) and freezing point",
        description="Electrical conductivity and freezing point of seawater or a single-salt brine "
                    f"({', '.join(SOLUTES)}), with extrapolation flags.",
    )
    p.add_argument("--solute", required=True, help=f"one of {', '.join(SOLUTES)} (case-insensitive)")
    p.add_argument("--salinity", required=True,
                   help=f"salinity in the solute's unit ({_salinity_units_help()}), value or lo:hi:n")
    p.add_argument("--temperature", default=None,
                   help="temperature in degC, value or lo:hi:n (default: the freezing point); "
                        "write negative ranges as --temperature=-4:0:5")
    p.add_argument("--pressure", default="0", help="sea pressure in MPa, value or lo:hi:n (default 0)")
    p.add_argument("--csv", metavar="FILE", default=None, help="also write the table to FILE (CSV)")
    p.add_argument("--json", action="store_true", help="print JSON (values, units, flags) instead of a table")
    return p


#: Lower bounds of the inputs (the upper bounds depend on the solute and are checked by induct.brine).
_MINIMUM = {"salinity": (0.0, "a salinity"), "pressure": (0.0, "a sea pressure (MPa)")}


def _parse_spec(text, name):
    """Parse ``value`` or ``lo:hi:n`` into ``(lo, hi, n)`` without allocating; values checked (finite, >= minimum)."""
    parts = str(text).split(":")
    try:
        if len(parts) == 1:
            lo = hi = float(parts[0])
            n = 1
        elif len(parts) == 3:
            lo, hi, n = float(parts[0]), float(parts[1]), int(parts[2])
            if n < 1:
                raise ValueError
        else:
            raise ValueError
    except ValueError:
        raise ValueError(f"--{name} must be a number or lo:hi:n (n >= 1 integer); got {text!r}") from None
    for v in (lo, hi):
        if not np.isfinite(v):
            raise ValueError(f"--{name} must be finite, got {text!r}")
        if name in _MINIMUM and v < _MINIMUM[name][0]:
            raise ValueError(f"--{name} must be >= {_MINIMUM[name][0]:g} ({_MINIMUM[name][1]} cannot be negative), "
                             f"got {text!r}")
    return lo, hi, n


def _parse_values(text, name):
    """Parse ``value`` or ``lo:hi:n`` into a 1-D float array."""
    lo, hi, n = _parse_spec(text, name)
    return np.linspace(lo, hi, n)


def _evaluate(solute, s, t, p):
    """One row: dict with values, flags and validity."""
    row = {"salinity": float(s), "temperature_C": None if t is None else float(t),
           "pressure_MPa": float(p)}
    freeze_error = None
    try:
        tf, fflags = freezing_point(solute, s, p, return_flags=True, warn=False)
        row["freezing_point_C"] = float(tf)
    except ValueError as exc:
        tf, fflags, freeze_error = None, 0, str(exc)
        row["freezing_point_C"] = None
    try:
        if t is None:
            if tf is None:
                raise ValueError(f"no freezing point: {freeze_error}; without --temperature the conductivity is "
                                 "evaluated at the freezing point, so give --temperature")
            t = float(tf)
            row["temperature_C"] = t
        k, flags = conductivity(solute, s, t, p, return_flags=True, warn=False)
        flags = int(flags) | int(fflags)
        row.update(conductivity_S_per_m=float(k), flags=describe_flags(flags),
                   extrapolated=bool(flags), valid=True, error=None)
    except ValueError as exc:
        row.update(conductivity_S_per_m=None, flags=[], extrapolated=False, valid=False,
                   error=str(exc))
    return row


def _fmt(v, spec):
    return "-" if v is None else format(v, spec)


def _print_table(rec, rows):
    s_unit = rec.salinity.label
    head = (f"{'':1} {'salinity [' + s_unit + ']':>16} {'T [degC]':>10} {'p [MPa]':>9} "
            f"{'sigma [S/m]':>12} {'T_freeze [degC]':>16}  flags")
    print(f"induct brine: solute {rec.name}")
    print(head)
    for r in rows:
        mark = "*" if r["extrapolated"] else ("!" if not r["valid"] else " ")
        note = ",".join(r["flags"]) if r["valid"] else f"INVALID: {r['error']}"
        print(f"{mark:1} {r['salinity']:16.6g} {_fmt(r['temperature_C'], '10.4f')} "
              f"{r['pressure_MPa']:9.4g} {_fmt(r['conductivity_S_per_m'], '12.6g')} "
              f"{_fmt(r['freezing_point_C'], '16.4f')}  {note}")
    if any(r["extrapolated"] for r in rows):
        print("* extrapolated beyond the reference model (COLD/WARM: Walden scaling in temperature; "
              "DEEP: above 100 MPa; SALTY: SP above 42) -- see docs/brine.md")


def _write_csv(path, rec, rows):
    """Write the table to ``path`` (atomically, through :mod:`induct.io.files`)."""
    from induct.io.files import atomic_open

    with atomic_open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(f"# induct {__version__} brine; solute={rec.name}; "
                 f"created {datetime.datetime.now(datetime.timezone.utc).isoformat(timespec='seconds')}; "
                 f"rows={len(rows)}\n")
        fh.write("# units: " + "; ".join(f"{k} [{v}]" for k, v in _units(rec).items()) + "\n")
        w = csv.writer(fh)
        w.writerow(["salinity", "temperature_C", "pressure_MPa", "conductivity_S_per_m",
                    "freezing_point_C", "extrapolated", "flags", "error"])
        for r in rows:
            w.writerow([r["salinity"], r["temperature_C"], r["pressure_MPa"],
                        "" if r["conductivity_S_per_m"] is None else r["conductivity_S_per_m"],
                        "" if r["freezing_point_C"] is None else r["freezing_point_C"],
                        int(r["extrapolated"]), "|".join(r["flags"]), r["error"] or ""])


def run(args):
    """Execute ``induct brine``; returns the exit code."""
    from induct.cli.budget import check_job

    specs = [_parse_spec(args.salinity, "salinity"), _parse_spec(args.pressure, "pressure")]
    if args.temperature is not None:
        specs.append(_parse_spec(args.temperature, "temperature"))
    rows_n = int(np.prod([float(n) for _, _, n in specs]))
    # each row: a dict of ~10 Python objects (~1.5 kB), its CSV/JSON text (~0.3 kB); 1e4 rows/s
    check_job(args, f"brine table of {rows_n:.3g} rows", rows_n * 2000.0, seconds=rows_n / 1e4)
    sal = _parse_values(args.salinity, "salinity")
    temps = [None] if args.temperature is None else list(_parse_values(args.temperature, "temperature"))
    pres = _parse_values(args.pressure, "pressure")
    # solute record (canonical name, salinity unit) from the registry
    try:
        rec = get_solute(args.solute)
    except ValueError:
        raise ValueError(f"--solute must be one of {', '.join(SOLUTES)}; got {args.solute!r}") from None
    solute = rec.name
    combos = list(itertools.product(sal, temps, pres))
    if len(combos) == 1:
        s, t, p = combos[0]
        row = _evaluate(solute, s, t, p)
        if not row["valid"]:
            raise ValueError(row["error"])
        rows = [row]
    else:
        rows = [_evaluate(solute, s, t, p) for s, t, p in combos]
    if args.csv:
        _write_csv(args.csv, rec, rows)
    if args.json:
        print(json.dumps({"solute": solute, "units": _units(rec), "rows": rows}, indent=2))
    else:
        _print_table(rec, rows)
    if not any(r["valid"] for r in rows):
        import sys

        print(f"induct brine: error: no valid row in the table (first: {' '.join(rows[0]['error'].split())})",
              file=sys.stderr)
        return 2
    return 0
