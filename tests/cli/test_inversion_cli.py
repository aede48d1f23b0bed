"""``induct invert`` and ``induct bench --inversion`` end to end, in-process."""

import json
import math
from pathlib import Path

import pytest

from induct.cli.main import main

ROOT = Path(__file__).resolve().parents[2]

SCENARIO = """
[body]
name = "Test body"
radius_km = 1540.0
[[layers]]
name = "ice shell"
thickness_km = 20.0
conductivity_S_per_m = 1e-6
[[layers]]
name = "ocean"
thickness_km = 95.0
conductivity_S_per_m = 2.8
[[layers]]
name = "mantle"
thickness_km = 825.0
conductivity_S_per_m = 0.01
[[layers]]
name = "core"
conductivity_S_per_m = 1e5
[drive]
periods_h = [12.12, 84.7]
[invert]
"ice shell.thickness_km" = { range = [1, 60] }
"ocean.thickness_km" = { range = [5, 250] }
"ocean.conductivity_S_per_m" = { range = [0.05, 30], scale = "log" }
"""

DATA = """
[[response]]
period_h = 12.12
amplitude = 0.909
amplitude_sigma = 0.01
phase_lag_deg = 3.4
phase_lag_sigma_deg = 1.0
[[response]]
period_h = 84.7
real = 0.8226
imag = 0.2510
cov = [[1e-4, 0.0], [0.0, 1e-4]]
"""


@pytest.fixture
def files(tmp_path):
    s = tmp_path / "body.toml"
    s.write_text(SCENARIO)
    d = tmp_path / "data.toml"
    d.write_text(DATA)
    return s, d, tmp_path


def test_summary_table_with_units_and_limits(files, capsys):
    s, d, _ = files
    assert main(["invert", str(s), "--data", str(d), "--grid", "12", "--no-progress"]) == 0
    out = capsys.readouterr().out
    for text in ("ice shell.thickness_km", "km", "S/m", "68 % range", "95 % range", "equal-tailed", "chi2",
                 "plasma interaction", "asymmetric", "motional induction", "within 2 sigma",
                 "95.45 % quantile of chi2 with 3 degrees of freedom", "not listed"):
        assert text in out, text


def test_json_keys(files, capsys):
    s, d, _ = files
    assert main(["invert", str(s), "--data", str(d), "--grid", "10", "--no-refine", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert {"ranges", "chi2_min", "n_models"} <= set(out)
    assert set(out["ranges"]) == {"ice shell.thickness_km", "ocean.thickness_km", "ocean.conductivity_S_per_m"}
    for r in out["ranges"].values():
        assert {"best", "68", "95"} <= set(r)
        assert r["95"][0] <= r["68"][0] <= r["68"][1] <= r["95"][1]
    assert out["n_models"] == 1000 and out["chi2_min"] >= 0
    assert "equal-tailed" in out["interval"] and "plasma interaction" in out["not_modelled"]


def test_plot_writes_png_and_pdf(files, capsys):
    s, d, tmp = files
    target = tmp / "corner"
    assert main(["invert", str(s), "--data", str(d), "--grid", "8", "--plot", str(target), "--no-progress"]) == 0
    for suffix in (".png", ".pdf"):
        path = target.with_suffix(suffix)
        assert path.is_file() and path.stat().st_size > 1000, path
    assert "wrote" in capsys.readouterr().out


def test_params_file_overrides_the_scenario(files, capsys):
    s, d, tmp = files
    p = tmp / "params.toml"
    p.write_text('[invert]\n"ocean.conductivity_S_per_m" = { range = [0.1, 10], scale = "log" }\n')
    assert main(["invert", str(s), "--data", str(d), "--params", str(p), "--grid", "20", "--no-refine", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert list(out["ranges"]) == ["ocean.conductivity_S_per_m"] and out["n_models"] == 20


def test_bundled_scenario_and_data(capsys):
    assert main(["invert", "ilmare", "--data", "ilmare_measured", "--grid", "10", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["body"] == "Ilmare" and out["data"] == "ilmare_measured.toml"


def test_unconverged_mcmc_exits_4_without_ranges(files, capsys):
    # An ensemble run stopped by its budget: says which parameter failed which check, prints no ranges, exit 4.
    s, d, _ = files
    code = main(["invert", str(s), "--data", str(d), "--sampler", "mcmc", "--steps", "100", "--walkers", "8",
                 "--max-evaluations", "800", "--grid", "10", "--quiet"])
    assert code == 4
    captured = capsys.readouterr()
    out = captured.out
    assert "NOT CONVERGED" in out and "ocean.thickness_km:" in out
    assert ("R-hat" in out or "ESS" in out or "autocorrelation" in out)
    assert "68 % range" not in out and "95 % range" not in out
    assert "UserWarning" not in captured.err


def test_unconverged_json_has_failures_and_no_ranges(files, capsys):
    s, d, _ = files
    code = main(["invert", str(s), "--data", str(d), "--sampler", "nested", "--nlive", "20",
                 "--max-evaluations", "200", "--json"])
    assert code == 4
    out = json.loads(capsys.readouterr().out)
    assert out["converged"] is False and "ranges" not in out and out["failures"]
    assert out["stopped_by"] == "max_evaluations"


def test_nested_sampler_from_the_cli_reports_the_evidence(files, capsys):
    s, d, tmp = files
    p = tmp / "two.toml"
    p.write_text('"ocean.conductivity_S_per_m" = { range = [0.05, 30], scale = "log" }\n')
    assert main(["invert", str(s), "--data", str(d), "--params", str(p), "--sampler", "nested", "--nlive", "30",
                 "--grid", "10", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["converged"] is True and out["method"] == "nested"
    assert set(out["ranges"]) == {"ocean.conductivity_S_per_m"}
    assert math.isfinite(out["log_evidence"]) and out["log_evidence_err"] > 0


def test_grid_json_has_the_log_evidence(files, capsys):
    s, d, _ = files
    assert main(["invert", str(s), "--data", str(d), "--grid", "8", "--no-refine", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert math.isfinite(out["log_evidence"]) and out["converged"] is True


def test_compare_with_and_without_an_ocean(capsys):
    # The bundled data were made with an ocean: the no-ocean hypothesis (scenarios/ilmare_no_ocean.toml) is
    # "very strong"-ly disfavoured on the Kass & Raftery (1995, JASA 90, 773) scale (2 ln K > 10).
    no_ocean = str(ROOT / "scenarios" / "ilmare_no_ocean.toml")
    assert main(["compare", "ilmare", no_ocean, "--data", "ilmare_measured", "--grid", "20", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    names = [h["scenario"] for h in out["hypotheses"]]
    assert names == ["Ilmare", "Ilmare (no ocean)"]
    for h in out["hypotheses"]:
        assert set(h) >= {"scenario", "log_evidence", "log_evidence_err", "priors", "method"}
    bf = out["bayes_factors"][0]
    assert bf["favoured"] == "Ilmare" and bf["two_ln_K"] > 10 and bf["evidence"] == "very strong"
    assert main(["compare", "ilmare", no_ocean, "--data", "ilmare_measured", "--grid", "20", "--quiet"]) == 0
    text = capsys.readouterr().out
    assert "2 ln K" in text and "very strong" in text and "Kass & Raftery" in text and "plasma" in text


def test_compare_needs_two_hypotheses_with_priors(files, capsys, tmp_path):
    s, d, _ = files
    assert main(["compare", str(s), "--data", str(d)]) == 2
    assert "at least two" in capsys.readouterr().err
    bare = tmp_path / "bare.toml"
    bare.write_text(SCENARIO.split("[invert]")[0])
    assert main(["compare", str(s), str(bare), "--data", str(d)]) == 2
    err = capsys.readouterr().err
    assert "bare.toml" in err and "no [invert] table" in err


@pytest.mark.parametrize(
    "extra_data, extra_params, args, message",
    [
        ("", None, ["--grid", "1"], "--grid must be >= 2"),
        ("[[response]]\nperiod_h = 5.0\namplitude = 0.9\namplitude_sigma = 0.0\nphase_lag_deg = 3.0\nphase_lag_sigma_deg = 1.0\n",
         None, [], "amplitude_sigma must be > 0"),
        ("[[response]]\nperiod_h = 5.0\namplitude = 0.9\nphase_lag_deg = 3.0\nphase_lag_sigma_deg = 1.0\n",
         None, [], "missing amplitude_sigma"),
        ("[[response]]\nperiod_h = 5.0\namplitude = 0.9\namplitude_sigma = 0.01\nphase_lag_deg = 96.0\nphase_lag_sigma_deg = 1.0\n",
         None, [], "phase_lag_deg = 96 must be between 0 and 90"),
        ("", '"ocean.depth_km" = { range = [1, 2] }', [], "unknown parameter 'ocean.depth_km'"),
        ("", '"ocean.thickness_km" = { range = [9, 3] }', [], "empty range"),
        ("", '"ocean.thickness_km" = { range = [-5, 3] }', [], "thickness_km must be > 0 km"),
        ("", '"ocean.conductivity_S_per_m" = { range = [-1, 3] }', [], "conductivity_S_per_m must be >= 0 S/m"),
        ("", '"ice shell.thickness_km" = { range = [100, 200] }\n"ocean.thickness_km" = { range = [650, 700] }', [],
         "physically impossible ranges"),
    ],
)
def test_bad_input_exits_2_naming_the_field(files, capsys, extra_data, extra_params, args, message):
    s, d, tmp = files
    d.write_text(DATA + extra_data)
    argv = ["invert", str(s), "--data", str(d), "--grid", "4", "--no-progress"]
    if extra_params is not None:
        p = tmp / "p.toml"
        p.write_text(extra_params + "\n")
        argv += ["--params", str(p)]
    assert main(argv + args) == 2
    err = capsys.readouterr().err
    assert message in err, err


def test_missing_invert_table_and_missing_files(files, capsys, tmp_path):
    s, d, _ = files
    bare = tmp_path / "bare.toml"
    bare.write_text(SCENARIO.split("[invert]")[0])
    assert main(["invert", str(bare), "--data", str(d)]) == 2
    assert "no [invert] table" in capsys.readouterr().err
    assert main(["invert", str(s), "--data", str(tmp_path / "none.toml")]) == 2
    assert "not found" in capsys.readouterr().err


def test_bench_inversion_prints_time_and_memory(capsys):
    assert main(["bench", "--inversion", "--inversion-grid", "8"]) == 0
    out = capsys.readouterr().out
    assert "8 x 8 x 8 grid" in out and "model-periods in" in out and "ru_maxrss" in out
    assert main(["bench", "--inversion", "--inversion-grid", "6", "--json"]) == 0
    res = json.loads(capsys.readouterr().out)
    assert res["model_periods"] == 6**3 * 3 and res["seconds"] > 0 and res["peak_rss_mb"] > 0


def test_compare_by_nested_sampling(files, capsys, tmp_path):
    # Two one-parameter hypotheses on the same data, evidence by dynesty: finite ln Z with a positive error each,
    # agreeing with the grid evidence.
    s, d, _ = files
    base = SCENARIO.split("[invert]")[0]
    a, b = tmp_path / "a.toml", tmp_path / "b.toml"
    a.write_text(base + '[invert]\n"ocean.conductivity_S_per_m" = { range = [0.05, 30], scale = "log" }\n')
    b.write_text(base.replace('name = "Test body"', 'name = "Other body"')
                 + '[invert]\n"mantle.conductivity_S_per_m" = { range = [1e-4, 0.1], scale = "log" }\n')
    assert main(["compare", str(a), str(b), "--data", str(d), "--method", "nested", "--nlive", "25", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert [h["method"] for h in out["hypotheses"]] == ["nested", "nested"]
    assert all(math.isfinite(h["log_evidence"]) and h["log_evidence_err"] > 0 for h in out["hypotheses"])
    # The same comparison on the grid (1 parameter, 60 points): each ln Z within 3 combined stated errors.
    assert main(["compare", str(a), str(b), "--data", str(d), "--method", "grid", "--json"]) == 0
    grid = json.loads(capsys.readouterr().out)
    for h, g in zip(out["hypotheses"], grid["hypotheses"]):
        tol = 3 * math.hypot(h["log_evidence_err"], g["log_evidence_err"])
        assert abs(h["log_evidence"] - g["log_evidence"]) <= tol, (h, g)
    # Occam: a parameter the data barely constrain (mantle conductivity, ocean fixed at the truth) costs no evidence,
    # a constrained one with a wide prior does, so "Other body" is favoured.
    assert out["bayes_factors"][0]["favoured"] == grid["bayes_factors"][0]["favoured"] == "Other body"


def test_missing_sampler_extra_exits_2_naming_it(files, capsys, monkeypatch):
    import builtins

    real = builtins.__import__

    def fake(name, *a, **kw):
        if name == "dynesty":
            raise ImportError("no dynesty")
        return real(name, *a, **kw)

    monkeypatch.setattr(builtins, "__import__", fake)
    s, d, _ = files
    assert main(["invert", str(s), "--data", str(d), "--sampler", "nested", "--quiet"]) == 2
    assert "pip install 'induct[nested]'" in capsys.readouterr().err


def test_interrupt_exits_130(files, capsys, monkeypatch):
    import induct.inversion.grid as grid

    def interrupted(*a, **kw):
        raise KeyboardInterrupt

    monkeypatch.setattr(grid, "invert", interrupted)
    s, d, _ = files
    assert main(["invert", str(s), "--data", str(d), "--quiet"]) == 130
    assert "interrupted" in capsys.readouterr().err
