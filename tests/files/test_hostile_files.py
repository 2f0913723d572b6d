"""Hostile and careless files: each is refused in one line, in bounded time and memory, never a hang.

Every case runs the command line in a child process with a timeout (a regression fails instead of hanging
the suite) and an address-space limit of 1 GiB (a regression that reads without bound fails instead of
filling the machine), and compares its standard error with the one line expected. ``{path}`` stands for
the file's path, ``{dir}`` for the folder the case was built in.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import pytest

from mediaplan.files import reading
from mediaplan.medium.errors import FitError

try:
    import resource
except ImportError:  # pragma: no cover - Windows
    resource = None

#: the address space a child may use [bytes]: mediaplan with numpy, scipy and pint needs about 0.5 GiB
#: of it; a file read without bound goes past it at once
MEMORY_LIMIT = 1024**3
#: seconds a case may take: a child process starts in 1 to 3 s on a loaded machine; before the limits,
#: these cases hung, or took minutes (100 000 components: over 120 s)
TIME_LIMIT = 60.0

HEAD = '[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n'
needs_fifo = pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes need a POSIX system")


def _limits() -> None:  # pragma: no cover - runs in the child
    if resource is not None:
        resource.setrlimit(resource.RLIMIT_AS, (MEMORY_LIMIT, MEMORY_LIMIT))


def run_cli(*args: str, cwd: Path | None = None, timeout: float = TIME_LIMIT) -> tuple[int, str, str, float]:
    """(exit status, stdout, stderr, seconds) of ``mediaplan ARGS`` in a child process with bounded memory."""
    start = time.monotonic()
    r = subprocess.run([sys.executable, "-m", "mediaplan", *args], capture_output=True, text=True, timeout=timeout,
                       cwd=cwd, preexec_fn=_limits if resource is not None else None, stdin=subprocess.DEVNULL)
    return r.returncode, r.stdout, r.stderr, time.monotonic() - start


def one_line(err: str) -> str:
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert "Traceback" not in err
    return lines[0]


# ---- building the hostile files ----------------------------------------------------------------------
def _plan(tmp: Path, body: str, name: str = "plan.toml") -> Path:
    p = tmp / name
    p.write_text(body, encoding="utf-8")
    return p


def _fifo(tmp: Path, name: str = "pipe.toml") -> Path:
    p = tmp / name
    os.mkfifo(p)
    return p


def _sparse(tmp: Path, name: str, size: int) -> Path:
    p = tmp / name
    with open(p, "wb") as fh:
        fh.truncate(size)
    return p


def _latin1(tmp: Path) -> Path:
    p = tmp / "latin1.toml"
    p.write_bytes((HEAD + '[plan]\nnotes = "25 \xb0C"\n').encode("latin-1"))  # a degree sign saved as Latin-1
    return p


def _many_components(tmp: Path) -> Path:
    lines = [HEAD, '[medium]\nvolume = "1 L"\n[medium.components]\n']
    lines += [f'c{i} = "1 mg/L"\n' for i in range(100_000)]
    return _plan(tmp, "".join(lines))


def _catalog(tmp: Path, text: str | None, name: str = "extra.yaml") -> Path:
    folder = tmp / "facility"
    (folder / "components").mkdir(parents=True)
    if text is None:
        os.mkfifo(folder / "components" / name)
    else:
        (folder / "components" / name).write_text(text, encoding="utf-8")
    return folder


def _large_catalog(tmp: Path) -> Path:
    folder = _catalog(tmp, "")
    _sparse(folder / "components", "extra.yaml", 5 * 1024 * 1024)
    return folder


def _entry(**fields: str) -> str:
    base = {"id": "foo", "name": '"foo salt"', "group": "salt", "molar_mass": "58.44",
            "species": '{"Na[+]": 1, "Cl[-]": 1}'}
    base.update(fields)
    return "components:\n  - " + "\n    ".join(f"{k}: {v}" for k, v in base.items()) + "\n"


def _laughs() -> str:
    lines = ["components:", "  - id: lol", "    name: lol", "    group: organic",
             '    notes_a: &a ["lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol"]']
    prev = "a"
    for n in "bcdefghi":  # 9 ** 9 = 387 million strings when written out
        lines.append(f"    notes_{n}: &{n} [" + ", ".join(["*" + prev] * 9) + "]")
        prev = n
    return "\n".join(lines) + "\n"


def _counts(tmp: Path, rows: int, name: str = "counts.csv") -> Path:
    p = tmp / name
    with open(p, "w", encoding="utf-8") as fh:
        fh.write("water_potential_mpa,plasmolysed,total\n")
        for i in range(rows):
            fh.write(f"-{0.2 + 0.2 * (i % 8):.1f},{i % 8},10\n")
    return p


@dataclass(frozen=True)
class Case:
    """One hostile input: how to build it, the command that meets it, and the one line it must give."""

    name: str
    build: Callable[[Path], Path]
    argv: Callable[[Path], list[str]]
    expected: str
    fifo: bool = False


def plan_cmd(p: Path) -> list[str]:
    return ["calc", "--plan", str(p)]


def catalog_cmd(p: Path) -> list[str]:
    return ["--catalog", str(p), "calc", "sucrose=1 g/L"]


def fit_cmd(p: Path) -> list[str]:
    return ["fit", str(p)]


BOUNDED = "mediaplan reads a {kind} only from a regular file"
CASES = [
    # ---- plans: what the file is ---------------------------------------------------------------------
    Case("plan-dev-zero", lambda t: Path("/dev/zero"), plan_cmd,
         "mediaplan: {path}: is a device, not a plan file (" + BOUNDED.format(kind="plan file") + ")"),
    Case("plan-fifo", _fifo, plan_cmd,
         "mediaplan: {path}: is a named pipe (FIFO), not a plan file (" + BOUNDED.format(kind="plan file") + ")",
         fifo=True),
    Case("plan-folder", lambda t: t, plan_cmd, "mediaplan: {path}: is a folder, not a plan file (name a file inside it)"),
    Case("plan-too-large", lambda t: _sparse(t, "huge.toml", 9 * 1024 * 1024), plan_cmd,
         "mediaplan: {path}: is too large for a plan file (9 MiB): the limit is 8 MiB (is this really a plan file?)"),
    Case("plan-latin1", _latin1, plan_cmd, "mediaplan: {path}:5: not UTF-8 text (save it as UTF-8; is this really a plan file?)"),
    # ---- plans: nesting and sizes --------------------------------------------------------------------
    Case("toml-nested-1000", lambda t: _plan(t, HEAD + "[medium]\nx = " + "[" * 1000 + "]" * 1000 + "\n"),
         plan_cmd, "mediaplan: {path}:5: tables and arrays nested more than 20 deep (is this really a plan file?)"),
    Case("toml-inline-tables-1000", lambda t: _plan(t, HEAD + "[medium]\nx = " + "{a = " * 1000 + "1" + "}" * 1000),
         plan_cmd, "mediaplan: {path}:5: tables and arrays nested more than 20 deep (is this really a plan file?)"),
    Case("toml-dotted-key-100000", lambda t: _plan(t, HEAD + "[medium]\n" + "a" + ".a" * 100_000 + " = 1\n"),
         plan_cmd, "mediaplan: {path}:5: tables and arrays nested more than 20 deep (is this really a plan file?)"),
    Case("toml-header-100000", lambda t: _plan(t, HEAD + "[a" + ".a" * 100_000 + "]\n"),
         plan_cmd, "mediaplan: {path}:4: tables and arrays nested more than 20 deep (is this really a plan file?)"),
    Case("version-5000-digits", lambda t: _plan(t, HEAD.replace('"1.0"', '"' + "9" * 5000 + '.0"') + "[medium]\n"),
         plan_cmd, "mediaplan: {path}:3: mediaplan.version: unreadable format version '" + "9" * 40 + "…' "
                   '(write version = "1.0")'),
    Case("components-100000", _many_components, lambda p: ["check", str(p)],
         "{path}: invalid: line 7: medium.components.c0: unknown component 'c0' (search the catalog by name, "
         "formula or CAS number)"),
    # ---- plans: the strict schema (issue 12) -----------------------------------------------------------
    Case("table-misspelt", lambda t: _plan(t, HEAD + '[medium]\nvolume = "1 L"\n\n[medium.component]\n'
                                              'sucrose = "30 g/L"\n'),
         plan_cmd, "mediaplan: {path}:7: medium.component: unknown table [medium.component] "
                   "(did you mean [medium.components]?)"),
    Case("key-misspelt", lambda t: _plan(t, HEAD + '[medium]\nvolume = "1 L"\ntemprature = "4 degC"\n'),
         plan_cmd, "mediaplan: {path}:6: medium.temprature: unknown key temprature in [medium] "
                   "(did you mean temperature?)"),
    Case("dotted-component-key", lambda t: _plan(t, HEAD + '[medium]\n[medium.components]\nsucrose = "30 g/L"\n'
                                                    'MgSO4.7H2O = "370 mg/L"\n'),
         plan_cmd, "mediaplan: {path}:7: medium.components.MgSO4.7H2O: MgSO4.7H2O is read as a table (an unquoted "
                   'dot splits a TOML key) (quote the name: "MgSO4.7H2O" = "370 mg/L")'),
    Case("table-at-top-misspelt", lambda t: _plan(t, HEAD + '[medium]\n[targte]\nvalue = "-1 MPa"\n'),
         plan_cmd, "mediaplan: {path}:5: targte: unknown table [targte] (did you mean [target]?)"),
    Case("level-key-misspelt", lambda t: _plan(t, HEAD + '[medium]\n[series]\nosmoticum = "mannitol"\n\n'
                                                  '[[series.levels]]\nlevel = 1\n\n[[series.levels]]\nlevel = 2\n'
                                                  'totl = 40\n'),
         plan_cmd, "mediaplan: {path}:13: series.levels[2].totl: unknown key totl in [series.levels] "
                   "(did you mean total?)"),
    # ---- catalog folders -----------------------------------------------------------------------------
    Case("catalog-billion-laughs", lambda t: _catalog(t, _laughs()), catalog_cmd,
         "mediaplan: {path}/components/extra.yaml:10: more than 200000 values with its aliases written out "
         "(an anchor repeated by aliases of aliases; write the entries out in full)"),
    Case("catalog-aliases-101", lambda t: _catalog(t, "components: []\nx: &x 1\ny: [" + ", ".join(["*x"] * 101)
                                                   + "]\n"),
         catalog_cmd, "mediaplan: {path}/components/extra.yaml:3: more than 100 aliases (*name) "
                      "(write the entries out in full)"),
    Case("catalog-nested-100000", lambda t: _catalog(t, "components: " + "[" * 100_000 + "]" * 100_000 + "\n"),
         catalog_cmd, "mediaplan: {path}/components/extra.yaml:1: mappings and lists nested more than 32 deep "
                      "(is this really a catalog file?)"),
    Case("catalog-fifo", lambda t: _catalog(t, None), catalog_cmd,
         "mediaplan: {path}/components/extra.yaml: is a named pipe (FIFO), not a catalog file ("
         + BOUNDED.format(kind="catalog file") + ")", fifo=True),
    Case("catalog-too-large", _large_catalog, catalog_cmd, "mediaplan: {path}/components/extra.yaml: is too large for a catalog file (5 MiB): the "
                      "limit is 4 MiB (is this really a catalog file?)"),
    Case("catalog-substance-list", lambda t: _catalog(t, _entry(substance="[1, 2]")), catalog_cmd,
         "mediaplan: {path}/components/extra.yaml:2: substance: foo: substance must be text, not a list "
         '(write it in quotes, like substance: "...")'),
    Case("catalog-molar-mass-tiny", lambda t: _catalog(t, _entry(molar_mass="1.0e-12")), catalog_cmd,
         "mediaplan: {path}/components/extra.yaml:2: molar_mass: foo: molar_mass 1e-12 g/mol is outside the "
         "plausible 1 to 1e+06 g/mol (no substance is lighter than a hydrogen atom, 1.008 g/mol; check the number "
         "and its unit)"),
    Case("catalog-molar-mass-0.001", lambda t: _catalog(t, _entry(molar_mass="0.001")), catalog_cmd,
         "mediaplan: {path}/components/extra.yaml:2: molar_mass: foo: molar_mass 0.001 g/mol is outside the "
         "plausible 1 to 1e+06 g/mol (no substance is lighter than a hydrogen atom, 1.008 g/mol; check the number "
         "and its unit)"),
    Case("catalog-volume-minus-5000", lambda t: _catalog(t, _entry(apparent_molar_volume="-5000")), catalog_cmd,
         "mediaplan: {path}/components/extra.yaml:2: apparent_molar_volume: foo: apparent_molar_volume -5000 "
         "cm3/mol is outside the plausible -200 to 2000 cm3/mol (solutes lie between a few tens below zero and a "
         "few hundred cm3/mol, polymers at most 1.5 cm3 per g; check the number and its unit)"),
    Case("catalog-hydrate-inf", lambda t: _catalog(t, _entry(hydrate_water=".inf")), catalog_cmd,
         "mediaplan: {path}/components/extra.yaml:2: hydrate_water: foo: hydrate_water inf mol water per mol is "
         "outside the plausible 0 to 20 mol water per mol (the most hydrated common salts carry up to 18 waters; "
         "check the number and its unit)"),
    Case("catalog-species-count-inf", lambda t: _catalog(t, _entry(species='{"Na[+]": .inf, "Cl[-]": .inf}')),
         catalog_cmd, "mediaplan: {path}/components/extra.yaml:2: species: foo: count of Na[+] must be a positive "
                      "number"),
    # ---- counts files --------------------------------------------------------------------------------
    Case("counts-million-rows", lambda t: _counts(t, 1_000_000), fit_cmd,
         "mediaplan: {path}:10002: more than 10000 rows of counts (a counts file holds one row per counted "
         "sample; is this really one?)"),
    Case("counts-fifo", lambda t: _fifo(t, "counts.csv"), fit_cmd,
         "mediaplan: {path}: is a named pipe (FIFO), not a counts file (" + BOUNDED.format(kind="counts file") + ")",
         fifo=True),
    Case("counts-dev-zero", lambda t: Path("/dev/zero"), fit_cmd,
         "mediaplan: {path}: is a device, not a counts file (" + BOUNDED.format(kind="counts file") + ")"),
    Case("counts-long-line", lambda t: _plan(t, "water_potential_mpa,plasmolysed,total\n-1," + "1" * 1_100_000
                                             + ",10\n", "long.csv"),
         fit_cmd, "mediaplan: {path}:2: line longer than 1 MiB (is this really a counts file?)"),
    Case("counts-potentials-1e-301", lambda t: _plan(t, "water_potential_mpa,plasmolysed,total\n-1e-301,0,10\n"
                                                     "-2e-301,3,10\n-3e-301,7,10\n-4e-301,10,10\n", "tiny.csv"),
         fit_cmd, "mediaplan: {path}:2: water_potential_mpa: a water potential of -1e-301 MPa is too close to zero "
                  "to be told from pure water (check the number and its unit; write 0 for pure water)"),
]


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_hostile_file_is_one_line_in_bounded_time_and_memory(case, tmp_path):
    if case.fifo and not hasattr(os, "mkfifo"):
        pytest.skip("named pipes need a POSIX system")
    if "dev-zero" in case.name and not Path("/dev/zero").exists():
        pytest.skip("no /dev/zero here")
    target = case.build(tmp_path)
    code, out, err, seconds = run_cli(*case.argv(target))
    expected = case.expected.format(path=target, dir=tmp_path)
    if case.argv(target)[0] == "check":  # check prints its verdict on standard output and exits 1
        assert code == 1, err
        assert out.strip() == expected
    else:
        assert code == 2, (out, err)
        assert one_line(err) == expected
    assert seconds < TIME_LIMIT


# ---- check: a verdict for every plan, whatever one of them holds ------------------------------------------
@needs_fifo
def test_check_gives_each_plan_a_verdict_and_json_always_prints(tmp_path):
    good = _plan(tmp_path, HEAD + '[medium]\nvolume = "1 L"\n[medium.components]\nsucrose = "30 g/L"\n', "good.toml")
    nested = _plan(tmp_path, HEAD + "[medium]\nx = " + "[" * 1000 + "]" * 1000 + "\n", "nested.toml")
    pipe = _fifo(tmp_path)
    typo = _plan(tmp_path, HEAD + '[medium]\ntemprature = "4 degC"\n', "typo.toml")
    newer = _plan(tmp_path, HEAD.replace('"1.0"', '"1.3"') + '[medium]\nvolume = "1 L"\nshelf = "B"\n'
                  '[medium.components]\nsucrose = "30 g/L"\n[labels]\ncolour = "green"\n', "newer.toml")
    plans = [good, nested, pipe, Path("/dev/zero"), tmp_path, typo, newer, good]
    code, out, err, _ = run_cli("check", *map(str, plans))
    assert code == 1
    verdicts = [ln.split(": ")[1] for ln in out.strip().splitlines()]
    assert verdicts == ["ok", "invalid", "invalid", "invalid", "invalid", "invalid", "ok", "ok"], out
    code, out, err, _ = run_cli("check", "--json", *map(str, plans))
    assert code == 1
    results = json.loads(out)
    assert [r["path"] for r in results] == [str(p) for p in plans]
    assert "nested more than 20 deep" in results[1]["reason"]
    assert "unknown key temprature in [medium] (did you mean temperature?)" in results[5]["reason"]
    # a plan of a newer minor version is valid, and says what it kept without reading it
    assert results[6]["notes"] == ["plan format 1.3 is newer than this mediaplan writes (1.0): [labels], "
                                   "medium.shelf kept as written, not used"]


def test_check_survives_an_unexpected_error_in_one_plan(tmp_path, monkeypatch, capsys):
    from mediaplan.cli.main import main
    from mediaplan.medium import evaluate as evaluate_module

    real = evaluate_module.evaluate
    a = _plan(tmp_path, HEAD + '[medium]\n[medium.components]\nsucrose = "30 g/L"\n', "a.toml")
    b = _plan(tmp_path, HEAD + '[medium]\n[medium.components]\nmannitol = "30 g/L"\n', "b.toml")

    def flaky(recipe, catalog, *args, **kw):
        if any(cid == "mannitol" for cid, _ in recipe.amounts):
            raise ZeroDivisionError("simulated defect")
        return real(recipe, catalog, *args, **kw)

    monkeypatch.setattr(evaluate_module, "evaluate", flaky)
    assert main(["check", "--json", str(b), str(a)]) == 1
    results = json.loads(capsys.readouterr().out)
    assert [r["status"] for r in results] == ["invalid", "ok"]
    assert results[0]["reason"].startswith("unexpected error ZeroDivisionError: simulated defect; details in ")
    log = Path(os.environ["MEDIAPLAN_STATE_DIR"]) / "errors.log"
    assert "ZeroDivisionError: simulated defect" in log.read_text(encoding="utf-8")


# ---- the error log rotates ----------------------------------------------------------------------------
def test_error_log_rotates_keeping_one_old_copy(monkeypatch, tmp_path, capsys):
    from mediaplan.cli import main as cli

    monkeypatch.setenv("MEDIAPLAN_STATE_DIR", str(tmp_path / "state"))
    monkeypatch.setattr(cli, "LOG_MAX_BYTES", 4000)  # a small log, so that a few errors fill it
    for i in range(30):
        try:
            raise RuntimeError(f"defect number {i}")
        except RuntimeError as exc:
            assert cli.report_crash(exc) == 1
    log = tmp_path / "state" / "errors.log"
    old = tmp_path / "state" / "errors.log.1"
    assert log.stat().st_size <= 4000 and old.stat().st_size <= 4000
    assert sorted(p.name for p in log.parent.iterdir()) == ["errors.log", "errors.log.1"]
    assert "defect number 29" in log.read_text(encoding="utf-8")
    assert "defect number 0\n" not in log.read_text(encoding="utf-8") + old.read_text(encoding="utf-8")
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 30 and err[-1].endswith(f"details in {log}")


def test_one_huge_error_is_logged_cut_to_its_head_and_tail(monkeypatch, tmp_path, capsys):
    from mediaplan.cli import main as cli

    monkeypatch.setenv("MEDIAPLAN_STATE_DIR", str(tmp_path / "state"))
    cli.report_crash(ValueError("x" * 500_000 + " the end"))
    text = (tmp_path / "state" / "errors.log").read_text(encoding="utf-8")
    assert len(text.encode()) <= cli.LOG_ENTRY_MAX + 100 and "[... cut ...]" in text and text.endswith("the end\n")
    line = capsys.readouterr().err.strip()
    assert "\n" not in line and len(line) < 600


@needs_fifo
def test_a_fifo_where_the_log_should_be_is_never_waited_on(monkeypatch, tmp_path, capsys):
    from mediaplan.cli import main as cli

    state = tmp_path / "state"
    state.mkdir()
    os.mkfifo(state / "errors.log")
    monkeypatch.setenv("MEDIAPLAN_STATE_DIR", str(state))
    assert cli.report_crash(RuntimeError("simulated defect")) == 1
    assert capsys.readouterr().err.strip().endswith("details in (the log could not be written)")


# ---- the reading helper itself --------------------------------------------------------------------------
def test_limits_are_stated_and_ordered():
    # the numbers the README and the module docstring state
    assert reading.LIMITS["plan"].limit == 8 * 1024 * 1024
    assert reading.LIMITS["catalog"].limit == 4 * 1024 * 1024
    assert reading.LIMITS["counts"].limit == 16 * 1024 * 1024
    assert reading.COUNTS_MAX_ROWS == 10_000 and reading.TOML_MAX_DEPTH == 20 and reading.YAML_MAX_DEPTH == 32


def test_a_file_over_its_limit_is_refused_before_it_is_read(tmp_path, monkeypatch):
    p = tmp_path / "plan.toml"
    p.write_bytes(b"x" * 100)
    monkeypatch.setitem(reading.LIMITS, "plan", reading.Kind("plan file", 50, reading.LIMITS["plan"].error,
                                                             "", "no such plan file"))
    with pytest.raises(reading.LIMITS["plan"].error, match="too large for a plan file"):
        reading.read_bytes(p, "plan")


def test_iter_lines_streams_and_names_the_line_of_a_bad_byte(tmp_path):
    p = tmp_path / "c.csv"
    p.write_bytes(b"\xef\xbb\xbfa,b\r\nc,d\n\xffe\n")
    lines = reading.iter_lines(p, "counts")
    assert next(lines) == (1, "a,b") and next(lines) == (2, "c,d")
    with pytest.raises(FitError, match="not UTF-8 text") as exc:
        next(lines)
    assert exc.value.line == 3


def test_toml_nesting_ignores_brackets_in_strings_and_comments():
    text = 'a = "[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[["\n# {{{{{{{{{{{{{{{{{{{{{{{{{{{{{{{{{{{{{\nb = \'\'\'\n' + "[" * 40 + \
        "\n'''\nc = [[1.5, 2.5], [3.5]]\n"
    assert reading.toml_nesting(text) is None
    assert reading.toml_nesting(text + "d = " + "[" * 21 + "]" * 21 + "\n") == 7
    assert reading.toml_dotted_key_line("x" + ".y" * 19 + " = 1\n") is None  # 20 parts: at the limit
    assert reading.toml_dotted_key_line("x" + ".y" * 20 + " = 1\n") == 1


def test_duplicate_components_are_found_in_linear_time():
    from mediaplan.files import planfile

    # 100 000 distinct keys, read without a catalog (as check reads a plan first): under a second of
    # checking on top of the TOML parser; a quadratic check took minutes
    text = HEAD + '[medium]\n[medium.components]\n' + "".join(f'c{i} = "{i % 7 + 1} mg/L"\n' for i in range(100_000))
    start = time.monotonic()
    plan = planfile.loads(text)
    assert len(plan.recipe.amounts) == 100_000
    assert time.monotonic() - start < 30


def test_test_caches_belong_to_this_worker():
    # conftest gives each pytest-xdist worker its own cache folders before any library is imported
    worker = os.environ.get("PYTEST_XDIST_WORKER", "main")
    for var in ("XDG_CACHE_HOME", "MEDIAPLAN_CACHE_DIR"):
        assert f"mediaplan-test-caches-{worker}-" in os.environ[var]
