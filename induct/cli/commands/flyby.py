"""``induct flyby``: the induced field of a scenario's interior along a flyby trajectory.

Examples::

    induct flyby ilmare --trajectory ilmare_flyby --out field.csv --plot field.png
    induct flyby ilmare --trajectory track.csv --out field.csv --compare other.toml --noise-nT 0.5
    induct flyby ilmare --trajectory ilmare_flyby --out field.csv --planet scenarios/tarvos.toml
    induct flyby ilmare --trajectory ilmare_flyby --out field.csv --noise-nT 0.5 --residuals synthetic.csv

The driving field is the scenario's ``[[drive.lines]]`` (uniform at the moon,
flow frame); the induced field is the degree-1 response of the scenario's
interior, plus degree 2 from the gradient of the planet's field with --planet.
"""

from __future__ import annotations

import argparse
import datetime as _dt
import json
import sys

import numpy as np

from induct import __version__
from induct.constants import SECONDS_PER_HOUR

LIMITS = (
    "Spherically symmetric quasi-static induction; no plasma-interaction fields, asymmetric shells or motional "
    "induction; primary = time-varying part of the driving lines (steady field not included)."
)


def register(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "flyby",
        help="induced (and primary, total) field along a flyby trajectory; compare two interiors",
        description=__doc__.split("\n\n")[0] + " " + LIMITS,
    )
    p.add_argument("scenario", help="scenario TOML file with [[drive.lines]], or a bundled scenario (e.g. ilmare)")
    p.add_argument("--trajectory", required=True, metavar="TRACK.csv",
                   help="trajectory t_s,x_km,y_km,z_km (moon-centred), or a bundled track (e.g. ilmare_flyby)")
    p.add_argument("--out", required=True, metavar="FIELD.csv", help="output CSV of the fields along the track")
    p.add_argument("--frame", metavar="FRAME",
                   help="frame of the track: flow (default) or body (see induct.io.tracks)")
    p.add_argument("--noise-nt", "--noise-nT", dest="noise_nt", type=float, metavar="N",
                   help="magnetometer noise (nT, 1 sigma per component) for the SNR of --compare and for --residuals")
    p.add_argument("--compare", metavar="OTHER.toml",
                   help="second interior (scenario file or bundled name); its induced field under the same driving "
                   "lines is subtracted")
    p.add_argument("--planet", metavar="PLANET.toml",
                   help="add the degree-2 field from the gradient of this planet's internal field across the moon")
    p.add_argument("--moon", help="with --planet: moon name (when the planet file has several moons)")
    p.add_argument("--residuals", metavar="FILE.csv",
                   help="also write synthetic residuals t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT = induced field + "
                   "Gaussian noise of --noise-nT (input for induct fit)")
    p.add_argument("--seed", type=int, default=0, help="random seed of --residuals (default 0)")
    p.add_argument("--plot", metavar="FIG.png", help="figure of the field components and magnitude vs time, and altitude")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")
    return p


def _planet_lines(args, lines, notes):
    from induct.field.drive import planet_drive_spectrum
    from induct.io.drive_files import read_planet_file
    from induct.flyby.induced import planet_gradient_lines

    system = read_planet_file(args.planet)
    gradient = planet_gradient_lines(system, args.moon)
    # The scenario's lines must come from the same planet and epoch, else degree 1 and 2 disagree.
    spec = planet_drive_spectrum(system, args.moon)
    scale = max(float(np.max(np.abs(ln.b_complex_nT))) for ln in lines)
    for ln in lines:
        match = [s for s in spec.lines if abs(s.period_s / ln.period_s - 1.0) < 1e-9]
        if not match or float(np.max(np.abs(match[0].b_complex_nT - ln.b_complex_nT))) > 1e-3 * scale:
            notes.append(
                f"the scenario's {ln.period_h:.6g} h line does not match {args.planet} "
                "(different planet, moon or epoch?): degree 1 and degree 2 may be inconsistent"
            )
            break
    return gradient


def _compute(args):
    from induct.flyby.induced import induced_field, primary_field
    from induct.io.scenario import load_scenario
    from induct.io.tracks import check_outside, read_track

    scenario = load_scenario(args.scenario)
    lines = scenario.drive_lines
    if not lines:
        raise ValueError(
            f"{scenario.path or scenario.name}: no [[drive.lines]]; write them with "
            "`induct drive PLANET.toml --write-scenario SCENARIO.toml`"
        )
    track = read_track(args.trajectory, frame=args.frame)
    model = scenario.model

    def outside(m, name):
        check_outside(track, m.radius_km, f"{name} (radius {m.radius_km:g} km)")
        if m.ionosphere is not None:
            check_outside(track, m.radius_km + m.ionosphere.altitude_km,
                          f"the ionosphere sheet of {name} (altitude {m.ionosphere.altitude_km:g} km)")

    outside(model, scenario.name)
    notes = []
    degree2 = _planet_lines(args, lines, notes) if args.planet else None
    pos, t = track.positions_km, track.times_s
    induced = induced_field(model, lines, pos, t, degree2=degree2)
    primary = primary_field(lines, pos, t, degree2=degree2)
    other = diff = None
    if args.compare:
        other = load_scenario(args.compare)
        outside(other.model, other.name)
        diff = induced - induced_field(other.model, lines, pos, t, degree2=degree2)
    return scenario, lines, track, induced, primary, other, diff, degree2, notes


def _summary(args, scenario, lines, track, induced, other, diff, degree2, notes) -> dict:
    r = np.linalg.norm(track.positions_km, axis=1)
    alt = r - scenario.model.radius_km
    ica = int(np.argmin(alt))
    mag = np.linalg.norm(induced, axis=1)
    ipk = int(np.argmax(mag))
    resp = scenario.model.response(periods_s=[ln.period_s for ln in lines])
    out = {
        "induct_version": __version__,
        "scenario": scenario.name,
        "trajectory": track.source,
        "frame": track.frame,
        "points": track.size,
        "time_span_s": [float(track.times_s[0]), float(track.times_s[-1])],
        "closest_approach": {"t_s": float(track.times_s[ica]), "altitude_km": float(alt[ica])},
        "lines": [
            {"label": ln.label, "period_h": ln.period_h, "response_real": float(rr.real), "response_imag": float(rr.imag),
             "amplitude": float(abs(rr)), "phase_lag_deg": float(np.degrees(np.angle(rr)))}
            for ln, rr in zip(lines, resp.response)
        ],
        "degree2": (f"gradient of {args.planet} across the moon, {len(degree2)} lines" if degree2 else "not included"),
        "peak_induced_nT": float(mag[ipk]),
        "peak_induced_t_s": float(track.times_s[ipk]),
        "output": args.out,
        "limits": LIMITS,
        "notes": notes,
    }
    if diff is not None:
        dmag = np.linalg.norm(diff, axis=1)
        k = int(np.argmax(dmag))
        cmp = {"other": other.name, "peak_difference_nT": float(dmag[k]), "peak_difference_t_s": float(track.times_s[k]),
               "rms_difference_nT": float(np.sqrt(np.mean(dmag**2)))}
        if args.noise_nt:
            cmp["noise_nT"] = args.noise_nt
            cmp["peak_snr"] = float(dmag[k] / args.noise_nt)
            cmp["track_snr"] = float(np.sqrt(np.sum(diff**2)) / args.noise_nt)
            cmp["snr_definitions"] = (
                "peak_snr = max |dB| / noise; track_snr = sqrt(sum over samples and components of dB^2) / noise "
                "(the square root of the chi-square distance between the two interiors)"
            )
        out["compare"] = cmp
    return out


def _write_outputs(args, scenario, track, induced, primary, diff):
    from induct.io.tracks import from_flow_frame, write_csv

    frame = track.frame
    cols = {"t_s": track.times_s}
    pos = from_flow_frame(track.positions_km, frame)
    for c in range(3):
        cols[f"{'xyz'[c]}_km"] = pos[:, c]
    cols["altitude_km"] = np.linalg.norm(track.positions_km, axis=1) - scenario.model.radius_km
    blocks = [("ind", induced), ("pri", primary), ("tot", primary + induced)]
    if diff is not None:
        blocks.append(("diff", diff))
    for name, vec in blocks:
        v = from_flow_frame(vec, frame)
        for c in range(3):
            cols[f"b{'xyz'[c]}_{name}_nT"] = v[:, c]
        cols[f"b_{name}_nT"] = np.linalg.norm(v, axis=1)
    when = _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    comments = [
        f"induct {__version__} flyby, {when}: scenario {scenario.path or scenario.name}, trajectory {track.source}",
        f"frame {frame}; {track.size} rows; t_s in s from the epoch of the driving lines; fields in nT",
        "ind = induced field, pri = primary (driving) field"
        + (" incl. its non-uniform part from the planet's gradient" if args.planet else "") + ", tot = pri + ind"
        + (f", diff = induced field minus that of {args.compare}" if diff is not None else ""),
        LIMITS,
    ]
    write_csv(args.out, cols, comments)
    if args.residuals:
        if not args.noise_nt:
            raise ValueError("--residuals needs --noise-nT N (> 0), the noise added to the induced field")
        rng = np.random.default_rng(args.seed)
        noisy = from_flow_frame(induced, frame) + rng.normal(0.0, args.noise_nt, induced.shape)
        res = {k: cols[k] for k in ("t_s", "x_km", "y_km", "z_km")}
        for c in range(3):
            res[f"b{'xyz'[c]}_nT"] = noisy[:, c]
        write_csv(args.residuals, res, [
            f"induct {__version__} flyby: SYNTHETIC residuals (induced field of {scenario.name} + Gaussian noise "
            f"{args.noise_nt:g} nT, seed {args.seed}), frame {frame}",
        ])


def _plot(path, args, scenario, track, induced, diff, summary):
    from pathlib import Path

    from induct.plot.style import COLORS, figure, save_figure, wrap

    t_ca = summary["closest_approach"]["t_s"]
    x = (track.times_s - t_ca) / 60.0
    panels = 3 if diff is not None else 2
    caption = wrap(LIMITS + (" Degree 2 from the planet's field gradient included." if summary["degree2"] != "not included"
                             else " Degree-1 (uniform driving) response only."), 150)
    fig, axes = figure(panels, 1, size=(8.0, 2.6 * panels + 1.0), caption=caption, sharex=True)
    frame = track.frame
    from induct.io.tracks import from_flow_frame

    def draw(ax, vec, what):
        v = from_flow_frame(vec, frame)
        for c in range(3):
            ax.plot(x, v[:, c], color=COLORS[c], lw=1.0, label=f"B{'xyz'[c]}")
        ax.plot(x, np.linalg.norm(v, axis=1), color="black", lw=1.3, label="|B|")
        ax.set_ylabel(f"{what} (nT)")
        ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))

    draw(axes[0], induced, "induced field")
    axes[0].set_title(f"{scenario.name}: induced field along {Path(track.source).name} ({frame} frame)")
    if diff is not None:
        draw(axes[1], diff, "difference")
        title = f"{scenario.name} minus {summary['compare']['other']}"
        if args.noise_nt:
            axes[1].axhspan(-args.noise_nt, args.noise_nt, color="0.85", zorder=0, label="noise 1 sigma")
            title += f" (grey: +-{args.noise_nt:g} nT noise; peak SNR {summary['compare']['peak_snr']:.3g})"
        axes[1].set_title(title, fontsize=9)
    ax_alt = axes[-1]
    ax_alt.plot(x, np.linalg.norm(track.positions_km, axis=1) - scenario.model.radius_km, color=COLORS[3], lw=1.3)
    ax_alt.set_ylabel("altitude (km)")
    ax_alt.set_xlabel(f"time from closest approach (min); closest approach at t = {t_ca / SECONDS_PER_HOUR:.6g} h")
    fig.tight_layout(rect=(0, 0.04, 1, 1))
    save_figure(fig, path)  # PNG and vector PDF


def run(args) -> int:
    if args.noise_nt is not None and not (np.isfinite(args.noise_nt) and args.noise_nt > 0):
        raise ValueError(f"--noise-nT must be > 0 nT, got {args.noise_nt!r}")
    if args.moon and not args.planet:
        raise ValueError("--moon needs --planet")
    scenario, lines, track, induced, primary, other, diff, degree2, notes = _compute(args)
    summary = _summary(args, scenario, lines, track, induced, other, diff, degree2, notes)
    _write_outputs(args, scenario, track, induced, primary, diff)
    if args.plot:
        _plot(args.plot, args, scenario, track, induced, diff, summary)
        summary["figure"] = args.plot
    if args.json:
        json.dump(summary, sys.stdout, indent=2)
        print()
        return 0
    ca = summary["closest_approach"]
    print(f"{scenario.name}: induced field along {track.source} ({track.size} points, {track.frame} frame)")
    print(f"closest approach {ca['altitude_km']:.4g} km altitude at t = {ca['t_s']:.6g} s")
    print("driving lines and responses R_1 of the interior:")
    for ln in summary["lines"]:
        print(f"  {ln['label'] or '-':<14} {ln['period_h']:>10.5f} h   A = {ln['amplitude']:.4f}, "
              f"phase lag {ln['phase_lag_deg']:.2f} deg")
    print(f"degree 2: {summary['degree2']}")
    print(f"peak induced field {summary['peak_induced_nT']:.4g} nT at t = {summary['peak_induced_t_s']:.6g} s")
    if "compare" in summary:
        c = summary["compare"]
        text = f"difference from {c['other']}: peak {c['peak_difference_nT']:.4g} nT at t = {c['peak_difference_t_s']:.6g} s"
        if "peak_snr" in c:
            text += f"; peak SNR {c['peak_snr']:.3g}, track SNR {c['track_snr']:.3g} (noise {c['noise_nT']:g} nT)"
        print(text)
    for note in notes:
        print(f"note: {note}")
    print(f"fields written to {args.out}" + (f", synthetic residuals to {args.residuals}" if args.residuals else ""))
    if args.residuals and track.frame != "flow":
        print(f"note: the residuals are in the {track.frame} frame: give --frame {track.frame} to induct fit")
    if args.plot:
        print(f"figure written to {args.plot}")
    print(LIMITS)
    return 0
