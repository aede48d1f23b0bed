"""The --workers / --scheduler / --task-size options of the sweep commands (issue: Dask execution)."""

import json

import numpy as np
import pytest

from induct.cli.main import main

pytest.importorskip("distributed")


def _ranges(capsys, argv):
    assert main(argv) == 0
    return json.loads(capsys.readouterr().out)


def test_invert_on_local_cluster_matches_in_process(capsys):
    base = ["invert", "ilmare", "--data", "ilmare_measured", "--grid", "16", "--no-progress", "--json"]
    local = _ranges(capsys, base + ["--task-size", "1000"])
    cluster = _ranges(capsys, base + ["--workers", "2", "--task-size", "1000"])
    assert local["n_models"] == cluster["n_models"]
    assert cluster["chi2_min"] == pytest.approx(local["chi2_min"], rel=1e-12)
    for name, rng in local["ranges"].items():
        for key in ("68", "95"):
            np.testing.assert_allclose(cluster["ranges"][name][key], rng[key], rtol=1e-12)
        assert cluster["ranges"][name]["best"] == pytest.approx(rng["best"], rel=1e-12)


@pytest.mark.parametrize("extra, match", [(["--task-size", "0"], "--task-size"), (["--workers", "0"], "--workers")])
def test_bad_cluster_options(capsys, extra, match):
    argv = ["invert", "ilmare", "--data", "ilmare_measured", "--grid", "8", "--no-progress"] + extra
    assert main(argv) == 2
    assert match in capsys.readouterr().err
