"""Command line and results file contract."""

import json
import subprocess
import sys
from pathlib import Path

import pytest

from planshear import analyze, load_plan
from planshear.cli import main

EXAMPLE = Path(__file__).parents[1] / "examples" / "alder_library_roof.toml"


def test_demo_writes_results_per_contract(tmp_path, capsys):
    out = tmp_path / "demo"
    assert main(["demo", "--out", str(out)]) == 0
    text = capsys.readouterr().out
    assert "licensed engineer" in text
    doc = json.loads((out / "results.json").read_text())
    assert doc["units"] == {"force": "kip", "position": "ft", "displacement": "in", "unit_shear": "kip/ft"}
    assert "licensed engineer" in doc["caution"]
    for assumption in ("flexible", "rigid", "semirigid"):
        cases = doc["assumptions"][assumption]["cases"]
        for case in cases.values():
            for key in ("walls", "lines", "chords", "max_unit_shear", "max_displacement", "equilibrium_residual"):
                assert key in case
            for line in case["lines"].values():
                assert {"reaction", "collector_peak", "collector_peak_at", "collector"} <= set(line)
    assert "E+x+ecc" in doc["assumptions"]["rigid"]["cases"]
    semi = doc["assumptions"]["semirigid"]
    assert "walls along chord lines" in text and {"wall_pieces", "implied_collector_EA"} <= set(semi)
    assert all("walls_along_chords" in case for case in semi["cases"].values())
    assert "E+x+ecc" not in doc["assumptions"]["flexible"]["cases"]
    assert doc["unavailable"] == {}
    for name in ("mesh.vtu", "mesh.xdmf", "mesh.msh"):
        assert (out / name).stat().st_size > 0


def test_run_is_repeatable_and_leaves_input_alone(tmp_path):
    plan_copy = tmp_path / "plan.toml"
    plan_copy.write_bytes(EXAMPLE.read_bytes())
    before = plan_copy.read_bytes()
    assert main(["run", str(plan_copy), "--out", str(tmp_path / "a"), "--quiet", "--no-report"]) == 0
    assert main(["run", str(plan_copy), "--out", str(tmp_path / "b"), "--quiet", "--no-report"]) == 0
    assert (tmp_path / "a" / "results.json").read_bytes() == (tmp_path / "b" / "results.json").read_bytes()
    assert plan_copy.read_bytes() == before
    leftovers = [p.name for p in tmp_path.iterdir() if p.name.startswith(".")]
    assert leftovers == []


def test_failed_write_keeps_previous_results(tmp_path, monkeypatch):
    results = analyze(load_plan(EXAMPLE))
    out = tmp_path / "out"
    results.write(out)
    previous = (out / "results.json").read_bytes()

    def broken(*args, **kwargs):
        raise OSError("disk full")

    monkeypatch.setattr("planshear.run.json.dumps", broken)
    with pytest.raises(OSError):
        results.write(out)
    assert (out / "results.json").read_bytes() == previous
    assert [p.name for p in tmp_path.iterdir()] == ["out"]


def test_json_summary_format(tmp_path, capsys):
    assert main(["run", str(EXAMPLE), "--out", str(tmp_path / "r"), "--format", "json", "--no-report"]) == 0
    summary = json.loads(capsys.readouterr().out)
    assert "W1" in summary["walls"]


def test_check_prints_summary(capsys):
    assert main(["check", str(EXAMPLE)]) == 0
    out = capsys.readouterr().out
    assert "center of mass" in out and "E+y-ecc" in out


def test_console_script_exit_code_for_bad_input(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("[plan\n")
    # Run from tmp_path so the source folder planshear/ does not shadow the installed package.
    proc = subprocess.run(
        [sys.executable, "-m", "planshear.cli", "check", str(bad)], capture_output=True, text=True, cwd=tmp_path
    )
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr and "bad.toml" in proc.stderr


def test_public_api_resolves():
    import planshear
    import planshear.fem
    import planshear.mesh

    for module in (planshear, planshear.fem, planshear.mesh):
        for name in module.__all__:
            assert hasattr(module, name), (module.__name__, name)


def test_version_flag(capsys):
    import planshear

    with pytest.raises(SystemExit) as stop:
        main(["--version"])
    assert stop.value.code == 0
    assert planshear.__version__ in capsys.readouterr().out


def test_interrupted_write_keeps_previous_results(tmp_path, monkeypatch):
    """An interruption in the middle of writing (Ctrl-C while the mesh files are written)
    leaves the earlier results folder as it was and no partial folder behind."""
    results = analyze(load_plan(EXAMPLE), semirigid=False)
    out = tmp_path / "out"
    results.write(out, report=False)
    previous = {p.name: p.read_bytes() for p in out.iterdir()}

    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr("planshear.run.json.dumps", interrupted)
    with pytest.raises(KeyboardInterrupt):
        results.write(out, report=False)
    assert {p.name: p.read_bytes() for p in out.iterdir()} == previous
    assert [p.name for p in tmp_path.iterdir()] == ["out"]


def test_metric_plan_with_skewed_wall(tmp_path):
    """A plan in metres reports kN, m and mm; a wall on a skewed line takes force under the
    rigid and semi-rigid assumptions (none under the flexible method, as documented)."""
    plan = load_plan(Path(__file__).parents[1] / "examples" / "harbour_kiosk_metric.toml")
    doc = analyze(plan).to_json()
    assert doc["units"] == {"force": "kN", "position": "m", "displacement": "mm", "unit_shear": "kN/m"}
    for assumption in ("rigid", "semirigid"):
        case = doc["assumptions"][assumption]["cases"]["E+x"]
        assert abs(case["walls"]["F1"]) > 0.1
        assert case["equilibrium_residual"] < 1e-8
    assert doc["assumptions"]["flexible"]["cases"]["E+x"]["walls"]["F1"] == 0.0
    assert any("skewed" in note for note in doc["assumptions"]["flexible"]["notes"])


def test_output_path_that_is_a_file_is_refused(tmp_path, capsys):
    target = tmp_path / "taken"
    target.write_text("not a folder")
    assert main(["run", str(EXAMPLE), "--out", str(target), "--quiet", "--no-report"]) == 2
    err = capsys.readouterr().err
    assert "choose another --out" in err and "Traceback" not in err
    assert target.read_text() == "not a folder"
    assert [p.name for p in tmp_path.iterdir()] == ["taken"]  # no partial folder left behind


def test_steel_deck_example_shows_the_code_demands():
    """The steel-deck example with a re-entrant corner carries every code step into
    results.json: the governing Fpx equation (ΣFi/Σwi = 0.16 < 0.2·SDS, so Eq. 12.10-2),
    Fx for the walls, the §12.10.2.1 collector values with their cap, Table 12.3-1 (Type 2
    present: projections 37.5 % and 42.9 % > 15 %), the drift checks and the LRFD factors."""
    plan = load_plan(Path(__file__).parents[1] / "examples" / "cedar_yard_warehouse_deck.toml")
    doc = analyze(plan).to_json()
    load = doc["plan"]["loads"]["E"]
    assert load["fpx_equation"] == "12.10-2" and load["fx"] == 70.0
    assert load["force_basis"]["walls, line reactions, wall drifts"].startswith("Fx")
    collectors = doc["envelope"]["collectors"]
    assert all(c["overstrength"]["cap"] is not None for c in collectors.values() if "overstrength" in c)
    types = {(i["type"], i["present"]) for i in doc["irregularities"]}
    assert ("2", True) in types
    assert doc["drift"]["walls"] and doc["plan"]["design_basis"] == "LRFD"


def test_wood_floor_example_shows_elf_fx_and_splices():
    """The wood-floor example gives Fx by the ELF distribution (ASCE 7-16 Eqs. 12.8-11/12 with
    k = 1 for T = 0.25 s: Cvx = 10·190 : 20·185 : 30·120 → level 2 Fx = 78·3700/9200 =
    31.37 kip; ΣFi/Σwi at and above = (31.37 + 30.52)/305 = 0.2029, hand arithmetic) and
    two chord splices whose slip the flexible span 2-3 shows: 2 · 16 ft · Δc/(2 · 44 ft)
    with Δc = (M/d)/k, M = w·32²/8 (SDPWS-2015 Eq. 4.2-1, slip term)."""
    plan = load_plan(Path(__file__).parents[1] / "examples" / "birch_lane_flats_level2.toml")
    doc = analyze(plan, semirigid=False).to_json()
    load = doc["plan"]["loads"]["E"]
    assert load["fx"] == pytest.approx(78 * 3700 / 9200, abs=1e-4)
    assert load["fx_distribution"]["story_force_ratio"] == pytest.approx((78 * 3700 + 78 * 3600) / 9200 / 305,
                                                                         abs=1e-6)
    w = load["force"]["y"] / 96  # kip/ft, uniform (area weight and line weights along the load's span)
    slip = (w * 32**2 / 8 / 44) / (4 / 0.03)  # in, per splice at midspan of span 2-3
    spans = {s["span"]: s for s in doc["assumptions"]["flexible"]["cases"]["E+y"]["span_deflections"]}
    assert spans["2-3"]["splice_slip"] == pytest.approx(2 * 16 * slip / (2 * 44), rel=2e-3)
    assert spans["1-2"]["splice_slip"] == 0.0
