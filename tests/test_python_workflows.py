"""Tests of epiwell.sweep, epiwell.match, progress and cancelling, and examples/plot_well.py
(pytest; run by tests/python.sh inside `make check`).

References: the command line (`epiwell sweep --json`, `epiwell sweep --csv`, `epiwell match
--json`, `epiwell solve --json` and `-o DIR`'s profile.csv: the same library through the
CLI's own code path; values must agree to the last printed digit, %.10g); CODATA 2018
hc = 1239.841984 eV nm for the match target; point counts of FROM:TO:STEP ranges and the
shard split [(K-1)P/N, KP/N) (README "epiwell sweep") worked out by hand.
"""
import csv
import importlib.util
import io
import json
import math
import os
import subprocess
import sys

import numpy as np
import pytest

import epiwell

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
BIN = os.environ.get("EPIWELL_BIN", os.path.join(ROOT, "build", "epiwell"))
DETECTOR = os.path.join(ROOT, "examples", "detector_well.cfg")
DOUBLE = os.path.join(ROOT, "examples", "double_well.cfg")
HC_EV_NM = 1239.841984  # CODATA 2018


def cli(*args):
    return subprocess.run([BIN, *args], check=True, stdout=subprocess.PIPE).stdout.decode()


def printed(v):
    """v as the JSON writer prints it (%.10g; None for NaN), read back."""
    return None if v is None or not math.isfinite(v) else float("%.10g" % v)


def assert_sweep_equals_json(sw, d):
    assert sw.columns == d["columns"]
    assert sw.varied == d["varied"] and sw.points_total == d["points_total"]
    assert sw.shard == d["shard"]
    assert len(sw) == len(d["points"])
    for c in d["columns"]:
        if c == "warnings":
            assert sw.warnings == [p["warnings"] for p in d["points"]]
            continue
        col = sw[c]
        assert isinstance(col, np.ndarray) and col.shape == (len(d["points"]),)
        for i, p in enumerate(d["points"]):
            assert printed(col[i]) == p[c], (c, i, col[i], p[c])


def test_sweep_equals_cli_json():
    sw = epiwell.sweep(DETECTOR, "well.thickness=4:7:0.25", grid_step_nm=0.1, threads=2)
    d = json.loads(cli("sweep", DETECTOR, "--vary", "well.thickness=4:7:0.25", "--json",
                       "--grid-step", "0.1"))
    assert len(sw) == 13  # (7 - 4)/0.25 + 1
    assert_sweep_equals_json(sw, d)
    assert np.isnan(sw["e2_eV"][0]) and d["points"][0]["e2_eV"] is None  # e2 not yet bound


def test_two_key_sweep_and_shard_equal_cli():
    vary = ["well.thickness=5:6:0.5", "temperature=77:300:111.5"]  # 3 x 3 points
    args = ["sweep", DETECTOR, "--vary", vary[0], "--vary", vary[1], "--json", "--grid-step",
            "0.1", "--no-estimate"]
    sw = epiwell.sweep(DETECTOR, vary, grid_step_nm=0.1, error_estimate=False)
    assert_sweep_equals_json(sw, json.loads(cli(*args)))
    assert list(sw["temperature"]) == [77, 188.5, 300] * 3
    part = epiwell.sweep(DETECTOR, {"well.thickness": (5, 6, 0.5), "temperature": (77, 300, 111.5)},
                         grid_step_nm=0.1, error_estimate=False, shard=(2, 3))
    assert part.shard == {"k": 2, "n": 3, "first": 3, "count": 3}  # [9/3, 18/3)
    assert_sweep_equals_json(part, json.loads(cli(*args, "--shard", "2/3")))


def test_sweep_equals_cli_csv_cells():
    # a tied pair of keys (both wells together): the column name holds a comma
    vary = "left_well.thickness,right_well.thickness=5:7:0.5"
    sw = epiwell.sweep(DOUBLE, vary, grid_step_nm=0.1)
    rows = list(csv.reader(io.StringIO(cli("sweep", DOUBLE, "--vary", vary, "--grid-step", "0.1"))))
    assert len(rows) == 6 and rows[0][0] == "left_well.thickness,right_well.thickness"
    assert rows[0] == sw.columns
    for i, row in enumerate(rows[1:]):
        for c, cell in zip(rows[0][:-1], row[:-1]):
            assert (cell == "" and math.isnan(sw[c][i])) or float(cell) == printed(sw[c][i]), (c, i)


def test_match_equals_cli_json_and_hits_the_target():
    m = epiwell.match(DETECTOR, "well.thickness=4:12", "e1-e2", "9.0um", tolerance="0.1um")
    d = json.loads(cli("match", DETECTOR, "--vary", "well.thickness=4:12", "--line", "e1-e2",
                       "--target", "9.0um", "--tolerance", "0.1um", "--json"))
    assert m.keys == d["keys"] and m.lines == d["lines"] and m.message == d["message"]
    assert m.solutions == d["solutions"]
    assert m.values.shape == (1, 1)
    assert printed(m.values[0, 0]) == d["solutions"][0]["value"]
    # the solution puts e1-e2 at hc / 9 um (CODATA 2018), checked with a separate solve
    r = epiwell.solve(DETECTOR, set={"well.thickness": m.values[0, 0]})
    e12 = r.state("e2").energy_eV - r.state("e1").energy_eV
    assert abs(e12 - HC_EV_NM / 9000.0) < 1e-6


def test_match_without_solution_is_not_an_error():
    m = epiwell.match(DETECTOR, {"well.thickness": (4, 5)}, "e1-e2", "3.0um")
    assert len(m) == 0 and m.values.shape == (0, 1)
    assert m.message.startswith("no value")


def test_sweep_and_match_errors_raise_with_file_and_line():
    bad = os.path.join(ROOT, "tests", "data", "cli", "syntax_error.cfg")
    with pytest.raises(epiwell.EpiwellError) as e:
        epiwell.sweep(bad, "well.thickness=4:5:0.5")
    assert (e.value.file, e.value.line, e.value.status) == (bad, 5, "input")
    with pytest.raises(epiwell.EpiwellError) as e:
        epiwell.match(bad, "well.thickness=4:5", "e1-e2", "9um")
    assert (e.value.file, e.value.line) == (bad, 5)
    with pytest.raises(epiwell.EpiwellError) as e:
        epiwell.sweep(DETECTOR, "well.thicknes=4:5:0.5")
    assert e.value.status == "usage" and "did you mean 'thickness'" in e.value.message
    with pytest.raises(epiwell.EpiwellError) as e:
        epiwell.match(DETECTOR, "well.thickness=4:12", "e1-x2", "9um")
    assert e.value.status == "usage"


def test_progress_counts_are_exact_and_cancel():
    calls = []
    sw = epiwell.sweep(DETECTOR, "well.thickness=4:6:0.1", grid_step_nm=0.1, threads=2,
                       progress=lambda d, t: calls.append((d, t)))
    assert calls == [(i, 21) for i in range(1, 22)] and len(sw) == 21
    calls.clear()
    with pytest.raises(epiwell.EpiwellError) as e:
        epiwell.sweep(DETECTOR, "well.thickness=4:6:0.1", grid_step_nm=0.1, threads=2,
                      progress=lambda d, t: calls.append(d) or d >= 4)
    assert e.value.status == "cancelled" and e.value.code == 7
    assert calls == [1, 2, 3, 4] and "after 4 of 21 points" in e.value.message

    def boom(d, t):
        raise KeyError("from the callback")
    with pytest.raises(KeyError):  # an exception in the callback cancels and is re-raised
        epiwell.sweep(DETECTOR, "well.thickness=4:6:0.1", grid_step_nm=0.1, progress=boom)
    n = []
    with pytest.raises(epiwell.EpiwellError) as e:
        epiwell.match(DETECTOR, "well.thickness=4:12", "e1-e2", "9.0um",
                      progress=lambda d, t: n.append((d, t)) or d >= 2)
    assert e.value.status == "cancelled" and n == [(1, 0), (2, 0)]


def test_solve_progress_and_cancel():
    calls = []
    r = epiwell.solve(DETECTOR, progress=lambda d, t: calls.append((d, t)))
    assert calls == [(1, 2), (2, 2)] and r.states  # the pass, the exciton pass (epiwell.h)
    calls.clear()
    with pytest.raises(epiwell.EpiwellError) as e:
        epiwell.solve(DETECTOR, excitons=False, progress=lambda d, t: calls.append((d, t)) or True)
    assert e.value.status == "cancelled" and calls == [(1, 1)]


def load_example():
    spec = importlib.util.spec_from_file_location("plot_well", os.path.join(ROOT, "examples", "plot_well.py"))
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def test_example_band_diagram_draws_the_cli_values(tmp_path):
    ex = load_example()
    fig, _ = ex.band_diagram(DETECTOR)
    lines = {ln.get_gid(): ln for ln in fig.axes[0].get_lines()}
    d = json.loads(cli("solve", DETECTOR, "--json"))
    for s in d["states"]:  # each level drawn at the CLI's energy
        y = lines["level-" + s["label"]].get_ydata()
        assert printed(float(y[0])) == s["energy_eV"], s["label"]
    out = tmp_path / "csvset"
    cli("solve", DETECTOR, "-o", str(out))
    prof = list(csv.DictReader(open(out / "profile.csv")))
    z, ec = lines["edge-e"].get_xdata(), lines["edge-e"].get_ydata()
    assert len(z) == len(prof)
    for i in (0, len(prof) // 2, len(prof) - 1):  # profile.csv prints %.6f and %.8f
        assert abs(z[i] - float(prof[i]["z_nm"])) < 5e-7
        assert abs(ec[i] - float(prof[i]["Ec_eV"])) < 5e-9
        assert abs(lines["edge-hh"].get_ydata()[i] - float(prof[i]["Ev_hh_eV"])) < 5e-9


def test_example_sweep_chart_draws_the_cli_sweep():
    ex = load_example()
    fig, _ = ex.sweep_chart(DETECTOR)
    lines = {ln.get_gid(): ln for ln in fig.axes[0].get_lines()}
    rows = list(csv.DictReader(io.StringIO(cli("sweep", DETECTOR, "--vary",
                                               "well.thickness=4:10:0.25", "--grid-step", "0.1"))))
    assert len(rows) == 25  # (10 - 4)/0.25 + 1
    for col in ("e1_eV", "e2_eV", "hh1_eV", "lh1_eV"):
        x, y = lines[col].get_xdata(), lines[col].get_ydata()
        assert [printed(v) for v in x] == [float(r["well.thickness"]) for r in rows]
        assert [printed(v) for v in y] == [float(r[col]) if r[col] else None for r in rows], col


def test_example_runs_headless_as_a_script(tmp_path):
    env = dict(os.environ)
    env.pop("DISPLAY", None)
    env.pop("MPLBACKEND", None)
    out = subprocess.run([sys.executable, os.path.join(ROOT, "examples", "plot_well.py"), DETECTOR, str(tmp_path)],
                         env=env, check=True, stdout=subprocess.PIPE, cwd=str(tmp_path)).stdout
    for name in ("band_diagram.png", "sweep.png"):
        data = (tmp_path / name).read_bytes()
        assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 10000, name
        w, h = int.from_bytes(data[16:20], "big"), int.from_bytes(data[20:24], "big")
        assert (w, h) == (700, 500), name  # figsize (7, 5) at dpi 100
    assert b"band_diagram.png" in out
