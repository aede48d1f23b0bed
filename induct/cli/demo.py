"""The end-to-end demonstration: the whole job on the bundled fictional moon Ilmare.

:func:`run_demo` calls the library directly -- the same functions the commands
call, with the same writers and figures -- for

1. the forward response table of Ilmare (as ``induct respond``);
2. the driving spectrum of its fictional parent planet Tarvos, with and without the
   planet's current sheet (``induct drive``);
3. a flyby prediction with the difference from an alternative interior, and the
   difference made by the current sheet's driving lines (``induct flyby``);
4. feasibility maps: amplitude with the region the synthetic measurements allow,
   and the induced-field difference from the alternative with its detectability
   contour (``induct map``);
5. an amplitude-phase diagram with the measurements (``induct diagram``);
6. the separation of the two interiors versus period and altitude (``induct separate``);
7. the inversion of the synthetic measurements into ranges (``induct invert``);
8. flyby planning: candidate passes ranked by expected information, the best set chosen (``induct plan``);

and writes every figure (PNG and PDF), the data files and a Markdown report
with the numbers into one folder. The report shows, for each step, the command
that gives the same result and the text it prints. Every number comes from
fictional data.
"""

from __future__ import annotations

import json
import time
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import Callable

from induct.constants import MODEL_LIMITS

__all__ = ["run_demo", "DemoStep", "STEP_KEYS", "DEMO_NOISE_NT", "DEMO_DRIVE_NT", "LIMITS"]

#: Magnetometer noise (nT) assumed by the demo (order 0.1-1 nT, common practice).
DEMO_NOISE_NT = 0.5
#: Driving-field amplitude (nT) for the nT maps and separation curves (invented).
DEMO_DRIVE_NT = 200.0
#: Synodic period (h) of the maps (the scenario's first driving period, rounded).
DEMO_MAP_PERIOD_H = 12.12
#: Altitude (km) of the difference map, above the sub-drive point (along the driving field).
DEMO_MAP_ALTITUDE_KM = 100.0

#: The report's statement of what the model leaves out.
LIMITS = f"{MODEL_LIMITS} All bodies and data here are fictional."


@dataclass
class DemoStep:
    """One step of the demo: its title, the equivalent command, its text output and the files it wrote.

    Attributes
    ----------
    title : str
    argv : list
        The ``induct`` command line that gives the same result (shown in the report).
    output : str
        The text the command prints.
    files : list of Path
        The files written, sorted.
    seconds : float
        Run time (s).
    key : str
        Short name of the step (see :data:`STEP_KEYS`).
    """

    title: str
    argv: list
    output: str = ""
    files: list = field(default_factory=list)
    seconds: float = 0.0
    key: str = ""
    action: Callable | None = field(default=None, repr=False, compare=False)


def _bundled(name: str) -> Path:
    return Path(str(resources.files("induct.scenarios") / name))


def _netcdf_available() -> bool:
    """True when xarray and h5netcdf are importable (maps then also write a .nc file)."""
    try:
        from induct.io.map_files import require_netcdf

        require_netcdf()
        return True
    except ImportError:
        return False


# --------------------------------------------------------------------------- the steps
def _respond():
    from induct.cli.commands.respond import format_response
    from induct.io.scenario import load_scenario

    scenario = load_scenario("ilmare")
    result = scenario.model.response(periods_h=scenario.periods_h, degree=1)
    return format_response(scenario, result), []


def _drive(json_path: Path, figure_path: Path):
    from induct.cli.commands.drive import format_drive_table, result_dict
    from induct.field.analysis import planet_drive_analysis
    from induct.io.drive_files import read_planet_file
    from induct.io.files import write_text
    from induct.plot.drive import plot_drive

    analysis = planet_drive_analysis(read_planet_file(_bundled("tarvos.toml")))
    written = [write_text(json_path, json.dumps(result_dict(analysis), indent=2) + "\n")]
    written += plot_drive(analysis, figure_path)
    text = "\n".join([format_drive_table(analysis), f"JSON written to {json_path}", f"Figure written to {figure_path}"])
    return text, written


def _flyby(track_path: Path, field_path: Path, figure_path: Path):
    from induct.cli.commands.flyby import format_flyby_summary
    from induct.flyby.prediction import predict_flyby
    from induct.io.flyby_files import write_flyby_fields
    from induct.io.scenario import load_scenario
    from induct.io.tracks import read_track
    from induct.plot.flyby import plot_flyby

    prediction = predict_flyby(load_scenario("ilmare"), read_track(track_path), compare=load_scenario("ilmare_thick"),
                               noise_nT=DEMO_NOISE_NT)
    summary = prediction.to_dict(output=str(field_path))
    write_flyby_fields(field_path, prediction, compare_label="ilmare_thick")
    written = [field_path] + plot_flyby(prediction, figure_path)
    text = format_flyby_summary(summary, field_path, None, figure_path)
    return text + "\n\n" + _sheet_difference(track_path), written


# ---- current sheet: induced field with and without the sheet's driving lines (issue 15)
def _sheet_difference(track_path: Path) -> str:
    """Induced field along the flyby driven by Tarvos' internal field alone (scenario ilmare) and with its
    current sheet (ilmare_sheet, same interior): the largest difference and the one at closest approach."""
    import numpy as np

    from induct.flyby.induced import induced_field
    from induct.io.scenario import load_scenario
    from induct.io.tracks import read_track

    track = read_track(track_path)
    pos, t = track.positions_km, track.times_s
    internal, sheet = load_scenario("ilmare"), load_scenario("ilmare_sheet")
    b_int = induced_field(internal.model, internal.drive_lines, pos, t)
    b_sheet = induced_field(sheet.model, sheet.drive_lines, pos, t)
    diff = np.linalg.norm(b_sheet - b_int, axis=1)
    ca = int(np.argmin(np.linalg.norm(pos, axis=1)))
    worst = int(np.argmax(diff))
    return "\n".join([
        "Driving lines with Tarvos' current sheet (induct flyby ilmare_sheet --trajectory "
        f"{Path(track_path).name}) versus the internal field alone (ilmare), same interior:",
        f"  largest |B_ind| along the pass: {np.linalg.norm(b_int, axis=1).max():.2f} nT (internal field), "
        f"{np.linalg.norm(b_sheet, axis=1).max():.2f} nT (with the sheet)",
        f"  |difference| of the induced field: {diff[worst]:.2f} nT at most (t = {t[worst] / 3600.0:.3f} h), "
        f"{diff[ca]:.2f} nT at closest approach (t = {t[ca] / 3600.0:.3f} h)",
        "  The sheet model leaves out radial currents, hinging of the sheet, the magnetopause and solar-wind lines.",
    ])


def _truth(names):
    """The synthetic measurements were made from the ilmare scenario: its own values are the truth."""
    from induct.io.scenario import load_scenario
    from induct.model.parameters import parameter_value

    model = load_scenario("ilmare").model
    return {name: parameter_value(model, name) for name in names}


def _map(prefix: Path, n: int, netcdf: bool, truth=False, **kwargs):
    from induct.cli.commands.map import format_map_summary
    from induct.io.map_files import write_map_files
    from induct.io.scenario import load_scenario
    from induct.planning.maps import feasibility_map
    from induct.plot.maps import plot_map

    scenario = load_scenario("ilmare")
    result = feasibility_map(
        scenario.model, f"ice shell.thickness_km=2:60:{n}", f"ocean.conductivity_S_per_m=0.1:30:{n}:log",
        DEMO_MAP_PERIOD_H, **kwargs,
    )
    marks = _truth([result.x.parameter, result.y.parameter]) if truth else None
    written = plot_map(result, prefix, truth=marks)
    written += write_map_files(result, prefix, netcdf=netcdf)
    return format_map_summary(scenario.name, result, written), written


def _map_amplitude(prefix: Path, n: int, netcdf: bool):
    from induct.io.measurements import load_measurements

    return _map(prefix, n, netcdf, truth=True, quantity="amplitude", measurements=load_measurements("ilmare_measured"))


def _map_difference(prefix: Path, n: int, netcdf: bool):
    from induct.io.scenario import load_scenario

    return _map(
        prefix, n, netcdf, quantity="difference_nT", reference=load_scenario("ilmare_thick").model,
        reference_label="ilmare_thick", altitude_km=DEMO_MAP_ALTITUDE_KM, drive_nT=DEMO_DRIVE_NT, noise_nT=DEMO_NOISE_NT,
    )


def _diagram(prefix: Path, samples: int):
    from induct.cli.commands.diagram import format_diagram_summary
    from induct.io.measurements import load_measurements
    from induct.io.scenario import load_scenario
    from induct.io.tables import write_diagram_csv
    from induct.planning.diagrams import amplitude_phase_diagram, measured_periods_h
    from induct.plot.diagrams import plot_diagram

    scenario = load_scenario("ilmare")
    data = load_measurements("ilmare_measured")
    result = amplitude_phase_diagram(scenario.model, None, None, measured_periods_h(data, 1), samples=samples)
    written = plot_diagram(result, prefix, measurements=data)
    written.append(write_diagram_csv(result, prefix.with_name(prefix.name + ".csv")))
    return format_diagram_summary(scenario.name, result, written), written


def _separation(prefix: Path):
    from induct.cli.commands.separate import format_separation_summary, separation_columns
    from induct.io.scenario import load_scenario
    from induct.io.tables import write_separation_csv, write_table_csv
    from induct.planning.separation import separation
    from induct.plot.separation import plot_separation

    base, thick = load_scenario("ilmare"), load_scenario("ilmare_thick")
    result = separation(
        [base.model, thick.model], ["ilmare", "ilmare_thick"], drive_nT=DEMO_DRIVE_NT,
        marked_periods_h=base.periods_h, noise_nT=DEMO_NOISE_NT,
    )
    written = plot_separation(result, prefix)
    written += write_separation_csv(result, prefix)
    cols = separation_columns(result)
    written.append(write_table_csv(prefix.with_name(prefix.name + "_summary.csv"), cols))
    return format_separation_summary(result, cols, written), written


def _invert(prefix: Path, grid: int):
    from induct.cli.commands.invert import format_summary
    from induct.inversion.grid import invert
    from induct.inversion.priors import parse_parameters
    from induct.io.measurements import load_measurements
    from induct.io.scenario import load_scenario
    from induct.plot.corner import save_corner

    scenario = load_scenario("ilmare")
    data = load_measurements("ilmare_measured")
    params = parse_parameters(scenario.raw["invert"], scenario.model, f"{scenario.path or scenario.name}: [invert]")
    result = invert(scenario.model, data, params, grid_points=grid)
    written = save_corner(result, prefix, title=f"{scenario.name} ({data.source})", truth=_truth([q.name for q in params]))
    text = "\n".join([format_summary(result, scenario, data, 10)] + [f"wrote {w}" for w in written])
    return text, written


def _plan(out: Path, argv: list):
    """Planning step: the same candidates, noise and choice as ``argv`` (an ``induct plan`` command line)."""
    from induct.cli.commands.plan import format_plan, plan_payload, write_plan_outputs
    from induct.cli.main import build_parser
    from induct.io.scenario import load_scenario
    from induct.planning.candidates import closest_approach_summary, generate_candidates, parse_value_range
    from induct.planning.design import plan_flybys

    args = build_parser().parse_args([str(a) for a in argv])
    sc = load_scenario("ilmare")
    cands = generate_candidates(sc.model.radius_km, lines=sc.drive_lines, step_s=args.step_s,
                                **{k: parse_value_range(getattr(args, k)) for k in
                                   ("altitude_km", "lat_deg", "lon_deg", "phase_deg", "duration_s")})
    plan = plan_flybys(sc.model, sc.drive_lines, sc.raw["invert"], cands, args.noise_nT, args.choose)
    geometry = closest_approach_summary(cands, sc.model.radius_km, sc.drive_lines)
    written = write_plan_outputs(plan, geometry, plan_payload(plan, geometry, sc), out, title=f"{sc.name}: flyby plan")
    text = format_plan(plan, geometry, sc, args.list, sum(c.size for c in cands))
    return "\n".join([text] + [f"wrote {w}" for w in written]), written


#: Short names of the steps, in the order they run.
STEP_KEYS = ("respond", "drive", "flyby", "map_amplitude", "map_difference", "diagram", "separation", "invert", "plan")


def _steps(out: Path, fast: bool) -> list[DemoStep]:
    n_map = 40 if fast else 120
    n_grid = 24 if fast else 60
    samples = 60 if fast else 150
    netcdf = _netcdf_available()
    no_nc = [] if netcdf else ["--no-netcdf"]
    tarvos = _bundled("tarvos.toml")
    track = _bundled("ilmare_flyby.csv")
    axes = ["--x", f"ice shell.thickness_km=2:60:{n_map}", "--y", f"ocean.conductivity_S_per_m=0.1:30:{n_map}:log",
            "--period-h", DEMO_MAP_PERIOD_H]
    steps = [
        DemoStep("Forward response of Ilmare", ["respond", "ilmare"], key="respond", action=_respond),
        DemoStep(
            "Driving field of Tarvos at Ilmare",
            ["drive", tarvos, "--plot", out / "driving_spectrum.png", "--json", out / "driving_spectrum.json"],
            key="drive", action=lambda: _drive(out / "driving_spectrum.json", out / "driving_spectrum.png"),
        ),
    ]
    if track.is_file():
        steps.append(
            DemoStep(
                "Flyby prediction, baseline versus thick-shell interior, and with the current sheet's lines",
                ["flyby", "ilmare", "--trajectory", track, "--out", out / "flyby_field.csv",
                 "--noise-nt", DEMO_NOISE_NT, "--compare", "ilmare_thick", "--plot", out / "flyby.png"],
                key="flyby", action=lambda: _flyby(track, out / "flyby_field.csv", out / "flyby.png"),
            )
        )
    steps += [
        DemoStep(
            "Feasibility map: amplitude at the synodic period, with the measurements",
            ["map", "ilmare", *axes, "--quantity", "amplitude", "--data", "ilmare_measured",
             "--truth", "ilmare", "--out", out / "map_amplitude", *no_nc],
            key="map_amplitude", action=lambda: _map_amplitude(out / "map_amplitude", n_map, netcdf),
        ),
        DemoStep(
            "Feasibility map: induced-field difference from the thick-shell interior",
            ["map", "ilmare", *axes, "--quantity", "difference_nT", "--reference", "ilmare_thick",
             "--altitude-km", int(DEMO_MAP_ALTITUDE_KM), "--drive-nT", DEMO_DRIVE_NT, "--noise-nT", DEMO_NOISE_NT,
             "--out", out / "map_difference", *no_nc],
            key="map_difference", action=lambda: _map_difference(out / "map_difference", n_map, netcdf),
        ),
        DemoStep(
            "Amplitude-phase diagram with the measurements",
            ["diagram", "ilmare", "--data", "ilmare_measured", "--samples", samples, "--out", out / "diagram"],
            key="diagram", action=lambda: _diagram(out / "diagram", samples),
        ),
        DemoStep(
            "Which periods and altitudes separate the two interiors",
            ["separate", "ilmare", "--other", "ilmare_thick", "--drive-nT", DEMO_DRIVE_NT, "--noise-nT", DEMO_NOISE_NT,
             "--out", out / "separation"],
            key="separation", action=lambda: _separation(out / "separation"),
        ),
        DemoStep(
            "Inversion of the synthetic measurements",
            ["invert", "ilmare", "--data", "ilmare_measured", "--grid", n_grid, "--plot", out / "inversion_corner",
             "--truth", "ilmare", "--no-progress"],
            key="invert", action=lambda: _invert(out / "inversion_corner", n_grid),
        ),
    ]
    plan_argv = ["plan", "ilmare", "--altitude-km", "50,200" if fast else "50:400:4", "--lat-deg=-30,30",
                 "--lon-deg", "90,150,210", "--phase-deg", "0:240:3" if fast else "0:300:6", "--duration-s", 3600,
                 "--step-s", 30.0, "--noise-nT", DEMO_NOISE_NT, "--choose", 4, "--list", 8, "--out", out]
    steps.append(DemoStep("Flyby planning: which passes teach the most about the interior", plan_argv, key="plan",
                          action=lambda: _plan(out, plan_argv)))
    return steps


def run_demo(out_dir="induct-demo", fast: bool = False, progress: bool = True, only=None) -> tuple[list[DemoStep], Path]:
    """Run the whole job on the bundled fictional scenario and write figures and a report.

    Parameters
    ----------
    out_dir : str or Path
        Folder for figures, data files and ``report.md`` (created if missing).
    fast : bool
        Coarser grids (for tests and quick looks).
    progress : bool
        Show a progress bar over the steps (tqdm, on standard error).
    only : iterable of str, optional
        Run only these steps (names from :data:`STEP_KEYS`); the report covers them alone.

    Returns
    -------
    steps : list of DemoStep
    report : Path
        The Markdown report.

    Examples
    --------
    >>> import tempfile
    >>> steps, report = run_demo(tempfile.mkdtemp(), fast=True, progress=False, only=["respond"])
    >>> steps[0].output.splitlines()[0]
    'Ilmare: radius 1540 km, degree n = 1'
    """
    from tqdm.auto import tqdm

    from induct.io.files import write_text

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    steps = _steps(out, fast)
    if only is not None:
        only = list(only)
        unknown = sorted(set(only) - set(STEP_KEYS))
        if unknown:
            raise ValueError(f"unknown demo step(s) {', '.join(unknown)}; choose from {', '.join(STEP_KEYS)}")
        steps = [s for s in steps if s.key in only]
    bar = tqdm(steps, desc="induct demo", unit="step", disable=not progress, leave=False)
    for step in bar:
        bar.set_postfix_str(step.argv[0])
        start = time.perf_counter()
        step.output, files = step.action()
        step.seconds = time.perf_counter() - start
        step.files = sorted(Path(f) for f in files)
    bar.close()
    # bundled files are named by their bundled name, not by where this installation keeps them
    from induct.io.bundled import bundled_files

    text = _report(steps, out, fast)
    for path in sorted(set(bundled_files(".csv").values()) | set(bundled_files(".toml").values()), key=str):
        text = text.replace(str(path), path.stem)
    report = write_text(out / "report.md", text)
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
