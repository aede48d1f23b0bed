"""The end-to-end demonstration: the whole job on the bundled fictional moon Ilmare.

:func:`run_demo` runs, through the same commands a user types,

1. the forward response table of Ilmare (``induct respond``);
2. the driving spectrum of its fictional parent planet Tarvos (``induct drive``);
3. a flyby prediction with the difference from an alternative interior (``induct flyby``);
4. feasibility maps: amplitude with the region the synthetic measurements allow,
   and the induced-field difference from the alternative with its detectability
   contour (``induct map``);
5. an amplitude-phase diagram with the measurements (``induct diagram``);
6. the separation of the two interiors versus period and altitude (``induct separate``);
7. the inversion of the synthetic measurements into ranges (``induct invert``);

and writes every figure (PNG and PDF), the data files and a Markdown report
with the numbers into one folder. Every number comes from fictional data.
"""

from __future__ import annotations

import contextlib
import io
import json
import time
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path

__all__ = ["run_demo", "DemoStep", "DEMO_NOISE_NT", "DEMO_DRIVE_NT"]

#: Magnetometer noise (nT) assumed by the demo (order 0.1-1 nT, common practice).
DEMO_NOISE_NT = 0.5
#: Driving-field amplitude (nT) for the nT maps and separation curves (invented).
DEMO_DRIVE_NT = 200.0

LIMITS = (
    "What the model leaves out: the plasma interaction (fields comparable to the induced field near the moon), "
    "asymmetric or tidally deformed shells, and motional induction from ocean flow. All bodies and data here are "
    "fictional."
)


@dataclass
class DemoStep:
    """One step of the demo: its title, the command it ran, its text output and the files it wrote."""

    title: str
    argv: list
    output: str = ""
    files: list = field(default_factory=list)
    seconds: float = 0.0


def _bundled(name: str) -> str:
    return str(resources.files("induct.scenarios") / name)


def _run(argv: list) -> str:
    from induct.cli.main import main

    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main([str(a) for a in argv])
    if code != 0:
        raise RuntimeError(f"demo step 'induct {' '.join(map(str, argv))}' failed (exit {code}):\n{err.getvalue()}")
    return out.getvalue()


def _netcdf_options() -> list:
    """``[]`` when xarray and h5netcdf are importable, else ``["--no-netcdf"]`` (maps then skip the .nc file)."""
    try:
        from induct.io.map_files import require_netcdf

        require_netcdf()
        return []
    except ImportError:
        return ["--no-netcdf"]


def _steps(out: Path, fast: bool) -> list[DemoStep]:
    n_map = 40 if fast else 120
    netcdf = _netcdf_options()
    n_grid = 24 if fast else 60
    steps = [
        DemoStep("Forward response of Ilmare", ["respond", "ilmare"]),
        DemoStep(
            "Driving field of Tarvos at Ilmare",
            ["drive", _bundled("tarvos.toml"), "--plot", out / "driving_spectrum.png", "--json", out / "driving_spectrum.json"],
        ),
    ]
    track = resources.files("induct.scenarios") / "ilmare_flyby.csv"
    if track.is_file():
        steps.append(
            DemoStep(
                "Flyby prediction, baseline versus thick-shell interior",
                ["flyby", "ilmare", "--trajectory", str(track), "--out", out / "flyby_field.csv",
                 "--noise-nt", DEMO_NOISE_NT, "--compare", "ilmare_thick", "--plot", out / "flyby.png"],
            )
        )
    steps += [
        DemoStep(
            "Feasibility map: amplitude at the synodic period, with the measurements",
            ["map", "ilmare", "--x", f"ice shell.thickness_km=2:60:{n_map}", "--y",
             f"ocean.conductivity_S_per_m=0.1:30:{n_map}:log", "--period-h", 12.12, "--quantity", "amplitude",
             "--data", "ilmare_measured", "--out", out / "map_amplitude", *netcdf],
        ),
        DemoStep(
            "Feasibility map: induced-field difference from the thick-shell interior",
            ["map", "ilmare", "--x", f"ice shell.thickness_km=2:60:{n_map}", "--y",
             f"ocean.conductivity_S_per_m=0.1:30:{n_map}:log", "--period-h", 12.12, "--quantity", "difference_nT",
             "--reference", "ilmare_thick", "--altitude-km", 100, "--drive-nT", DEMO_DRIVE_NT,
             "--noise-nT", DEMO_NOISE_NT, "--out", out / "map_difference", *netcdf],
        ),
        DemoStep(
            "Amplitude-phase diagram with the measurements",
            ["diagram", "ilmare", "--data", "ilmare_measured", "--samples", 60 if fast else 150, "--out", out / "diagram"],
        ),
        DemoStep(
            "Which periods and altitudes separate the two interiors",
            ["separate", "ilmare", "--other", "ilmare_thick", "--drive-nT", DEMO_DRIVE_NT, "--noise-nT", DEMO_NOISE_NT,
             "--out", out / "separation"],
        ),
        DemoStep(
            "Inversion of the synthetic measurements",
            ["invert", "ilmare", "--data", "ilmare_measured", "--grid", n_grid, "--plot", out / "inversion_corner",
             "--no-progress"],
        ),
    ]
    return steps


def run_demo(out_dir="induct-demo", fast: bool = False, progress: bool = True) -> tuple[list[DemoStep], Path]:
    """Run the whole job on the bundled fictional scenario and write figures and a report.

    Parameters
    ----------
    out_dir : str or Path
        Folder for figures, data files and ``report.md`` (created if missing).
    fast : bool
        Coarser grids (for tests and quick looks).
    progress : bool
        Show a progress bar over the steps (tqdm, on standard error).

    Returns
    -------
    steps : list of DemoStep
    report : Path
        The Markdown report.
    """
    from tqdm.auto import tqdm

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    steps = _steps(out, fast)
    before = {p: p.stat().st_mtime for p in out.iterdir()}
    bar = tqdm(steps, desc="induct demo", unit="step", disable=not progress, leave=False)
    for step in bar:
        bar.set_postfix_str(step.argv[0])
        start = time.perf_counter()
        step.output = _run(step.argv)
        step.seconds = time.perf_counter() - start
        step.files = sorted(
            p for p in out.iterdir() if p.is_file() and (p not in before or p.stat().st_mtime > before[p]) and not any(p in s.files for s in steps)
        )
    bar.close()
    report = out / "report.md"
    report.write_text(_report(steps, out, fast))
    return steps, report


def _shown(arg, out: Path) -> str:
    """A command-line argument as a reader would type it: output files by name, bundled files as scenarios/..."""
    text = str(arg)
    text = text.replace(str(out) + "/", "")
    text = text.replace(str(resources.files("induct.scenarios")) + "/", "scenarios/")
    return repr(text) if " " in text else text


def _report(steps: list[DemoStep], out: Path, fast: bool) -> str:
    lines = [
        "# induct demo: the fictional moon Ilmare",
        "",
        "Generated by `induct demo" + (" --fast" if fast else "") + f"`. {LIMITS}",
        "",
    ]
    for i, step in enumerate(steps, 1):
        cmd = "induct " + " ".join(_shown(a, out) for a in step.argv)
        lines += [f"## {i}. {step.title}", "", f"`{cmd}` ({step.seconds:.1f} s)", ""]
        text = step.output.strip()
        if text.startswith("{"):
            try:
                text = json.dumps(json.loads(text), indent=1)[:4000]
            except ValueError:
                pass
        if text:
            lines += ["```", text, "```", ""]
        for f in step.files:
            if f.suffix == ".png":
                lines += [f"![{f.stem}]({f.name})", ""]
        others = [f.name for f in step.files if f.suffix != ".png"]
        if others:
            lines += ["Files: " + ", ".join(f"`{name}`" for name in others), ""]
    return "\n".join(lines)
