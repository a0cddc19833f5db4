"""The gvflow command, run end to end in a subprocess as a user would run it."""

import csv
import json
import subprocess
import sys

import pytest

import gvflow as gv
from gvflow.cli import main

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def gvflow(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "gvflow.cli", *map(str, args)], capture_output=True, text=True,
                          cwd=cwd, timeout=120)


def _assert_one_line_error(res):
    assert res.returncode == 2
    lines = res.stderr.strip().splitlines()
    assert len(lines) == 1, res.stderr
    assert lines[0].startswith("gvflow: error: ")
    assert "Traceback" not in res.stderr
    return lines[0]


@pytest.fixture(scope="module")
def reach_file(tmp_path_factory):
    reach = gv.Reach(
        name="gate on a mild flume",
        segments=[gv.Segment(length=300.0, slope=0.001, section=gv.Rectangular(width=3.0), roughness=0.015)],
        discharge=5.0, upstream=gv.SluiceGate(opening=0.3), downstream=gv.FixedDepth(1.8))
    return gv.write_reach(reach, tmp_path_factory.mktemp("reach") / "flume.json")


@pytest.mark.slow  # subprocess, process pool or kernel start-up
def test_demo_prints_summary_and_caution_and_writes_files(tmp_path):
    res = gvflow("demo", "--plot", tmp_path / "demo.png", "--csv", tmp_path / "demo.csv")
    assert res.returncode == 0, res.stderr
    out = res.stdout
    profile = gv.demo_reach().solve()
    assert "Profile types: M3 (seg 0" in out
    for label in profile.profile_types:
        assert label in out
    assert out.count("Hydraulic jump at x =") == 2
    assert "critical control" in out
    assert "stations in all" in out
    assert "licensed engineer" in out and "planning and checking" in out
    assert (tmp_path / "demo.png").read_bytes()[:8] == PNG_SIGNATURE
    rows = list(csv.reader((tmp_path / "demo.csv").open(newline="")))
    assert len(rows) == profile.x.size + 1
    assert "Long section written to" in out and "Station table (" in out


@pytest.mark.slow  # subprocess, process pool or kernel start-up
def test_run_csv_and_plot(reach_file, tmp_path):
    out, png = tmp_path / "out.csv", tmp_path / "flume.png"
    res = gvflow("run", reach_file, "--csv", out, "--plot", png)
    assert res.returncode == 0, res.stderr
    rows = list(csv.reader(out.open(newline="")))
    profile = gv.read_reach(reach_file).solve()
    assert rows[0][:3] == ["x [m]", "bed [m]", "depth [m]"]
    assert len(rows) == profile.x.size + 1
    assert [float(r[0]) for r in rows[1:]] == pytest.approx(profile.x.tolist(), rel=1e-9)
    assert "gate on a mild flume" in res.stdout and "M3" in res.stdout and "M1" in res.stdout
    assert png.read_bytes()[:8] == PNG_SIGNATURE
    assert png.stat().st_size > 10_000


def test_run_options_in_process(reach_file, tmp_path, capsys):
    out = tmp_path / "coarse.csv"
    assert main(["run", str(reach_file), "--steps", "10", "--csv", str(out), "--method", "ivp"]) == 0
    assert "method ivp" in capsys.readouterr().out
    coarse = gv.read_reach(reach_file).solve(n_steps=10, method="ivp")
    assert len(out.read_text().splitlines()) == coarse.x.size + 1


@pytest.mark.slow  # subprocess, process pool or kernel start-up
def test_schema_prints_json_schema():
    res = gvflow("schema")
    assert res.returncode == 0, res.stderr
    schema = json.loads(res.stdout)
    assert schema == json.loads(json.dumps(gv.reach_schema()))
    assert "sluice_gate" in res.stdout


@pytest.mark.slow  # subprocess, process pool or kernel start-up
def test_malformed_file_exits_2_with_field_path(tmp_path):
    data = json.loads(gv.demo_reach().model_dump_json())
    data["segments"][1]["section"]["width"] = -4.0
    bad = tmp_path / "broken.json"
    bad.write_text(json.dumps(data, indent=2))
    line = _assert_one_line_error(gvflow("run", bad))
    assert "broken.json" in line and "segments.1.section.width: must be greater than 0" in line


def _main_error(capsys, *args):
    """Run the command in this process; check exit code 2, one line on stderr and no result shown on stdout
    (a result never appears without the caution); return the line."""
    assert main([str(a) for a in args]) == 2
    captured = capsys.readouterr()
    assert captured.out == ""
    err = captured.err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("gvflow: error: "), err
    return err[0]


def test_missing_file_exits_2(tmp_path, capsys):
    line = _main_error(capsys, "run", tmp_path / "no_such_reach.json")
    assert "no_such_reach.json" in line and "not found" in line


def test_physically_impossible_reach_exits_2(tmp_path, capsys):
    # a gate whose jet (0.61 x 2 m) stands above critical depth: it cannot release supercritical flow
    reach = gv.Reach(segments=[gv.Segment(length=100.0, slope=0.001, section=gv.Rectangular(width=3.0),
                                          roughness=0.015)], discharge=5.0, upstream=gv.SluiceGate(opening=2.0))
    path = gv.write_reach(reach, tmp_path / "wide_open_gate.json")
    assert "critical depth" in _main_error(capsys, "run", path)


def test_bad_steps_exits_2(reach_file, capsys):
    assert "n_steps" in _main_error(capsys, "run", reach_file, "--steps", 1)


def test_too_many_stations_exits_2_before_any_work(reach_file, capsys):
    line = _main_error(capsys, "run", reach_file, "--steps", 10 ** 8)
    assert "100,000,001 stations" in line and "fewer steps" in line


@pytest.mark.parametrize("option, name", [("--csv", "out.csv"), ("--plot", "out.png")])
def test_unwritable_output_exits_2_without_showing_results(reach_file, tmp_path, capsys, option, name):
    # results never appear without the caution: the files are written before anything is printed
    assert name in _main_error(capsys, "run", reach_file, option, tmp_path / "no_dir" / name)


def test_each_command_help_carries_the_caution(capsys):
    for command in ("demo", "run"):
        with pytest.raises(SystemExit):
            main([command, "--help"])
        assert "CAUTION: results are for planning and checking" in " ".join(capsys.readouterr().out.split())


def test_usage_errors_exit_2(reach_file, capsys):
    for args in ([], ["run", str(reach_file), "--method", "guess"], ["frobnicate"]):
        with pytest.raises(SystemExit) as info:
            main(args)
        assert info.value.code == 2
        assert "usage: gvflow" in capsys.readouterr().err


def test_schema_in_process(capsys):
    assert main(["schema"]) == 0
    assert json.loads(capsys.readouterr().out)["title"] == "gvflow reach"
