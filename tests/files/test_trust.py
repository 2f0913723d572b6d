"""Nothing a user types or opens crashes mediaplan or loses a plan."""

from __future__ import annotations

import errno
import json
import os
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from mediaplan.cli import main as cli
from mediaplan.files import planfile
from mediaplan.files.catalog import load_catalog
from mediaplan.files.planfile import Plan
from mediaplan.medium.errors import ConflictError, MediaplanError, PlanFileError
from mediaplan.medium.recipe import Recipe

BAD = Path(__file__).resolve().parents[1] / "data" / "bad"


# ---- the corpus of broken files and the one line each must produce ----------------------------
def _expected(path: Path) -> str:
    return path.with_suffix(".expected").read_text().strip() if path.suffix else \
        Path(str(path) + ".expected").read_text().strip()


@pytest.mark.parametrize("path", sorted(BAD.glob("*.toml")), ids=lambda p: p.stem)
def test_bad_plan_corpus(path, capsys):
    code = cli.main(["calc", "--plan", str(path)])
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert err == _expected(path).replace("{path}", str(path))
    assert "\n" not in err and "Traceback" not in err


@pytest.mark.parametrize("folder", sorted(p for p in BAD.glob("catalog_*") if p.is_dir()), ids=lambda p: p.name)
def test_bad_catalog_corpus(folder, capsys):
    code = cli.main(["--catalog", str(folder), "calc", "sucrose=1 g/L"])
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert err == Path(str(folder) + ".expected").read_text().strip().replace("{path}", str(folder))
    assert "\n" not in err


# ---- unexpected errors are logged, reported in one line --------------------------------------------
def test_unexpected_error_is_logged_not_shown(monkeypatch, capsys, tmp_path):
    monkeypatch.setenv("MEDIAPLAN_STATE_DIR", str(tmp_path / "state"))
    import mediaplan.cli.commands.calc as calc

    def boom(args):
        raise RuntimeError("simulated defect")

    monkeypatch.setattr(calc, "run", boom)
    code = cli.main(["calc", "sucrose=1 g/L"])
    err = capsys.readouterr().err.strip()
    assert code == 1
    assert "simulated defect" in err and "errors.log" in err and "\n" not in err
    log = (tmp_path / "state" / "errors.log").read_text()
    assert "Traceback" in log and "RuntimeError: simulated defect" in log


# ---- fault injection: a save interrupted anywhere leaves the old or the new file whole -------------
def _faulty_files(monkeypatch, method, exc_factory):
    """Make files opened with os.fdopen fail in ``method`` (write half the data first)."""
    real_fdopen = os.fdopen

    class Faulty:
        def __init__(self, fh):
            self.fh = fh

        def __enter__(self):
            return self

        def __exit__(self, *a):
            self.fh.close()

        def write(self, b):
            if method == "write":
                self.fh.write(b[: len(b) // 2])
                raise exc_factory()
            return self.fh.write(b)

        def flush(self):
            if method == "flush":
                raise exc_factory()
            return self.fh.flush()

        def fileno(self):
            return self.fh.fileno()

    monkeypatch.setattr(os, "fdopen", lambda fd, *a, **k: Faulty(real_fdopen(fd, *a, **k)))


def _plan_file(tmp_path, catalog):
    p = tmp_path / "medium.toml"
    planfile.write(Plan(recipe=Recipe().with_amount("sucrose", "30 g/L"), title="old"), p)
    return p, p.read_bytes(), planfile.read(p, catalog=catalog)


@pytest.mark.parametrize("step", ["write", "flush", "fsync", "backup", "replace", "dirsync"])
def test_interrupted_save_keeps_a_whole_file(step, tmp_path, monkeypatch, catalog):
    p, old, plan = _plan_file(tmp_path, catalog)
    plan.title = "new"
    new = planfile.dumps(plan).encode()

    class Crash(BaseException):
        """A simulated power cut: not an Exception, so nothing downstream may swallow it."""

    real_replace, real_fsync = os.replace, os.fsync
    if step in ("write", "flush"):
        _faulty_files(monkeypatch, step, Crash)
    elif step == "fsync":
        monkeypatch.setattr(os, "fsync", lambda fd: (_ for _ in ()).throw(Crash()))
    elif step == "backup":
        real = planfile._replace_with

        def crash_on_backup(path, data, **kw):
            if path.name.endswith(".bak"):
                raise Crash()
            return real(path, data, **kw)

        monkeypatch.setattr(planfile, "_replace_with", crash_on_backup)
    elif step == "replace":
        monkeypatch.setattr(os, "replace", lambda a, b: (_ for _ in ()).throw(Crash()))
    elif step == "dirsync":
        monkeypatch.setattr(planfile, "_fsync_dir", lambda d: (_ for _ in ()).throw(Crash()))
    with pytest.raises(Crash):
        planfile.write(plan)
    monkeypatch.setattr(os, "replace", real_replace)
    monkeypatch.setattr(os, "fsync", real_fsync)
    assert p.read_bytes() in (old, new)
    planfile.loads(p.read_text(), catalog=catalog)  # whole and readable
    assert not [f for f in tmp_path.iterdir() if f.name.endswith(".tmp")], "temp file left behind"


def test_disk_full_and_read_only_folder(tmp_path, monkeypatch, catalog):
    p, old, plan = _plan_file(tmp_path, catalog)
    plan.title = "new"
    _faulty_files(monkeypatch, "write", lambda: OSError(errno.ENOSPC, "No space left on device"))
    with pytest.raises(PlanFileError, match="No space left"):
        planfile.write(plan)
    monkeypatch.undo()
    assert p.read_bytes() == old

    import tempfile

    def denied(*a, **k):
        raise PermissionError(errno.EACCES, "Permission denied")

    monkeypatch.setattr(tempfile, "mkstemp", denied)
    with pytest.raises(PlanFileError, match="no permission"):
        planfile.write(plan)
    monkeypatch.undo()
    assert p.read_bytes() == old


def test_saved_file_keeps_permissions(tmp_path, catalog):
    p, _, plan = _plan_file(tmp_path, catalog)
    os.chmod(p, 0o640)
    plan.title = "new"
    planfile.write(plan)
    assert (p.stat().st_mode & 0o777) == 0o640


def test_two_processes_saving_the_same_plan(tmp_path, catalog):
    """Both open the plan; the first saves; the second is refused and the first one's work survives."""
    p, _, _ = _plan_file(tmp_path, catalog)
    script = textwrap.dedent(f"""
        import sys, time
        from pathlib import Path
        from mediaplan.files import planfile
        from mediaplan.medium.errors import ConflictError
        plan = planfile.read({str(p)!r})
        Path(sys.argv[2]).write_text("opened")
        while not Path(sys.argv[3]).exists():
            time.sleep(0.01)
        plan.title = sys.argv[1]
        try:
            planfile.write(plan)
            print("saved")
        except ConflictError as exc:
            print("refused:", exc)
    """)
    a_open, b_open, go_a, go_b = (tmp_path / n for n in ("a_open", "b_open", "go_a", "go_b"))
    pa = subprocess.Popen([sys.executable, "-c", script, "first", str(a_open), str(go_a)], stdout=subprocess.PIPE,
                          text=True)
    pb = subprocess.Popen([sys.executable, "-c", script, "second", str(b_open), str(go_b)], stdout=subprocess.PIPE,
                          text=True)
    import time

    deadline = time.time() + 60
    while not (a_open.exists() and b_open.exists()) and time.time() < deadline:
        time.sleep(0.02)
    go_a.write_text("go")
    out_a = pa.communicate(timeout=60)[0]
    go_b.write_text("go")
    out_b = pb.communicate(timeout=60)[0]
    assert out_a.strip() == "saved"
    assert out_b.startswith("refused:") and "changed on disk" in out_b
    assert 'title = "first"' in p.read_text()


# ---- fuzzing: every input ends in a result or a MediaplanError -------------------------------------
toml_values = st.recursive(
    st.one_of(st.text(max_size=12), st.integers(-5, 10**6), st.floats(allow_nan=True), st.booleans()),
    lambda inner: st.one_of(st.lists(inner, max_size=3), st.dictionaries(st.text(max_size=8), inner, max_size=3)),
    max_leaves=10,
)
amount_texts = st.one_of(
    st.sampled_from(["30 g/L", "0 g/L", "20 mM", "0.5 mol/kg", "-1 g/L", "nan mM", "1e400 g/L", "3 %", "x", ""]),
    st.text(max_size=12))
component_keys = st.one_of(st.sampled_from(["sucrose", "KNO3", "mannitol", "CaCl2·2H2O", "peg8000", "agar",
                                            "nosuch", "glycerol"]), st.text(max_size=10))


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.fixed_dictionaries({
    "mediaplan": st.one_of(st.just({"format": "mediaplan-plan", "version": "1.0"}), toml_values),
    "medium": st.one_of(
        st.fixed_dictionaries({
            "volume": st.one_of(st.sampled_from(["1 L", "0 L", "2 kg", "500 mL"]), st.text(max_size=6)),
            "temperature": st.one_of(st.sampled_from(["25 degC", "99 degC", "4 degC"]), st.text(max_size=6)),
            "strength": st.one_of(st.floats(), st.integers(-3, 30), st.text(max_size=3)),
            "components": st.dictionaries(component_keys, st.one_of(amount_texts, toml_values), max_size=4),
        }),
        toml_values),
    "cells": st.one_of(st.none(), st.dictionaries(st.sampled_from(["osmolality", "potential", "tolerance"]),
                                                   toml_values, max_size=2)),
}))
def test_plan_parser_fuzz(catalog, data):
    import tomli_w

    from mediaplan.medium.evaluate import evaluate

    data = {k: v for k, v in data.items() if v is not None}
    try:
        text = tomli_w.dumps(data)
    except (TypeError, ValueError):
        return  # not representable as TOML: nothing a user could write
    try:
        plan = planfile.loads(text, file="fuzz.toml", catalog=catalog)
        evaluate(plan.recipe, catalog)
    except MediaplanError as exc:
        assert "\n" not in str(exc)


@settings(max_examples=600, deadline=None)
@given(st.text(max_size=200))
def test_plan_text_fuzz(catalog, text):
    try:
        planfile.loads(text, file="fuzz.toml", catalog=catalog)
    except MediaplanError as exc:
        assert "\n" not in str(exc)


yaml_scalars = st.one_of(st.text(max_size=10), st.integers(-10, 1000), st.floats(allow_nan=True), st.booleans(),
                         st.none())


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(st.fixed_dictionaries({}, optional={
    "id": st.one_of(st.sampled_from(["foo", "bar", "Bad Id", "sucrose"]), yaml_scalars),
    "name": yaml_scalars, "group": st.one_of(st.sampled_from(["salt", "carbon", "nope"]), yaml_scalars),
    "molar_mass": yaml_scalars, "hydrate_water": yaml_scalars, "aliases": st.one_of(st.lists(yaml_scalars), yaml_scalars),
    "species": st.one_of(st.dictionaries(st.sampled_from(["Na[+]", "Cl[-]", "sucrose", "X+"]), yaml_scalars),
                         yaml_scalars),
    "solubility": yaml_scalars, "reflection_coefficient": yaml_scalars, "source": yaml_scalars,
}), max_size=4))
def test_catalog_loader_fuzz(tmp_path_factory, entries):
    import yaml

    folder = tmp_path_factory.mktemp("cat")
    (folder / "components").mkdir()
    (folder / "components" / "x.yaml").write_text(yaml.safe_dump({"components": entries}))
    try:
        load_catalog([folder])
    except MediaplanError as exc:
        assert "\n" not in str(exc)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.text(max_size=300))
def test_catalog_yaml_text_fuzz(tmp_path_factory, text):
    folder = tmp_path_factory.mktemp("cat")
    (folder / "components").mkdir()
    (folder / "components" / "x.yaml").write_text(text)
    try:
        load_catalog([folder])
    except MediaplanError as exc:
        assert "\n" not in str(exc)


argv_items = st.one_of(
    st.sampled_from(["calc", "solve", "series", "fit", "prep", "check", "diff", "catalog", "--json", "--base",
                     "ms1962", "--strength", "0.5", "-1", "--temperature", "25 degC", "70 degC", "sucrose=30 g/L",
                     "KNO3=abc", "nosuch=1 g/L", "=", "--target", "-0.8 MPa", "--with", "mannitol", "--steps", "3",
                     "--from", "-0.2 MPa", "--to", "-1.0 MPa", "--volume", "0 L", "search", "show", "sucrose",
                     "plans/shoot_multiplication.toml", "--plan", "--cells", "550 mOsm/kg", "--link", "probit"]),
    st.text(max_size=8))


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(argv_items, max_size=7))
def test_cli_fuzz(capsys, argv):
    """Random command lines: an exit status, never an uncaught exception (exit 1 = a logged defect)."""
    if argv and argv[0] in ("open",) or not argv:
        return  # the terminal app is tested by its pilot tests
    try:
        code = cli.main(argv)
    except SystemExit as exc:  # argparse usage errors
        code = exc.code
    out = capsys.readouterr()
    assert code in (0, 1, 2), (argv, out.err)
    assert code != 1 or "unexpected" not in out.err, (argv, out.err)
    assert "Traceback" not in out.err
    if code == 0 and "--json" in argv and out.out.strip().startswith("{"):
        json.loads(out.out)


def test_conflict_error_is_a_mediaplan_error():
    assert issubclass(ConflictError, MediaplanError)
