"""Batches and parameter sweeps: many plans, or one plan with changed values, run on Dask.

Sits beside the CLI, above the pipeline: every run is ``parse_plan`` → ``analyze`` →
``Results.write``, exactly what ``planshear run`` does, so each run's results.json is
byte for byte the one ``planshear run`` writes for the plan file saved in its folder.

A value to change is addressed by a dotted path into the plan file as parsed from TOML
(``diaphragm.material.Ga``, ``wall.W3.stiffness``, ``load.E.fpx.story_force_ratio``):
an item of a list of tables is picked by its ``id`` or ``name`` (or by its position counted
from 1), and a plural (``walls``, ``loads``) stands for the file's singular key.

Dask, distributed and pyarrow are imported inside the functions that use them, so that
``planshear run`` never loads them.
"""

from __future__ import annotations

import copy
import csv
import datetime as _dt
import itertools
import json
import math
import os
import re
import shutil
import tempfile
import tomllib
import traceback
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field
from pathlib import Path

from .errors import AnalysisError, EquilibriumError, PlanError

__all__ = [
    "Axis",
    "BatchOutcome",
    "Job",
    "RunOutcome",
    "apply_values",
    "load_sweep",
    "local_cluster",
    "make_jobs",
    "parse_vary",
    "run_batch",
    "run_job",
    "summary_row",
    "toml_dumps",
]


# --------------------------------------------------------------------------------------
# What to run
# --------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Axis:
    """One parameter of a grid: a dotted ``key`` and the values it takes, each as written
    (``text``, for names and the summary) and as parsed (a TOML value)."""

    key: str
    texts: tuple[str, ...]
    values: tuple[object, ...]
    source: str  # where it was given, for messages: '--vary' or the sweep file


@dataclass(frozen=True)
class Variant:
    """An explicit variant of a sweep file: a name and key → value."""

    name: str
    values: tuple[tuple[str, str, object], ...]  # (key, text, value)


@dataclass(frozen=True)
class Sweep:
    """A sweep file: plans it names (resolved), grid axes and explicit variants."""

    plans: tuple[Path, ...]
    axes: tuple[Axis, ...]
    variants: tuple[Variant, ...]


@dataclass(frozen=True)
class Job:
    """One run: the folder name, the plan it comes from, the exact plan text to run and
    the file name it is known by (results.json's ``plan.file``), and the changed values."""

    name: str
    plan: str
    label: str
    text: str
    variant: str
    values: tuple[tuple[str, str], ...]  # (key, value as written)


@dataclass(frozen=True)
class RunOutcome:
    """What one run returned: ``status`` "ok" or "failed", the error message (no
    traceback; that is in the run's error.txt), the kind of error and the summary row."""

    name: str
    status: str
    error: str = ""
    error_kind: str = ""
    row: dict = field(default_factory=dict)
    seconds: float = 0.0


@dataclass(frozen=True)
class BatchOutcome:
    """All runs of a batch, in the order they were given, and the output folder."""

    out: Path
    runs: tuple[RunOutcome, ...]
    columns: tuple[str, ...]

    @property
    def failed(self) -> tuple[RunOutcome, ...]:
        return tuple(r for r in self.runs if r.status != "ok")


def _split_values(text: str) -> list[str]:
    """Split at commas outside brackets, braces and quotes."""
    parts, depth, quote, start = [], 0, "", 0
    for i, ch in enumerate(text):
        if quote:
            if ch == quote:
                quote = ""
        elif ch in "\"'":
            quote = ch
        elif ch in "[{":
            depth += 1
        elif ch in "]}":
            depth -= 1
        elif ch == "," and depth == 0:
            parts.append(text[start:i])
            start = i + 1
    parts.append(text[start:])
    return [p.strip() for p in parts]


def _parse_value(text: str) -> object:
    """A TOML value where the text is one (numbers, true/false, arrays, quoted strings),
    else the text itself as a string ("10 kip/in", "free")."""
    try:
        return tomllib.loads(f"v = {text}")["v"]
    except tomllib.TOMLDecodeError:
        return text


def parse_vary(option: str) -> Axis:
    """``KEY=V1,V2,...`` (a --vary option) → :class:`Axis`. Raises PlanError."""
    key, sep, rest = option.partition("=")
    key = key.strip()
    if not sep or not key:
        raise PlanError([f"--vary {option!r}: expected KEY=V1,V2,... e.g. --vary "
                         "\"diaphragm.material.Ga=10 kip/in,15 kip/in\""])
    texts = _split_values(rest)
    if any(not t for t in texts):
        raise PlanError([f"--vary {option!r}: an empty value; separate values by single commas"])
    return Axis(key, tuple(texts), tuple(_parse_value(t) for t in texts), "--vary")


def _value_text(value: object) -> str:
    return value if isinstance(value, str) else _inline(value)


def load_sweep(path: str | Path) -> Sweep:
    """Read a sweep file (TOML)::

        plans = ["level2.toml", "roof.toml"]      # optional, relative to this file
        [grid]                                    # every combination of these
        "diaphragm.material.Ga" = ["10 kip/in", "20 kip/in"]
        "load.E.fpx.story_force_ratio" = [0.15, 0.2]
        [[variant]]                               # explicit variants (one more grid axis)
        name = "stiff walls"
        set = { "wall.W3.stiffness" = "30 kip/in" }
    """
    path = Path(path)
    label = str(path)
    try:
        doc = tomllib.loads(path.read_text(encoding="utf-8-sig"))
    except FileNotFoundError:
        raise PlanError([f"{label}: sweep file not found; check the path given to --sweep"]) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise PlanError([f"{label}: sweep file cannot be read ({exc})"]) from None
    except tomllib.TOMLDecodeError as exc:
        raise PlanError([f"{label}: TOML syntax error: {exc}; fix the line it names"]) from None
    problems = []
    unknown = set(doc) - {"plans", "grid", "variant"}
    if unknown:
        problems.append(f"{label}: unknown key(s) {', '.join(sorted(unknown))}; a sweep file has plans, [grid] "
                        "and [[variant]]")
    plans = doc.get("plans", [])
    if not isinstance(plans, list) or not all(isinstance(p, str) for p in plans):
        problems.append(f'{label}: plans must be a list of plan file paths, e.g. plans = ["level2.toml"]')
        plans = []
    axes = []
    grid = doc.get("grid", {})
    if not isinstance(grid, dict):
        problems.append(f'{label}: grid must be a table of "dotted.key" = [values], e.g. [grid] '
                        '"diaphragm.material.Ga" = ["10 kip/in", "20 kip/in"]')
        grid = {}
    for key, values in _flatten_keys(grid):
        if not isinstance(values, list) or not values:
            problems.append(f'{label}: grid."{key}" must be a non-empty list of values, e.g. ["10 kip/in", '
                            '"20 kip/in"] (quote the dotted key)')
            continue
        axes.append(Axis(key, tuple(_value_text(v) for v in values), tuple(values), label))
    variants = []
    entries = doc.get("variant", [])
    if not isinstance(entries, list):
        problems.append(f"{label}: variant must be an array of tables: write each as [[variant]]")
        entries = []
    for i, entry in enumerate(entries, start=1):
        where = f"{label}: variant {i}"
        if not isinstance(entry, dict) or not isinstance(entry.get("set"), dict) or not entry["set"]:
            problems.append(f'{where}: needs set = {{ "dotted.key" = value, ... }} (and optionally name = "...")')
            continue
        extra = set(entry) - {"name", "set"}
        if extra:
            problems.append(f"{where}: unknown key(s) {', '.join(sorted(extra))}; a variant has name and set")
        name = str(entry.get("name") or f"variant{i}")
        values = tuple((k, _value_text(v), v) for k, v in _flatten_keys(entry["set"]))
        variants.append(Variant(name, values))
    if len({v.name for v in variants}) != len(variants):
        problems.append(f"{label}: two [[variant]] entries have the same name; give each its own name")
    if problems:
        raise PlanError(problems)
    return Sweep(tuple((path.parent / p) for p in plans), tuple(axes), tuple(variants))


def _flatten_keys(table: dict, prefix: str = "") -> Iterable[tuple[str, object]]:
    """Quoted dotted keys stay whole; unquoted ones (TOML nests them) are joined again."""
    for key, value in table.items():
        full = f"{prefix}.{key}" if prefix else key
        if isinstance(value, dict):
            yield from _flatten_keys(value, full)
        else:
            yield full, value


def _segments(key: str) -> list[str]:
    return [s for s in key.split(".")]


def _resolve(document: dict, key: str, where: str, create: bool):
    """The container and the final key/index that ``key`` names in ``document``."""
    parts = _segments(key)
    if any(not p for p in parts):
        raise PlanError([f"{where}: key {key!r} has an empty part; write it like diaphragm.material.Ga"])
    node: object = document
    walked = []
    for i, part in enumerate(parts):
        last = i == len(parts) - 1
        if isinstance(node, dict):
            if part not in node and part.endswith("s") and part[:-1] in node:
                part = part[:-1]  # walls → wall, loads → load
            walked.append(part)
            if last:
                return node, part
            if part not in node:
                if not create:
                    raise PlanError([f"{where}: {'.'.join(walked)} is not in the plan; keys there: "
                                     f"{', '.join(map(str, node)) or '(none)'}"])
                node[part] = {}
            node = node[part]
        elif isinstance(node, list):
            index = _list_index(node, part)
            if index is None:
                names = [str(item.get("id", item.get("name"))) for item in node
                         if isinstance(item, dict) and ("id" in item or "name" in item)]
                raise PlanError([f"{where}: {'.'.join(walked)} has no item {part!r}; pick one by "
                                 + (f"id or name ({', '.join(names)}) or " if names else "")
                                 + f"by its position 1…{len(node)}"])
            walked.append(part)
            if last:
                return node, index
            node = node[index]
        else:
            raise PlanError([f"{where}: {'.'.join(walked)} is a value ({_value_text(node)}), not a table; "
                             f"the key cannot continue with .{part}"])
    raise AssertionError("unreachable")


def _list_index(items: list, part: str) -> int | None:
    for i, item in enumerate(items):
        if isinstance(item, dict) and part in (str(item.get("id", "\0")), str(item.get("name", "\0"))):
            return i
    if part.isdigit() and 1 <= int(part) <= len(items):
        return int(part) - 1
    return None


def apply_values(document: dict, values: Iterable[tuple[str, object]], where: str) -> dict:
    """A deep copy of the parsed plan ``document`` with each dotted key set to its value
    (``document`` is not changed). Missing tables on the way are created (e.g.
    ``mesh.size`` in a plan without [mesh]); list items must exist. Raises PlanError."""
    changed = copy.deepcopy(document)
    for key, value in values:
        container, last = _resolve(changed, key, where, create=True)
        container[last] = copy.deepcopy(value)
    return changed


# --------------------------------------------------------------------------------------
# TOML out (the standard library reads TOML but does not write it)
# --------------------------------------------------------------------------------------

_BARE_KEY = re.compile(r"^[A-Za-z0-9_-]+$")


def _key(key: str) -> str:
    return key if _BARE_KEY.match(key) else json.dumps(key, ensure_ascii=False)


def _inline(value: object) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, (_dt.datetime, _dt.date, _dt.time)):
        return value.isoformat()
    if isinstance(value, list):
        return "[" + ", ".join(_inline(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{" + ", ".join(f"{_key(k)} = {_inline(v)}" for k, v in value.items()) + "}"
    raise TypeError(f"cannot write {type(value).__name__} as TOML")


def _is_table_list(value: object) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, dict) for v in value)


def toml_dumps(document: dict, header: str = "") -> str:
    """TOML text of a parsed plan: top-level tables as [headers], lists of tables as
    [[headers]] (also one level down, e.g. [[diaphragm.zone]]), deeper tables inline.
    ``tomllib.loads(toml_dumps(d)) == d`` for every plan document."""
    lines = [f"# {row}" for row in header.splitlines()]

    def body(table: dict, path: str) -> None:
        later = []
        for k, v in table.items():
            if path and _is_table_list(v):
                later.append((k, v))
            else:
                lines.append(f"{_key(k)} = {_inline(v)}")
        for k, items in later:
            for item in items:
                lines.extend(["", f"[[{path}.{_key(k)}]]"])
                lines.extend(f"{_key(ik)} = {_inline(iv)}" for ik, iv in item.items())

    top = {k: v for k, v in document.items() if not isinstance(v, dict) and not _is_table_list(v)}
    body(top, "")
    for k, v in document.items():
        if isinstance(v, dict):
            lines.extend(["", f"[{_key(k)}]"])
            body(v, _key(k))
        elif _is_table_list(v):
            for item in v:
                lines.extend(["", f"[[{_key(k)}]]"])
                lines.extend(f"{_key(ik)} = {_inline(iv)}" for ik, iv in item.items())
    return "\n".join(lines).lstrip("\n") + "\n"


# --------------------------------------------------------------------------------------
# Jobs
# --------------------------------------------------------------------------------------

_UNSAFE = re.compile(r"[^A-Za-z0-9._+=-]+")


def _safe(text: str, space: str = "") -> str:
    """A file-name-safe form: "10 kip/in" → "10kip-per-in" (names: spaces → ``space``)."""
    text = text.strip().replace(" ", space).replace("/", "-per-").replace("*", "x")
    return _UNSAFE.sub("_", text).strip("._") or "_"


def _short_keys(keys: list[str]) -> dict[str, str]:
    """Each key shortened to its shortest tail of segments that no other key shares."""
    out = {}
    for key in keys:
        parts = _segments(key)
        for n in range(1, len(parts) + 1):
            tail = ".".join(parts[-n:])
            if sum(1 for other in keys if other == tail or other.endswith("." + tail)) == 1:
                break
        out[key] = tail
    return out


def make_jobs(plans: Iterable[str | Path], axes: Iterable[Axis] = (), variants: Iterable[Variant] = ()) -> list[Job]:
    """Every plan × every combination of the axes × every explicit variant, as jobs with
    unique, filesystem-safe names. Refuses (PlanError, nothing run) a plan that cannot be
    read or a key that does not lead into it; a value the plan does not accept fails only
    its own run."""
    plans = [Path(p) for p in plans]
    axes, variants = list(axes), list(variants)
    problems = []
    if not plans:
        problems.append("no plan given: name plan files on the command line or in the sweep file's plans = [...]")
    keys = [a.key for a in axes] + [k for v in variants for k, _, _ in v.values]
    seen = {}
    for axis in axes:
        if axis.key in seen:
            problems.append(f"{axis.source}: {axis.key} is varied twice (also in {seen[axis.key]}); give it once")
        seen[axis.key] = axis.source
    if problems:
        raise PlanError(problems)
    short = _short_keys(list(dict.fromkeys(keys)))
    combos = list(itertools.product(*[list(zip(a.texts, a.values, strict=True)) for a in axes]))
    jobs: list[Job] = []
    names: set[str] = set()
    for path in plans:
        try:
            text = path.read_text(encoding="utf-8-sig")
            document = tomllib.loads(text)
        except FileNotFoundError:
            problems.append(f"{path}: file not found; check the path")
            continue
        except (OSError, UnicodeDecodeError) as exc:
            problems.append(f"{path}: cannot be read ({exc})")
            continue
        except tomllib.TOMLDecodeError as exc:
            problems.append(f"{path}: TOML syntax error: {exc}; fix the line it names")
            continue
        for combo in combos:
            for variant in variants or [None]:
                chosen = [(a.key, t, v) for a, (t, v) in zip(axes, combo, strict=True)]
                if variant is not None:
                    chosen += list(variant.values)
                sources = sorted({a.source for a in axes}) + ([f"[[variant]] {variant.name}"] if variant else [])
                where = f"{path.name} ({', '.join(sources)})"
                try:
                    changed = apply_values(document, [(k, v) for k, _, v in chosen], where)
                except PlanError as exc:
                    problems.extend(p for p in exc.problems if p not in problems)
                    continue
                parts = [path.stem] + ([_safe(variant.name, "-")] if variant else [])
                parts += [f"{_safe(short[k])}={_safe(t)}" for k, t, _ in chosen if not variant or k not in
                          {vk for vk, _, _ in variant.values}]
                name = "_".join(parts)[:150]
                unique, n = name, 2
                while unique in names:
                    unique, n = f"{name}-{n}", n + 1
                names.add(unique)
                plan_text = text if not chosen else toml_dumps(
                    changed, f"planshear batch: {path.name} with "
                    + ", ".join(f"{k} = {t}" for k, t, _ in chosen) + "\n(the exact plan of this run)")
                jobs.append(Job(unique, str(path), path.name, plan_text, variant.name if variant else "",
                                tuple((k, t) for k, t, _ in chosen)))
    if problems:
        raise PlanError(problems)
    return jobs


# --------------------------------------------------------------------------------------
# One run (executed on a Dask worker, or in this process)
# --------------------------------------------------------------------------------------


def run_job(job: Job, folder: str, report: bool = True) -> RunOutcome:
    """Run ``job`` into ``folder`` (replaced when complete) and return its summary row.
    Never raises for a failed run: the message is returned and the traceback written
    to ``folder``/error.txt. Runs in a Dask worker, so everything it needs is imported here."""
    import time

    from .plan import parse_plan
    from .run import analyze

    start = time.perf_counter()
    folder_path = Path(folder)
    try:
        results = analyze(parse_plan(job.text, job.label))
        results.write(folder_path, report=report)
        doc = json.loads((folder_path / "results.json").read_text(encoding="utf-8"))
        outcome = RunOutcome(job.name, "ok", row=summary_row(doc), seconds=time.perf_counter() - start)
    except Exception as exc:  # a failed run is recorded; the others go on
        kind, message = _describe(exc)
        shutil.rmtree(folder_path, ignore_errors=True)
        folder_path.mkdir(parents=True, exist_ok=True)
        (folder_path / "error.txt").write_text(
            f"{kind}: {message}\n\n" + "".join(traceback.format_exception(exc)), encoding="utf-8")
        outcome = RunOutcome(job.name, "failed", message, kind, seconds=time.perf_counter() - start)
    (folder_path / job.label).write_text(job.text, encoding="utf-8")
    (folder_path / "variant.toml").write_text(_variant_toml(job), encoding="utf-8")
    return outcome


def _describe(exc: BaseException) -> tuple[str, str]:
    if isinstance(exc, PlanError):
        return "bad input", " ".join(exc.problems)
    if isinstance(exc, EquilibriumError):
        return "equilibrium", str(exc)
    if isinstance(exc, AnalysisError):
        return "analysis", str(exc)
    return "internal", f"{type(exc).__name__}: {exc} (a bug in planshear; please report it with the plan file)"


def _variant_toml(job: Job) -> str:
    lines = ["# planshear batch: what this run changed in its plan (the plan run is the .toml beside this file)",
             f"run = {_inline(job.name)}", f"plan = {_inline(job.plan)}", f"plan_file = {_inline(job.label)}"]
    if job.variant:
        lines.append(f"variant = {_inline(job.variant)}")
    lines += ["", "[values]"] + [f"{_inline(k)} = {_inline(t)}" for k, t in job.values]
    return "\n".join(lines) + "\n"


def _short_verdict(text: str) -> str:
    return re.split(r"[:(]", text, maxsplit=1)[0].strip()


def summary_row(doc: dict) -> dict:
    """The governing results of one results.json as a flat row, units in the names:
    per direction the verdict, governing span, MDD, ADVE and their ratio; per wall the
    design force; per collector the design peak and the peak with overstrength."""
    units = doc["units"]
    force, disp = units["force"], units["displacement"]
    row: dict = {}
    classification = doc.get("classification") or {}
    for axis, check in (classification.get("directions") or {}).items():
        row[f"verdict {axis}"] = _short_verdict(check["verdict"])
        row[f"governing span {axis}"] = check.get("governing_span") or ""
        spans = [s for s in check["spans"] if f"{s['span']} ({s['case']})" == check.get("governing_span")]
        if spans:
            row[f"MDD {axis} [{disp}]"] = spans[0]["MDD"]
            row[f"ADVE {axis} [{disp}]"] = spans[0]["ADVE"]
            row[f"MDD/ADVE {axis}"] = spans[0]["ratio"]
    if classification.get("calculated") is False:
        row["verdict"] = "not calculated (no semi-rigid model)"
    envelope = doc.get("envelope") or {}
    walls = {name: slots["design"]["value"] for name, slots in (envelope.get("walls") or {}).items()
             if slots.get("design")}
    if walls:
        largest = max(walls, key=lambda w: abs(walls[w]))
        row["largest wall"] = largest
        row[f"largest wall force [{force}]"] = walls[largest]
    for name, value in walls.items():
        row[f"wall {name} [{force}]"] = value
    for name, slots in (envelope.get("collectors") or {}).items():
        if slots.get("design"):
            row[f"collector {name} [{force}]"] = slots["design"]["value"]
        if slots.get("with_overstrength"):
            row[f"collector {name} with overstrength [{force}]"] = slots["with_overstrength"]["value"]
    return row


# --------------------------------------------------------------------------------------
# The batch
# --------------------------------------------------------------------------------------

_FIXED = ("run", "plan", "variant")
_STATUS = ("status", "error kind", "error", "seconds")


def run_batch(jobs: list[Job], out: str | Path, *, scheduler: str | None = None, workers: int | None = None,
              serial: bool = False, report: bool = True, progress: bool = False,
              on_done: Callable[[RunOutcome], None] | None = None) -> BatchOutcome:
    """Run every job into ``out``/<job name>/ and write ``out``/summary.csv and
    summary.parquet. The folder ``out`` is written completely or not at all (built next
    to it and moved into place at the end). Execution: a Dask LocalCluster with
    ``workers`` processes (default: the machine's cores) of one thread each (gmsh is not
    thread-safe), or the existing cluster at ``scheduler``, whose workers must see ``out``'s
    parent folder (a shared file system); ``serial`` runs in this process without Dask."""
    out = Path(out)
    parent = out.resolve().parent
    parent.mkdir(parents=True, exist_ok=True)
    if out.exists() and not out.is_dir():
        raise PlanError([f"{out}: exists and is not a folder; choose another --out"])
    staging = Path(tempfile.mkdtemp(prefix=f".{out.name}.partial-", dir=parent))
    umask = os.umask(0)
    os.umask(umask)
    staging.chmod(0o777 & ~umask)
    try:
        targets = [str(staging / job.name) for job in jobs]
        if serial:
            outcomes = []
            for job, target in zip(jobs, targets, strict=True):
                outcomes.append(run_job(job, target, report))
                if on_done:
                    on_done(outcomes[-1])
        else:
            outcomes = _run_on_dask(jobs, targets, scheduler, workers, report, progress, on_done)
        columns = _write_summary(staging, jobs, outcomes)
        from .run import _replace_folder  # the staging pattern of `planshear run`

        _replace_folder(staging, out)
    except BaseException:
        shutil.rmtree(staging, ignore_errors=True)
        raise
    return BatchOutcome(out, tuple(outcomes), columns)


#: Thread counts of the BLAS / OpenMP libraries. Dask's nanny sets them to 1 in its workers;
#: the factorization then rounds differently in the last bits (solver and line residuals of
#: order 1e-12 differ in results.json), so workers keep this process's settings instead.
_BLAS_THREADS = ("OMP_NUM_THREADS", "MKL_NUM_THREADS", "OPENBLAS_NUM_THREADS")


def local_cluster(workers: int | None = None):
    """A Dask LocalCluster of ``workers`` processes (default: the machine's cores) of one
    thread each (gmsh is not thread-safe), whose numerical libraries use the same thread
    counts as ``planshear run`` started from this environment, so that every result is
    byte for byte the one ``planshear run`` writes."""
    import dask
    from distributed import LocalCluster

    same = {f"distributed.nanny.pre-spawn-environ.{name}": None for name in _BLAS_THREADS}
    with dask.config.set(same):
        return LocalCluster(n_workers=workers or os.cpu_count() or 1, threads_per_worker=1, processes=True,
                            dashboard_address=None)


def _run_on_dask(jobs, targets, scheduler, workers, report, progress, on_done) -> list[RunOutcome]:
    from distributed import Client, as_completed

    cluster = None
    if scheduler:
        try:
            client = Client(scheduler, timeout="20s")
        except (OSError, TimeoutError) as exc:
            raise AnalysisError(f"--scheduler {scheduler}: cannot connect to a Dask scheduler there ({exc}); "
                                "check the address (tcp://host:8786) or leave --scheduler out to use this "
                                "machine's cores") from None
    else:
        cluster = local_cluster(workers)
        client = Client(cluster)
    try:
        futures = client.map(run_job, jobs, targets, report=report, pure=False)
        index = {f.key: i for i, f in enumerate(futures)}
        if progress:
            from distributed import progress as show_progress

            show_progress(futures, notebook=False)
        outcomes: list[RunOutcome | None] = [None] * len(jobs)
        for future in as_completed(futures):
            i = index[future.key]
            try:
                outcome = future.result()
            except Exception as exc:  # the worker died (memory, killed): record, go on
                message = f"{type(exc).__name__}: {exc} (the Dask worker running it failed)"
                Path(targets[i]).mkdir(parents=True, exist_ok=True)
                (Path(targets[i]) / "error.txt").write_text(
                    message + "\n\n" + "".join(traceback.format_exception(exc)), encoding="utf-8")
                outcome = RunOutcome(jobs[i].name, "failed", message, "worker")
            outcomes[i] = outcome
            if on_done:
                on_done(outcome)
        return outcomes
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


def _write_summary(folder: Path, jobs: list[Job], outcomes: list[RunOutcome]) -> tuple[str, ...]:
    """summary.csv and summary.parquet: one row per run. Text columns first (run, plan,
    variant, the varied keys as written, status), then the numbers in their own columns."""
    keys = list(dict.fromkeys(k for job in jobs for k, _ in job.values))
    result_columns = list(dict.fromkeys(c for o in outcomes for c in o.row))
    columns = [*_FIXED, *keys, *_STATUS, *result_columns]
    rows = []
    for job, outcome in zip(jobs, outcomes, strict=True):
        row = {"run": job.name, "plan": job.plan, "variant": job.variant, **dict(job.values),
               "status": outcome.status, "error kind": outcome.error_kind, "error": outcome.error,
               "seconds": round(outcome.seconds, 3), **outcome.row}
        rows.append(row)
    with open(folder / "summary.csv", "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(columns)
        for row in rows:
            writer.writerow(["" if row.get(c) is None else row.get(c, "") for c in columns])
    import pyarrow as pa
    import pyarrow.parquet as pq

    numeric = {c for c in result_columns if all(isinstance(r.get(c), (int, float, type(None)))
                                                 and not isinstance(r.get(c), bool) for r in rows)}
    numeric.add("seconds")
    arrays = {}
    for c in columns:
        values = [r.get(c) for r in rows]
        if c in numeric:
            arrays[c] = pa.array([None if v is None else float(v) for v in values], pa.float64())
        else:
            arrays[c] = pa.array(["" if v is None else str(v) for v in values], pa.string())
    pq.write_table(pa.table(arrays), folder / "summary.parquet")
    return tuple(columns)
