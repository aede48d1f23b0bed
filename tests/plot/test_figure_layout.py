"""Figures: legends off the data, labels that do not overlap, units once, sides of the detectability contour named,
true values marked (issue 12). Layout rules are common practice for scientific figures; the checks measure the
rendered extents (matplotlib's own renderer, no backend selected) and assert on geometry, not on pixels."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from induct import load_scenario
from induct.io.measurements import load_measurements
from induct.planning.maps import feasibility_map

X = "ice shell.thickness_km=2:60:14"
Y = "ocean.conductivity_S_per_m=0.1:30:12:log"


def _extent(artist):
    artist.figure.draw_without_rendering()
    return artist.get_window_extent()


@pytest.fixture(scope="module")
def model():
    return load_scenario("ilmare").model


@pytest.fixture(scope="module")
def difference_map(model):
    thick = load_scenario("ilmare_thick").model
    return feasibility_map(model, X, Y, 12.12, "difference_nT", reference=thick, reference_label="ilmare_thick",
                           altitude_km=100.0, drive_nT=200.0, noise_nT=3.0)


def test_map_legend_never_covers_the_map(model):
    from induct.plot.maps import plot_map

    res = feasibility_map(model, X, Y, 12.12, measurements=load_measurements("ilmare_measured"))
    fig = plot_map(res, truth={"ice shell.thickness_km": 30.0, "ocean.conductivity_S_per_m": 1.0})
    ax = fig.axes[0]
    legend = ax.get_legend()
    assert legend is not None
    box, frame = _extent(legend), ax.get_window_extent()
    assert not box.overlaps(frame), (box, frame)
    # ... nor the colorbar or the caption.
    assert not box.overlaps(fig.axes[1].get_window_extent())
    caption = [t for t in fig.texts if "plasma interaction" in t.get_text()]
    assert caption and not box.overlaps(caption[0].get_window_extent())


def test_detectability_contour_names_its_sides(difference_map):
    from matplotlib.contour import ContourSet

    from induct.plot.maps import plot_map

    res = difference_map
    t = res.detection_threshold_nT
    assert np.nanmin(res.values) < t < np.nanmax(res.values)  # the contour crosses this map
    fig = plot_map(res)
    ax = fig.axes[0]
    texts = [x.get_text() for x in ax.get_legend().get_texts()]
    assert any("detectable above" in x for x in texts), texts
    assert any(x.startswith("not detectable: below") and "hatched" in x for x in texts), texts
    # The hatched region is the one below the threshold (values < k x noise: not detectable).
    hatched = [c for c in ax.get_children() if isinstance(c, ContourSet) and c.filled and any(c.hatches or [])]
    assert len(hatched) == 1
    assert hatched[0].levels[-1] == pytest.approx(t) and hatched[0].levels[0] < np.nanmin(res.values)


def test_map_marks_true_values_and_refuses_incomplete_truth(difference_map):
    from induct.plot.maps import plot_map

    truth = {"ice shell.thickness_km": 33.0, "ocean.conductivity_S_per_m": 1.7}
    ax = plot_map(difference_map, truth=truth).axes[0]
    marks = [ln for ln in ax.get_lines() if ln.get_marker() == "D"]
    assert len(marks) == 1 and marks[0].get_xydata().tolist() == [[33.0, 1.7]]
    with pytest.raises(ValueError, match="truth: no value for the y axis 'ocean.conductivity_S_per_m'"):
        plot_map(difference_map, truth={"ice shell.thickness_km": 33.0})


@pytest.fixture(scope="module")
def posterior(model):
    from induct.inversion.grid import invert
    from induct.inversion.priors import parse_parameters

    sc = load_scenario("ilmare")
    params = parse_parameters(sc.raw["invert"], sc.model, "[invert]")
    return invert(sc.model, load_measurements("ilmare_measured"), params, grid_points=10, progress=False)


def test_corner_units_once_legend_off_the_panels_and_truth(posterior):
    from induct.plot.corner import corner_figure

    truth = {"ice shell.thickness_km": 20.0, "ocean.conductivity_S_per_m": 2.8}
    fig = corner_figure(posterior, "test", truth=truth)
    labels = [ax.get_xlabel() for ax in fig.axes] + [ax.get_ylabel() for ax in fig.axes] + [ax.get_title() for ax in fig.axes]
    joined = " | ".join(labels)
    assert "ocean conductivity (S/m)" in joined and "ice shell thickness (km)" in joined
    assert "_S_per_m" not in joined and "_km" not in joined, joined  # the unit once, in parentheses
    legend = fig.legends[0]
    box = _extent(legend)
    visible = [ax for ax in fig.axes if ax.get_visible()]
    hits = [ax.get_title() or ax.get_xlabel() for ax in visible if box.overlaps(ax.get_window_extent())]
    assert not hits, hits
    # True values: a dashed line on each given diagonal panel and a diamond where both coordinates are given.
    diamonds = [ln for ax in visible for ln in ax.get_lines() if ln.get_marker() == "D"]
    assert len(diamonds) == 1 and diamonds[0].get_xydata().tolist() == [[20.0, 2.8]]
    with pytest.raises(ValueError, match="'mantle.conductivity_S_per_m' is not a free parameter"):
        corner_figure(posterior, truth={"mantle.conductivity_S_per_m": 0.01})


def _pairwise_overlaps(boxes):
    return [(i, j) for (i, a), (j, b) in itertools.combinations(enumerate(boxes), 2) if a.overlaps(b)]


def test_diagram_curve_labels_do_not_overlap(model):
    from matplotlib.text import Annotation

    from induct.planning.diagrams import amplitude_phase_diagram
    from induct.plot.diagrams import plot_diagram

    # The long period (84.7 h) crowds the constant-conductivity curves into one corner (issue 12).
    res = amplitude_phase_diagram(model, periods_h=[6.06, 12.12, 84.7], samples=25)
    fig = plot_diagram(res, measurements=load_measurements("ilmare_measured"))
    fig.draw_without_rendering()
    for ax in fig.axes:
        notes = [a for a in ax.texts if isinstance(a, Annotation)]
        boxes = [a.get_window_extent() for a in notes]
        frame = ax.get_window_extent()
        assert not _pairwise_overlaps(boxes), (ax.get_title(), [a.get_text() for a in notes])
        assert all(frame.x0 <= b.x0 and b.x1 <= frame.x1 and frame.y0 <= b.y0 and b.y1 <= frame.y1 for b in boxes)
        if notes:
            assert len(notes) >= 3, (ax.get_title(), [a.get_text() for a in notes])  # most families stay named


def test_separation_period_labels_sit_outside_the_data(model):
    from induct.planning.separation import separation
    from induct.plot.separation import plot_separation

    res = separation([model, model.with_layer("ice shell", thickness_km=40.0)], drive_nT=200.0,
                     marked_periods_h=[6.06, 12.12, 84.7], noise_nT=0.5)
    fig = plot_separation(res)
    ax = fig.axes[0]
    fig.draw_without_rendering()
    top = ax.get_window_extent().y1
    labels = [a for a in ax.texts if a.get_text().endswith(" h")]
    assert len(labels) == 3 and all(a.get_window_extent().y0 >= top - 0.5 for a in labels)
    assert not _pairwise_overlaps([a.get_window_extent() for a in labels])


def test_correlation_label_goes_to_the_emptiest_corner():
    # A posterior ridge along the top-left to bottom-right diagonal leaves the other two corners free; the label
    # takes one of them (common practice: annotations in a corner without data).
    from induct.plot.corner import _free_corner

    edges = np.linspace(0.0, 1.0, 21)
    mass = np.zeros((20, 20))
    for k in range(20):
        mass[k, 19 - k] = 1.0  # x index k, y index 19 - k: from top-left down to bottom-right
    corner = _free_corner(mass, edges, edges, (0.0, 1.0), (0.0, 1.0), False, False)
    assert corner in {(1, 1), (0, 0)}, corner
    mass[:, :] = 0.0
    mass[:8, 17:] = 1.0  # mass in the top-left only
    assert _free_corner(mass, edges, edges, (0.0, 1.0), (0.0, 1.0), False, False) != (0, 1)
