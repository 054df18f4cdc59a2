"""planshear batch: addressing plan values, sweep files, jobs, Dask execution, summary."""

from __future__ import annotations

import csv
import glob
import json
import re
import subprocess
import sys
import textwrap
import tomllib
from pathlib import Path

import pytest

from planshear.batch import (
    apply_values,
    load_sweep,
    local_cluster,
    make_jobs,
    parse_vary,
    run_batch,
    toml_dumps,
)
from planshear.cli import main
from planshear.errors import PlanError

from conftest import end_walls, rectangle_plan

ROOT = Path(__file__).parents[1]
COARSE = "[mesh]\nsize = 10.0\norder = 2\n"  # 5 × 10 quadratic elements: enough for wall forces and identity


@pytest.fixture
def rect(tmp_path) -> Path:
    path = tmp_path / "rect.toml"
    path.write_text(rectangle_plan(walls=end_walls(), extra=COARSE), encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def cluster():
    """The batch's own local cluster (two one-thread worker processes), reached through its
    address like an existing cluster given with --scheduler."""
    pytest.importorskip("distributed")
    with local_cluster(2) as local:
        yield local


def test_vary_values_keep_units_and_toml_types():
    axis = parse_vary("diaphragm.material.Ga=10 kip/in, 15 kip/in,20 kip/in")
    assert axis.key == "diaphragm.material.Ga"
    assert axis.values == ("10 kip/in", "15 kip/in", "20 kip/in")
    assert parse_vary("mesh.size=2,2.5").values == (2, 2.5)
    assert parse_vary("classification.sensitivity=[0.5, 2.0],[]").values == ([0.5, 2.0], [])
    assert parse_vary('wall.W1.pier.top="free",fixed').values == ("free", "fixed")
    with pytest.raises(PlanError, match="KEY=V1,V2"):
        parse_vary("diaphragm.material.Ga")
    with pytest.raises(PlanError, match="empty value"):
        parse_vary("mesh.size=2,,3")


def test_values_addressed_by_id_name_plural_and_position():
    doc = tomllib.loads((ROOT / "planshear" / "data" / "demo.toml").read_text(encoding="utf-8"))
    before = json.dumps(doc, sort_keys=True)
    changed = apply_values(doc, [("walls.W3.wood.Ga", "25 kip/in"), ("load.E.fpx.story_force_ratio", 0.3),
                                 ("member.2.EA", "3000 kip"), ("diaphragm.zone.west strip.material.Ga", "30 kip/in"),
                                 ("mesh.element", "quad")], "test")
    assert json.dumps(doc, sort_keys=True) == before  # the parsed input is never changed
    assert changed["wall"][2]["wood"]["Ga"] == "25 kip/in"
    assert changed["load"][0]["fpx"]["story_force_ratio"] == 0.3
    assert changed["member"][1]["EA"] == "3000 kip" and changed["member"][0]["EA"] == "2500 kip"
    assert changed["diaphragm"]["zone"][0]["material"]["Ga"] == "30 kip/in"
    assert changed["mesh"]["element"] == "quad"
    with pytest.raises(PlanError, match=r'has no item .W33.*W1, W2.*position 1…9'):
        apply_values(doc, [("wall.W33.stiffness", "1 kip/in")], "test")
    with pytest.raises(PlanError, match="is a value"):
        apply_values(doc, [("plan.name.x", 1)], "test")
    # A table missing on the way is created (a plan without [classification]).
    assert apply_values(doc, [("classification.sensitivity", [0.5])], "t")["classification"] == {"sensitivity": [0.5]}


def test_toml_writer_round_trips_every_plan_in_the_repository():
    """The plan a variant runs is written back as TOML; tomllib (the standard library's reader)
    must read every plan of the repository back to the same document."""
    files = sorted(glob.glob(str(ROOT / "examples" / "*.toml")) + [str(ROOT / "planshear" / "data" / "demo.toml")]
                   + glob.glob(str(ROOT / "tests" / "**" / "*.toml"), recursive=True))
    checked = 0
    for name in files:
        try:
            doc = tomllib.loads(Path(name).read_text(encoding="utf-8"))
        except (tomllib.TOMLDecodeError, UnicodeDecodeError):
            continue  # the bad-plan corpus has files that are not TOML (or UTF-8) on purpose
        text = toml_dumps(doc, "header\nline two")
        if "nan" in text:  # nan != nan: compare the text instead
            assert toml_dumps(tomllib.loads(text), "header\nline two") == text
        else:
            assert tomllib.loads(text) == doc, name
        checked += 1
    assert checked > 50


def test_grid_is_the_cartesian_product_with_unique_safe_names(rect, tmp_path):
    other = tmp_path / "sub" / "rect.toml"
    other.parent.mkdir()
    other.write_text(rect.read_text())
    jobs = make_jobs([rect, other], [parse_vary("walls.W1.stiffness=20 kip/in,50 kip/in"),
                                     parse_vary("walls.W2.stiffness=30 kip/in,40 kip/in,60 kip/in")])
    assert len(jobs) == 2 * 2 * 3
    names = [j.name for j in jobs]
    assert len(set(names)) == len(names)
    assert names[0] == "rect_W1.stiffness=20kip-per-in_W2.stiffness=30kip-per-in"
    assert names[6].endswith("-2")  # the second plan of the same file name
    assert all("/" not in n and " " not in n for n in names)
    doc = tomllib.loads(jobs[5].text)
    assert [w["stiffness"] for w in doc["wall"][:2]] == ["50 kip/in", "60 kip/in"]
    assert jobs[5].values == (("walls.W1.stiffness", "50 kip/in"), ("walls.W2.stiffness", "60 kip/in"))
    # No variation: the plan file's own text runs, comments and all.
    assert make_jobs([rect])[0].text == rect.read_text()
    with pytest.raises(PlanError, match="varied twice"):
        make_jobs([rect], [parse_vary("mesh.size=1,2"), parse_vary("mesh.size=3")])
    with pytest.raises(PlanError, match="file not found"):
        make_jobs([tmp_path / "missing.toml"])


def test_sweep_file_grid_and_variants(rect, tmp_path):
    sweep = tmp_path / "sweep.toml"
    sweep.write_text(textwrap.dedent("""
        plans = ["rect.toml"]
        [grid]
        "load.E.total" = ["100 kip", "200 kip"]
        [[variant]]
        name = "soft W1"
        set = { "walls.W1.stiffness" = "10 kip/in" }
        [[variant]]
        name = "stiff WA"
        set = { "walls.WA.stiffness" = "90 kip/in", "mesh.size" = 12.5 }
    """))
    loaded = load_sweep(sweep)
    assert loaded.plans == (rect,)
    jobs = make_jobs(loaded.plans, loaded.axes, loaded.variants)
    assert [j.name for j in jobs] == ["rect_soft-W1_total=100kip", "rect_stiff-WA_total=100kip",
                                      "rect_soft-W1_total=200kip", "rect_stiff-WA_total=200kip"]
    assert dict(jobs[3].values) == {"load.E.total": "200 kip", "walls.WA.stiffness": "90 kip/in",
                                    "mesh.size": "12.5"}
    bad = tmp_path / "bad.toml"
    bad.write_text('plan = ["x"]\n[grid]\n"mesh.size" = 2\n')
    with pytest.raises(PlanError) as info:
        load_sweep(bad)
    assert any("unknown key(s) plan" in p for p in info.value.problems)
    assert any('grid."mesh.size" must be a non-empty list' in p for p in info.value.problems)


def test_dask_batch_matches_single_runs_byte_for_byte(rect, tmp_path, cluster):
    """Each run's results.json is the one `planshear run` writes for the plan saved in its
    folder; a bad value fails only its own run (message in the summary, traceback in
    error.txt); the input file is not touched."""
    before = rect.read_bytes()
    jobs = make_jobs([rect], [parse_vary("walls.W1.stiffness=20 kip/in,50 kip/in,20 kip")])
    outcome = run_batch(jobs, tmp_path / "batch", scheduler=cluster.scheduler_address, report=False)
    assert rect.read_bytes() == before
    assert [r.status for r in outcome.runs] == ["ok", "ok", "failed"]
    failed = outcome.runs[2]
    assert failed.error_kind == "bad input" and 'wall "W1".stiffness' in failed.error
    assert "Traceback" not in failed.error
    assert "Traceback" in (tmp_path / "batch" / failed.name / "error.txt").read_text()
    for run in outcome.runs[:2]:
        folder = tmp_path / "batch" / run.name
        assert main(["run", str(folder / "rect.toml"), "--out", str(tmp_path / run.name), "--quiet",
                     "--no-report"]) == 0
        assert (folder / "results.json").read_bytes() == (tmp_path / run.name / "results.json").read_bytes()
        job = next(j for j in jobs if j.name == run.name)
        assert tomllib.loads((folder / "variant.toml").read_text())["values"] == dict(job.values)
    # The unvaried stiffness (50 kip/in) is the input plan itself: same bytes as running it directly.
    assert main(["run", str(rect), "--out", str(tmp_path / "direct"), "--quiet", "--no-report"]) == 0
    assert ((tmp_path / "direct" / "results.json").read_bytes()
            == (tmp_path / "batch" / outcome.runs[1].name / "results.json").read_bytes())
    leftovers = [p.name for p in tmp_path.iterdir() if p.name.startswith(".")]
    assert leftovers == []


def test_workers_keep_the_numerical_thread_settings(cluster):
    """Dask's nanny would set OMP/MKL/OPENBLAS_NUM_THREADS = 1 in its workers; the sparse
    factorization then rounds differently than `planshear run` in the last bits (seen on the
    demo plan: solver and line residuals of order 1e-12 differed in results.json), so the
    workers keep this process's settings — and this process's are left alone."""
    import os

    from distributed import Client

    names = ("OMP_NUM_THREADS", "MKL_NUM_THREADS", "OPENBLAS_NUM_THREADS")
    with Client(cluster) as client:
        seen = client.run(lambda: [os.environ.get(n) for n in names])
    assert len(seen) == 2
    assert all(values == [os.environ.get(n) for n in names] for values in seen.values())


def test_summary_rows_and_cli_exit_code(rect, tmp_path, cluster, capsys):
    """summary.csv and summary.parquet hold one row per run with units in the headers. The
    analysis is linear, so doubling the seismic total doubles every wall force (superposition,
    common practice) — a check on the summary's numbers independent of the envelope code."""
    pq = pytest.importorskip("pyarrow.parquet")
    out = tmp_path / "batch"
    code = main(["batch", str(rect), "--out", str(out), "--vary", "load.E.total=100 kip,200 kip,-5",
                 "--scheduler", cluster.scheduler_address, "--no-report", "--quiet"])
    assert code == 2  # one run refused its input
    with open(out / "summary.csv", newline="", encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle))
    assert [r["load.E.total"] for r in rows] == ["100 kip", "200 kip", "-5"]
    assert [r["status"] for r in rows] == ["ok", "ok", "failed"]
    assert rows[2]["error"] and rows[2]["wall W1 [kip]"] == ""
    for wall in ("W1", "W2", "WA", "WB"):
        one, two = float(rows[0][f"wall {wall} [kip]"]), float(rows[1][f"wall {wall} [kip]"])
        assert two == pytest.approx(2 * one, rel=1e-7)  # 9 significant digits in results.json
    assert rows[0]["verdict x"] in ("flexible", "rigid", "semi-rigid")
    assert float(rows[0]["MDD/ADVE x"]) == pytest.approx(float(rows[0]["MDD x [in]"]) / float(rows[0]["ADVE x [in]"]),
                                                         rel=1e-6)
    doc = json.loads((out / rows[0]["run"] / "results.json").read_text())
    assert float(rows[0]["collector A [kip]"]) == doc["envelope"]["collectors"]["A"]["design"]["value"]
    table = pq.read_table(out / "summary.parquet")
    assert table.num_rows == 3
    assert table.column("wall W1 [kip]").to_pylist()[:2] == [float(rows[0]["wall W1 [kip]"]),
                                                            float(rows[1]["wall W1 [kip]"])]
    assert str(table.schema.field("load.E.total").type) == "string"


def test_serial_mode_and_setup_errors_write_nothing(rect, tmp_path, capsys):
    out = tmp_path / "batch"
    assert main(["batch", str(rect), "--out", str(out), "--vary", "wall.W9.stiffness=1 kip/in", "--serial"]) == 2
    err = capsys.readouterr().err
    assert 'has no item \'W9\'' in err and "Traceback" not in err
    assert not out.exists()
    assert main(["batch", str(rect), "--out", str(out), "--serial", "--no-report", "--quiet"]) == 0
    assert (out / "rect" / "results.json").is_file() and (out / "summary.csv").is_file()
    # A sweep file's plans and variants with a --vary axis on top.
    sweep = tmp_path / "sweep.toml"
    sweep.write_text('plans = ["rect.toml"]\n[[variant]]\nname = "soft"\nset = { "wall.W1.stiffness" = "5 kip/in" }\n')
    assert main(["batch", "--sweep", str(sweep), "--vary", "mesh.size=12.5", "--out", str(out), "--serial",
                 "--no-report"]) == 0
    assert re.search(r"^ok +rect_soft_size=12\.5 ", capsys.readouterr().out, re.MULTILINE)  # a summary row
    ran = tomllib.loads((out / "rect_soft_size=12.5" / "rect.toml").read_text())
    assert ran["wall"][0]["stiffness"] == "5 kip/in" and ran["mesh"]["size"] == 12.5
    assert not (out / "rect").exists()  # the earlier batch folder was replaced as a whole


def test_run_does_not_import_dask_or_pyarrow(rect):
    """`planshear run` start-up stays free of the batch dependencies."""
    code = ("import sys; from planshear.cli import main; main(['check', sys.argv[1]]); "
            "print(sorted(m for m in ('dask', 'distributed', 'pyarrow') if m in sys.modules))")
    done = subprocess.run([sys.executable, "-c", code, str(rect)], capture_output=True, text=True, check=True)
    assert done.stdout.strip().endswith("[]")
