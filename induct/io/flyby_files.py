"""Writing a flyby prediction: the fields along the track and synthetic residuals (CSV with ``#`` comments).

Both files use :func:`induct.io.tracks.write_csv` (12 significant digits,
written atomically) in the frame of the trajectory file.
"""

from __future__ import annotations

import datetime as _dt

import numpy as np

from induct import __version__

__all__ = ["flyby_field_columns", "write_flyby_fields", "write_flyby_cdf", "write_synthetic_residuals", "write_flyby_stream"]


def flyby_field_columns(prediction) -> dict:
    """The columns of the field file, in output order, each shape (N,).

    ``t_s``, ``x_km``, ``y_km``, ``z_km`` (track frame), ``altitude_km``, then
    for ``ind`` (induced), ``pri`` (primary), ``tot`` (primary + induced) and,
    with a comparison, ``diff``: ``bx_NAME_nT``, ``by_NAME_nT``, ``bz_NAME_nT``
    and the magnitude ``b_NAME_nT``; last ``utc`` (ISO UTC strings) when the track carries
    UTC times (SPICE tracks, track files with a ``utc`` column).

    Parameters
    ----------
    prediction : induct.flyby.prediction.FlybyPrediction

    Returns
    -------
    dict of str -> ndarray

    Examples
    --------
    >>> from induct import load_scenario
    >>> from induct.flyby.prediction import predict_flyby
    >>> from induct.io.tracks import read_track
    >>> p = predict_flyby(load_scenario("ilmare"), read_track("ilmare_flyby"))
    >>> list(flyby_field_columns(p))[:6]
    ['t_s', 'x_km', 'y_km', 'z_km', 'altitude_km', 'bx_ind_nT']
    """
    from induct.io.tracks import from_flow_frame

    track = prediction.track
    frame = track.frame
    cols = {"t_s": track.times_s}
    pos = from_flow_frame(track.positions_km, frame)
    for c in range(3):
        cols[f"{'xyz'[c]}_km"] = pos[:, c]
    cols["altitude_km"] = prediction.altitude_km
    blocks = [("ind", prediction.induced_nT), ("pri", prediction.primary_nT),
              ("tot", prediction.primary_nT + prediction.induced_nT)]
    if prediction.comparison is not None:
        blocks.append(("diff", prediction.comparison.difference_nT))
    for name, vec in blocks:
        v = from_flow_frame(vec, frame)
        for c in range(3):
            cols[f"b{'xyz'[c]}_{name}_nT"] = v[:, c]
        cols[f"b_{name}_nT"] = np.linalg.norm(v, axis=1)
    if getattr(track, "utc", None) is not None:
        cols["utc"] = np.asarray(track.utc).astype(str)
    return cols


def write_flyby_fields(path, prediction, *, compare_label: str | None = None, extra_comments=()) -> None:
    """Write the fields along the track (:func:`flyby_field_columns`) with a comment header.

    The comments name the scenario, trajectory, frame, units, what each block
    is and the model's limits (:data:`induct.flyby.prediction.FLYBY_LIMITS`).

    Parameters
    ----------
    path : str or Path
    prediction : induct.flyby.prediction.FlybyPrediction
    compare_label : str, optional
        How the second interior is named in the header (default: its scenario name).
    extra_comments : sequence of str
        Further header lines (where the track and its times come from, leap seconds).

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> from induct import load_scenario
    >>> from induct.flyby.prediction import predict_flyby
    >>> from induct.io.tracks import read_track
    >>> p = predict_flyby(load_scenario("ilmare"), read_track("ilmare_flyby"))
    >>> out = Path(tempfile.mkdtemp()) / "f.csv"
    >>> write_flyby_fields(out, p)
    >>> len(out.read_text().splitlines())  # 4 comment lines, the header, 3601 rows
    3606
    """
    from induct.io.tracks import write_csv

    track = prediction.track
    write_csv(path, flyby_field_columns(prediction),
              _field_comments(prediction, compare_label, f"{track.size} rows", extra_comments))


def _field_comments(prediction, compare_label, rows_text, extra_comments=()):
    from induct.flyby.prediction import FLYBY_LIMITS

    track = prediction.track
    comparison = prediction.comparison
    if comparison is not None and compare_label is None:
        compare_label = comparison.other
    when = _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    return [
        f"induct {__version__} flyby, {when}: scenario {prediction.scenario_source}, trajectory {track.source}",
        f"frame {track.frame}; {rows_text}; t_s in s from the epoch of the driving lines; fields in nT",
        "ind = induced field, pri = primary (driving) field"
        + (" incl. its non-uniform part from the planet's gradient" if prediction.degree2 is not None else "") + ", tot = pri + ind"
        + (f", diff = induced field minus that of {compare_label}" if comparison is not None else ""),
        *[" ".join(str(c).split()) for c in extra_comments],
        FLYBY_LIMITS,
    ]


def write_flyby_cdf(path, prediction, epoch_utc: str, *, text=(), constants=None) -> None:
    """Write the fields along the track as a CDF file with ISTP attributes (flow frame).

    Variables ``Epoch`` (CDF_TIME_TT2000), ``Position`` (km), ``B_induced``, ``B_primary``,
    ``B_total`` and, with a comparison, ``B_difference`` (nT), written by
    :func:`induct.io.cdf_magnetometer.write_prediction_cdf` (``TEXT`` holds the model's limits,
    :data:`induct.constants.MODEL_LIMITS`, and ``text``).

    Parameters
    ----------
    path : str or Path
    prediction : induct.flyby.prediction.FlybyPrediction
    epoch_utc : str
        UTC of ``t = 0`` of the track's ``times_s`` (the scenario's ``[drive] epoch_utc``).
    text : sequence of str
        Extra ``TEXT`` lines (sources of the track and times).
    constants : TimeConstants or path of an LSK, optional
        Leap-second table.

    Examples
    --------
    >>> import tempfile, cdflib
    >>> from pathlib import Path
    >>> from induct import load_scenario
    >>> from induct.flyby.prediction import predict_flyby
    >>> from induct.io.tracks import read_track
    >>> p = predict_flyby(load_scenario("ilmare"), read_track("ilmare_flyby"))
    >>> out = Path(tempfile.mkdtemp()) / "f.cdf"
    >>> write_flyby_cdf(out, p, "2031-03-10T00:00:00")
    >>> cdflib.CDF(str(out)).varget("B_total").shape
    (3601, 3)
    """
    from induct.io.cdf_magnetometer import write_prediction_cdf

    fields = {"B_induced": prediction.induced_nT, "B_primary": prediction.primary_nT,
              "B_total": prediction.primary_nT + prediction.induced_nT}
    if prediction.comparison is not None:
        fields["B_difference"] = prediction.comparison.difference_nT
    lines = [f"induct {__version__} flyby: scenario {prediction.scenario_source}, trajectory {prediction.track.source}"]
    lines += [" ".join(str(c).split()) for c in text]
    write_prediction_cdf(path, prediction.track.times_s, prediction.track.positions_km, fields, epoch_utc=epoch_utc,
                         text=lines, constants=constants)


def write_synthetic_residuals(path, prediction, residuals_nT, noise_nT: float, seed: int) -> None:
    """Write synthetic residuals ``t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT`` (input for ``induct fit``).

    Parameters
    ----------
    path : str or Path
    prediction : induct.flyby.prediction.FlybyPrediction
    residuals_nT : array_like, shape (N, 3)
        From :func:`induct.flyby.prediction.synthetic_residuals` (frame of the track).
    noise_nT : float
        The noise added (nT), recorded in the header.
    seed : int
        The random seed, recorded in the header.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> from induct import load_scenario
    >>> from induct.flyby.prediction import predict_flyby, synthetic_residuals
    >>> from induct.io.tracks import read_track
    >>> p = predict_flyby(load_scenario("ilmare"), read_track("ilmare_flyby"))
    >>> out = Path(tempfile.mkdtemp()) / "r.csv"
    >>> write_synthetic_residuals(out, p, synthetic_residuals(p, 0.5, 1), 0.5, 1)
    >>> out.read_text().splitlines()[1]
    't_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT'
    """
    from induct.io.tracks import from_flow_frame, write_csv

    track = prediction.track
    pos = from_flow_frame(track.positions_km, track.frame)
    res = {"t_s": track.times_s}
    for c in range(3):
        res[f"{'xyz'[c]}_km"] = pos[:, c]
    noisy = np.asarray(residuals_nT, dtype=float)
    for c in range(3):
        res[f"b{'xyz'[c]}_nT"] = noisy[:, c]
    write_csv(path, res, _residual_comments(prediction, noise_nT, seed))


def _residual_comments(prediction, noise_nT, seed):
    return [
        f"induct {__version__} flyby: SYNTHETIC residuals (induced field of {prediction.scenario} + Gaussian noise "
        f"{noise_nT:g} nT, seed {seed}), frame {prediction.track.frame}",
    ]


def write_flyby_stream(path, predictions, *, compare_label: str | None = None, residuals=None):
    """Write the fields of a track predicted piece by piece, without holding the whole track.

    Parameters
    ----------
    path : str or Path
        The field file (same columns as :func:`write_flyby_fields`; the row count is the last comment).
    predictions : iterable of FlybyPrediction
        One per consecutive piece of the track (e.g. from :func:`induct.io.tracks.iter_track_chunks`).
    compare_label : str, optional
    residuals : tuple (path, noise_nT, seed), optional
        Also write synthetic residuals; the noise stream of ``numpy.random.default_rng(seed)`` continues from
        piece to piece, so the values equal those of :func:`induct.flyby.prediction.synthetic_residuals`.

    Returns
    -------
    FlybySummary
        The summary of the whole track.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> from induct import load_scenario
    >>> from induct.flyby.prediction import predict_flyby
    >>> from induct.io.tracks import iter_track_chunks
    >>> sc = load_scenario("ilmare")
    >>> out = Path(tempfile.mkdtemp()) / "f.csv"
    >>> s = write_flyby_stream(out, (predict_flyby(sc, t) for t in iter_track_chunks("ilmare_flyby", chunk_rows=1000)))
    >>> s.points, len(out.read_text().splitlines())  # 4 comments, the header, 3601 rows, the count
    (3601, 3607)
    """
    import contextlib

    from induct.flyby.prediction import FlybySummary
    from induct.io.tracks import csv_appender, from_flow_frame

    summary = FlybySummary()
    with contextlib.ExitStack() as stack:
        fields = rng = res_append = None
        for piece in predictions:
            cols = flyby_field_columns(piece)
            if fields is None:
                fields = stack.enter_context(csv_appender(path, list(cols), _field_comments(piece, compare_label,
                                                                                            "rows streamed")))
                if residuals is not None:
                    res_path, noise_nT, seed = residuals
                    if not (isinstance(noise_nT, (int, float)) and 0 < noise_nT < float("inf")):
                        raise ValueError(f"noise_nT must be > 0 nT and finite for synthetic residuals, got {noise_nT}")
                    rng = np.random.default_rng(seed)
                    res_append = stack.enter_context(csv_appender(
                        res_path, ["t_s", "x_km", "y_km", "z_km", "bx_nT", "by_nT", "bz_nT"],
                        _residual_comments(piece, noise_nT, seed)))
            fields(cols)
            if res_append is not None:
                induced = piece.induced_nT
                noisy = from_flow_frame(induced, piece.track.frame) + rng.normal(0.0, noise_nT, induced.shape)
                pos = from_flow_frame(piece.track.positions_km, piece.track.frame)
                res_append({"t_s": piece.track.times_s, "x_km": pos[:, 0], "y_km": pos[:, 1], "z_km": pos[:, 2],
                            "bx_nT": noisy[:, 0], "by_nT": noisy[:, 1], "bz_nT": noisy[:, 2]})
            summary.add(piece)
        if fields is None:
            raise ValueError("no track rows to write")
        fields.comment(f"{summary.points} rows")
    return summary
