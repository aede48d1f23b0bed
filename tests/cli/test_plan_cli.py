"""``induct plan`` end to end: the JSON shape, the files of --out, a candidate file, every bad input; ``bench --plan``.

Checks name their source: the linear-Gaussian expected information gain is half of log det(I + P F)
(Lindley 1956, Ann. Math. Stat. 27, 986); the induced dipole falls as (R/r)^3, so lower passes rank first
(common practice); a uniform distribution of width w has standard deviation w / sqrt(12) (any statistics text).
"""

import json
import math

import pytest

from induct.cli.main import main
from induct.io.candidates import write_candidates
from induct.io.scenario import load_scenario
from induct.planning.candidates import generate_candidates

GEN = ["--altitude-km", "50,200,800", "--lon-deg", "150", "--phase-deg", "0:240:3", "--duration-s", "1800",
       "--step-s", "60"]


def run_json(capsys, argv):
    assert main(argv) == 0
    return json.loads(capsys.readouterr().out)


def test_plan_json_shape_and_ranking(capsys):
    d = run_json(capsys, ["plan", "ilmare", *GEN, "--noise-nT", "0.5", "--choose", "3", "--json"])
    params = list(load_scenario("ilmare").raw["invert"])
    cands = d["candidates"]
    assert len(cands) == 9 and len(d["selected"]) == 3 and len(set(d["selected"])) == 3
    # Best first: log_det never increases down the list.
    ld = [c["log_det"] for c in cands]
    assert all(a >= b for a, b in zip(ld, ld[1:])), ld
    for c in cands:
        assert set(c["expected_68_width"]) == set(params)
        assert all(v > 0 for v in c["expected_68_width"].values())
        # Lindley 1956: EIG of a linear-Gaussian model = log det(I + P F) / 2 (nats).
        assert math.isclose(c["expected_information_gain_nats"], 0.5 * c["log_det"], rel_tol=1e-12)
    assert set(d["selected_expected_68_width"]) == set(params)
    # Common practice, (R/r)^3: every candidate at 50 km ranks above every candidate at 800 km.
    alts = [c["closest_approach"]["altitude_km"] for c in cands]
    assert max(i for i, a in enumerate(alts) if abs(a - 50) < 1e-6) < min(i for i, a in enumerate(alts) if abs(a - 800) < 1e-6)
    # The chosen set is at least as informative as the best single candidate, and narrower than each prior
    # (prior 68 % width of a uniform range, Gaussian approximation: 2 w / sqrt(12)).
    assert d["selected_log_det"] >= cands[0]["log_det"]
    for p in d["parameters"]:
        assert d["selected_expected_68_width"][p["name"]] < p["prior_68_width"]
        if p["scale"] == "linear":
            assert math.isclose(p["prior_68_width"], 2 * (p["range"][1] - p["range"][0]) / math.sqrt(12), rel_tol=1e-12)
    # Widths shrink (never grow) as flybys are added.
    steps = d["selection"]
    for a, b in zip(steps, steps[1:]):
        assert all(b["expected_68_width"][k] <= a["expected_68_width"][k] * (1 + 1e-12) for k in params)


def test_plan_text_and_out_files(tmp_path, capsys):
    out = tmp_path / "plan"
    assert main(["plan", "ilmare", *GEN, "--noise-nT", "0.5", "--choose", "2", "--out", str(out), "--list", "4"]) == 0
    text = capsys.readouterr().out
    assert "candidates ranked by information" in text and "log_det" in text and "EIG (nats)" in text
    assert "chosen set" in text and "separable" in text and "plasma interaction" in text
    names = sorted(p.name for p in out.iterdir())
    assert names == ["plan.json", "plan.pdf", "plan.png", "plan_candidates.csv", "plan_selection.csv"], names
    for fig in ("plan.png", "plan.pdf"):
        assert (out / fig).stat().st_size > 10_000
    rows = (out / "plan_candidates.csv").read_text().splitlines()
    assert len(rows) == 1 + 9 and rows[0].startswith("rank,candidate,chosen,altitude_km")
    assert "log_det" in rows[0].split(",") and "EIG_nats" in rows[0].split(",")
    sel = (out / "plan_selection.csv").read_text().splitlines()
    assert len(sel) == 1 + 2
    d = json.loads((out / "plan.json").read_text())
    assert [c["candidate"] for c in d["candidates"]][0] == rows[1].split(",")[1]


def test_plan_candidate_file_gives_the_generated_result(tmp_path, capsys):
    sc = load_scenario("ilmare")
    cands = generate_candidates(sc.model.radius_km, altitude_km=[50.0, 200.0, 800.0], lon_deg=150.0,
                                phase_deg=[0.0, 120.0, 240.0], lines=sc.drive_lines, duration_s=1800.0, step_s=60.0)
    path = tmp_path / "cands.csv"
    write_candidates(path, cands)
    a = run_json(capsys, ["plan", "ilmare", *GEN, "--noise-nT", "0.5", "--choose", "3", "--json"])
    b = run_json(capsys, ["plan", "ilmare", "--candidates", str(path), "--noise-nT", "0.5", "--choose", "3", "--json"])
    assert a["selected"] == b["selected"]
    for x, y in zip(a["candidates"], b["candidates"]):
        assert x["candidate"] == y["candidate"] and math.isclose(x["log_det"], y["log_det"], rel_tol=1e-9)


def test_plan_hyperbolic_tracks_run(capsys):
    d = run_json(capsys, ["plan", "ilmare", "--altitude-km", "100", "--t-ca-s", "0,20000", "--trajectory",
                          "hyperbolic", "--speed-km-s", "3", "--step-s", "60", "--noise-nT", "1", "--choose", "1",
                          "--json"])
    assert d["candidates"][0]["info"]["trajectory"] == "hyperbolic"


@pytest.mark.parametrize("extra, needle", [
    (["--altitude-km", "50:abc", "--phase-deg", "0"], "--altitude-km"),
    (["--altitude-km=-5", "--phase-deg", "0"], "--altitude-km"),
    (["--altitude-km", "50"], "--phase-deg"),                                   # neither time nor phase
    (["--altitude-km", "50", "--phase-deg", "0", "--t-ca-s", "0"], "--phase-deg"),  # both
    (["--phase-deg", "0"], "--altitude-km"),
    (["--altitude-km", "50", "--phase-deg", "0", "--lat-deg=95"], "--lat-deg"),
    (["--altitude-km", "50", "--phase-deg", "0", "--step-s", "0"], "--step-s"),
    (["--altitude-km", "50:500:100", "--phase-deg", "0:350:36", "--max-samples", "100000"], "--max-samples"),
    (["--altitude-km", "50", "--phase-deg", "0", "--choose", "2"], "--choose"),
    (["--altitude-km", "50", "--phase-deg", "0", "--noise-nT", "0"], "--noise-nT"),
    (["--candidates", "no_such_file.csv"], "no_such_file.csv"),
    (["--candidates", "x.csv", "--altitude-km", "50"], "--candidates"),
])
def test_plan_bad_inputs_exit_2_naming_the_option(capsys, extra, needle):
    argv = ["plan", "ilmare", "--noise-nT", "0.5", "--choose", "1", *extra]
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and needle in err, err


def test_plan_bad_candidate_file_names_file_and_row(tmp_path, capsys):
    path = tmp_path / "bad.csv"
    path.write_text("candidate,t_s,x_km,y_km,z_km\nA,0,2000,0,0\nA,10,2000,oops,0\n")
    assert main(["plan", "ilmare", "--candidates", str(path), "--noise-nT", "0.5", "--choose", "1"]) == 2
    err = capsys.readouterr().err.strip()
    assert "bad.csv" in err and "row 2" in err and "y_km" in err, err
    inside = tmp_path / "inside.csv"
    inside.write_text("candidate,t_s,x_km,y_km,z_km\nA,0,1000,0,0\nA,10,1000,50,0\n")
    assert main(["plan", "ilmare", "--candidates", str(inside), "--noise-nT", "0.5", "--choose", "1"]) == 2
    assert "inside the body" in capsys.readouterr().err


def test_bench_plan_json(capsys):
    d = run_json(capsys, ["bench", "--plan", "--plan-candidates", "20", "--plan-samples", "50", "--repeat", "1", "--json"])
    assert d["n_candidates"] == 20 and d["n_parameters"] == 3 and d["timings_s"]["plan_flybys"] > 0
    assert main(["bench", "--plan", "--plan-candidates", "0"]) == 2
