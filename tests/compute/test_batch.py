"""The batch engine (`tstrate many`) on a LocalCluster of 2 worker processes.

The reference of every check is the serial command run in this process on the same inputs:
`tstrate run` (its output folder, file by file, byte for byte once the creation times are
taken out), `tstrate uncertainty --json` (the same JSON text) and `tstrate compute refine`
(the same energy to the last digit). The engine must not change a number.
"""

from __future__ import annotations

import json
import re
import shutil
from pathlib import Path

import pytest

pytest.importorskip("dask.distributed")

from tstrate.cli.main import main  # noqa: E402
from tstrate.compute import batch  # noqa: E402

DATA = Path(__file__).resolve().parents[1] / "data"

#: creation times written into outputs (fits.json, mechanism.yaml, the reports)
_STAMPS = [re.compile(rb"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d+)?\+00:00"),
           re.compile(rb"\d{4}-\d\d-\d\d \d\d:\d\d UTC")]


#: matplotlib's SVG ids are salted at random in each process (rcParams["svg.hashsalt"]), so two
#: serial runs differ there too; they are renumbered in order of appearance
_SVG_ID = re.compile(rb"\b[mp][0-9a-f]{10}\b")


def _normalised(data: bytes) -> bytes:
    for pat in _STAMPS:
        data = pat.sub(b"<time>", data)
    data = re.sub(rb"<dc:date>[^<]*</dc:date>", b"<dc:date/>", data)
    ids: dict[bytes, bytes] = {}
    return _SVG_ID.sub(lambda m: ids.setdefault(m.group(0), b"id%d" % len(ids)), data)


def _files(folder: Path) -> dict[str, bytes]:
    return {str(p.relative_to(folder)): _normalised(p.read_bytes()) for p in sorted(folder.rglob("*"))
            if p.is_file()}


@pytest.fixture(scope="module")
def client():
    with batch.dask_client(workers=2) as c:
        yield c


@pytest.fixture()
def studies(tmp_path) -> list[Path]:
    """Copies of two small test studies (the toy and the TST one), each in its own folder."""
    out = []
    for name in ("toy", "tst"):
        shutil.copytree(DATA / name, tmp_path / "in" / name)
        out.append(tmp_path / "in" / name / "study.toml")
    return out


def test_local_cluster_has_two_single_threaded_process_workers(client):
    info = client.scheduler_info()["workers"]
    assert len(info) == 2
    assert all(w["nthreads"] == 1 for w in info.values())
    envs = client.run(lambda: __import__("os").environ.get("OMP_NUM_THREADS"))
    assert set(envs.values()) == {"1"}
    pids = client.run(lambda: __import__("os").getpid())
    assert len(set(pids.values())) == 2 and __import__("os").getpid() not in pids.values()


def test_batch_run_equals_serial_run_and_reports_failures(client, studies, tmp_path, capsys):
    # serial references
    for s in studies:
        assert main(["run", str(s), "-o", str(tmp_path / "serial" / s.parent.name), "--quiet"]) == 0
    # a study that names a missing species file fails alone
    broken = tmp_path / "in" / "broken" / "study.toml"
    broken.parent.mkdir()
    broken.write_text(studies[0].read_text().replace('"ts.toml"', '"missing.toml"').replace(
        '"h2o.toml"', '"../toy/h2o.toml"').replace('"o2.toml"', '"../toy/o2.toml"').replace(
        '"ts2.toml"', '"../toy/ts2.toml"'))
    folder = tmp_path / "many"
    capsys.readouterr()
    code = main(["many", "run", *map(str, studies), str(broken), "-o", str(folder),
                 "--scheduler", client.scheduler.address, "--quiet"])
    assert code == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("tstrate many: broken: failed:") and "missing.toml" in err[0]
    for s in studies:
        name = s.parent.name
        assert _files(folder / name) == _files(tmp_path / "serial" / name), name
    # the summary covers every study: one row per channel, one for the failure
    doc = json.loads((folder / "summary.json").read_text())
    assert (doc["tasks_done"], doc["tasks_failed"], doc["tasks_skipped"]) == (2, 1, 0)
    toy = next(t for t in doc["tasks"] if t["name"] == "toy")
    serial = json.loads((tmp_path / "serial" / "toy" / "results.json").read_text())
    for ch, ref in zip(toy["summary"]["channels"], serial["channels"]):
        assert ch["name"] == ref["name"] and ch["rate_constant_unit"] == ref["rate_constant_unit"]
        assert ch["rate_constant_at_T_min"] == ref["rate_constant"][0]
        assert ch["rate_constant_at_T_max"] == ref["rate_constant"][-1]
    rows = (folder / "summary.csv").read_text().strip().splitlines()
    assert rows[0].startswith("task,kind,status,") and "time [s]" in rows[0] and "T min [K]" in rows[0]
    assert len(rows) == 1 + 2 + 4 + 1   # toy: 2 channels, tst: 4, broken: 1


def test_resume_skips_finished_studies_and_reruns_changed_ones(client, studies, tmp_path):
    folder = tmp_path / "many"
    tasks = batch.study_tasks(studies, folder)
    first = batch.run_batch(tasks, client, folder)
    assert [r.status for r in first] == ["done", "done"]
    stamp = (folder / "toy" / "fits.json").stat().st_mtime_ns
    again = batch.run_batch(batch.study_tasks(studies, folder), client, folder)
    assert [r.status for r in again] == ["skipped", "skipped"]
    assert again[0].summary == first[0].summary
    assert (folder / "toy" / "fits.json").stat().st_mtime_ns == stamp
    # a species file changes: that study's key changes and it runs again; so does a lost output
    ts = studies[1].parent / "ts_bare.toml"
    ts.write_text(ts.read_text() + "\n# edited\n")
    shutil.rmtree(folder / "toy")
    third = batch.run_batch(batch.study_tasks(studies, folder), client, folder)
    assert [r.status for r in third] == ["done", "done"]
    assert third[1].key != first[1].key and third[0].key == first[0].key
    # a task that fails on its worker (its output place is taken by a file) fails alone
    shutil.rmtree(folder / "tst")
    (folder / "tst").write_text("not a folder")
    fourth = batch.run_batch(batch.study_tasks(studies, folder), client, folder)
    assert [r.status for r in fourth] == ["skipped", "failed"]
    assert "not a folder" in fourth[1].error and "\n" not in fourth[1].error
    (folder / "tst").unlink()
    # resume=False runs everything
    assert [r.status for r in batch.run_batch(batch.study_tasks(studies, folder), client, folder,
                                              resume=False)] == ["done", "done"]


def test_task_key_covers_options_and_every_input_file(studies):
    from tstrate.physics.thermo import LOW_MODES_ROTOR_ENTROPY_BLEND, LowModes

    a = batch.study_tasks(studies[:1], "x")[0]
    b = batch.study_tasks(studies[:1], "x", low_modes=LowModes(LOW_MODES_ROTOR_ENTROPY_BLEND))[0]
    assert set(a.inputs) == {str(studies[0])} | {str(studies[0].parent / f) for f in
                                                 ("h2o.toml", "ts.toml", "o2.toml", "ts2.toml")}
    assert b.key != a.key
    assert batch.unique_names(["x/a/study.toml", "y/a/study.toml", "z/b.toml", "w/a.toml"]) == \
        ["a", "a-2", "b", "a-3"]
    # the batch folder's own entries are never task names
    assert batch.unique_names(["tasks.toml", "x/summary/study.toml"]) == ["tasks-2", "summary-2"]


UNCERTAIN = """
[uncertainty]
samples = 600
seed = 3
[uncertainty.species.TS_bare]
energy = { value = 4, unit = "kJ/mol" }
imaginary_frequency_percent = 10
[uncertainty.species.H2CO3]
energy = { value = 2, unit = "kJ/mol" }
frequency_scale_percent = 2
"""


def test_uncertainty_in_sample_blocks_equals_the_serial_run(client, tmp_path, capsys, monkeypatch):
    shutil.copytree(DATA / "falloff", tmp_path / "fo")
    study = tmp_path / "fo" / "study.toml"
    study.write_text(study.read_text() + UNCERTAIN)
    assert main(["uncertainty", str(study), "--json", "--quiet"]) == 0
    serial = capsys.readouterr().out
    assert json.loads(serial)["samples"] == 600
    folder = tmp_path / "many"
    # blocks of 250, 250 and 100 samples, each its own task
    settings, ranges = batch._uncertainty_plan(batch.study_tasks([study], folder, kind="uncertainty")[0])
    assert ranges == [(0, 250), (250, 500), (500, 600)] and settings.samples == 600
    client.write_scheduler_file(str(tmp_path / "scheduler.json"))   # this time through a scheduler file
    import tstrate.cli.common

    monkeypatch.setattr(tstrate.cli.common, "show_progress", lambda args: True)   # as on a terminal
    code = main(["many", "uncertainty", str(study), "-o", str(folder), "--samples-per-task", "1",
                 "--scheduler-file", str(tmp_path / "scheduler.json")])
    assert code == 0
    err = capsys.readouterr().err
    assert "tstrate many uncertainty" in err and "1/1" in err   # the bar, one step per study
    assert (folder / "fo.json").read_text() == serial
    doc = json.loads((folder / "summary.json").read_text())
    assert doc["tasks"][0]["summary"]["n_samples"] == 600
    assert doc["tasks"][0]["summary"]["channels"][0]["f298"] > 1.0   # a real band, not a line


def test_mixed_batch_refine_equals_serial_and_files_follow_the_output_schema(client, tmp_path):
    """One batch of every kind: a study run, an uncertainty run, a refinement (HF/STO-3G of
    water, against a serial `tstrate compute refine`) and a failing study; the summary and
    the task records hold only keys of the output schema, and between them every key of it."""
    pytest.importorskip("pyscf")
    import csv

    from tstrate.io.species import read_species
    from tstrate.output import schema

    src = tmp_path / "h2o.toml"
    shutil.copy(DATA / "toy" / "h2o.toml", src)
    serial = tmp_path / "serial.toml"
    assert main(["compute", "refine", str(src), "--level", "HF/sto-3g", "--no-cache", "-o", str(serial),
                 "--quiet"]) == 0
    shutil.copytree(DATA / "falloff", tmp_path / "fo")
    study = tmp_path / "fo" / "study.toml"
    study.write_text(study.read_text() + UNCERTAIN.replace("samples = 600", "samples = 250"))
    folder = tmp_path / "many"
    tasks = (batch.study_tasks([DATA / "toy" / "study.toml", tmp_path / "none.toml"], folder)
             + batch.study_tasks([study], folder, kind="uncertainty")
             + batch.refine_tasks([src], folder, level="HF/sto-3g", options={"use_cache": False}))
    records = batch.run_batch(tasks, client, folder)
    assert [r.status for r in records] == ["done", "failed", "done", "done"], [r.error for r in records]
    assert read_species(folder / "h2o.toml").energy_J_per_mol == read_species(serial).energy_J_per_mol
    assert records[3].summary["energy_kJ_per_mol"] == read_species(serial).energy_J_per_mol / 1e3
    batch.write_summary(records, folder)

    seen: set = set()
    problems = schema.check_json(schema.DOCUMENTS["tstrate many: summary.json"],
                                 json.loads((folder / "summary.json").read_text()), seen)
    for path in (folder / "tasks").glob("*.json"):
        problems += schema.check_json(schema.DOCUMENTS["tstrate many: tasks/<name>.json"],
                                      json.loads(path.read_text()), seen)
    with open(folder / "summary.csv", newline="") as f:
        problems += schema.check_csv(schema.DOCUMENTS["tstrate many: summary.csv"], next(csv.reader(f)), seen)
    assert problems == []
    assert sorted(schema.entries_of(schema.BATCH_DOCUMENTS) - seen) == []
