"""Commands that write files do what they say: -o with --json writes, contradictions are refused, nothing a
user wrote is replaced unasked, edits of a plan keep its comments, diff says by its exit status whether
plans differ, and the app without a terminal says so instead of hanging."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from mediaplan.cli.main import main

ROOT = Path(__file__).resolve().parents[2]
PLAN = ROOT / "plans" / "shoot_multiplication.toml"


@pytest.fixture
def mine(tmp_path):
    p = tmp_path / "mine.toml"
    p.write_bytes(PLAN.read_bytes())
    return p


def _one_line(err: str) -> str:
    assert err.count("\n") == 1 and err.startswith("mediaplan: "), err
    return err


# ---- -o with --json, contradictory options ----------------------------------------------------------
@pytest.mark.parametrize("command", [["calc", "--plan"], ["prep"]], ids=["calc", "prep"])
def test_o_with_json_writes_the_json_it_would_print(capsys, tmp_path, mine, command):
    assert main([*command, str(mine), "--json"]) == 0
    printed = capsys.readouterr().out
    out = tmp_path / "out.json"
    assert main([*command, str(mine), "--json", "-o", str(out)]) == 0
    captured = capsys.readouterr()
    assert captured.out == "" and captured.err.strip().endswith(f"wrote {out}")
    assert out.read_text(encoding="utf-8") == printed and json.loads(printed)


@pytest.mark.parametrize("argv", [
    ["calc", "sucrose=30 g/L", "--json", "--format", "md"],
    ["calc", "sucrose=30 g/L", "--format", "csv", "--json"],
    ["prep", "sucrose=30 g/L", "--json", "--format", "html"],
], ids=lambda a: " ".join(a[:1] + a[2:]))
def test_json_and_a_format_together_are_one_line_usage_errors(capsys, argv):
    with pytest.raises(SystemExit) as info:
        main(argv)
    assert info.value.code == 2
    err = _one_line(capsys.readouterr().err)
    assert "--format" in err and "--json" in err and "not allowed" in err


# ---- -o never replaces unasked ----------------------------------------------------------------------
@pytest.mark.parametrize("command", [["calc", "--plan"], ["prep"]], ids=["calc", "prep"])
def test_o_onto_the_plan_read_is_refused_in_one_line_even_when_forced(capsys, mine, command):
    before = mine.read_bytes()
    for extra in ([], ["--force"], ["--json"]):
        assert main([*command, str(mine), "-o", str(mine), *extra]) == 2
        err = _one_line(capsys.readouterr().err)
        assert f"{mine}: is a file this command reads" in err
    assert mine.read_bytes() == before
    assert sorted(f.name for f in mine.parent.iterdir()) == ["mine.toml"]


def test_o_onto_an_existing_file_needs_force(capsys, tmp_path, mine):
    out = tmp_path / "sheet.md"
    out.write_text("notes of my own", encoding="utf-8")
    assert main(["prep", str(mine), "-o", str(out)]) == 2
    err = _one_line(capsys.readouterr().err)
    assert "already exists" in err and "--force" in err
    assert out.read_text(encoding="utf-8") == "notes of my own"
    assert main(["prep", str(mine), "-o", str(out), "--force"]) == 0
    assert out.read_text(encoding="utf-8").startswith("# Shoot multiplication")


@pytest.mark.skipif(os.name != "posix", reason="symbolic links and devices as POSIX has them")
def test_o_onto_a_link_writes_its_target_and_never_a_device(capsys, tmp_path, mine):
    real = tmp_path / "real.md"
    real.write_text("old", encoding="utf-8")
    link = tmp_path / "link.md"
    link.symlink_to(real)
    assert main(["prep", str(mine), "-o", str(link), "--force"]) == 0
    assert link.is_symlink() and real.read_text(encoding="utf-8").startswith("# Shoot multiplication")
    capsys.readouterr()
    assert main(["calc", "--plan", str(mine), "-o", "/dev/null", "--force"]) == 2
    assert "is a character device, not a regular file" in _one_line(capsys.readouterr().err)


def test_solve_write_to_a_folder_is_one_clear_line(capsys, tmp_path, mine):
    folder = tmp_path / "results"
    folder.mkdir()
    code = main(["solve", str(mine), "--target", "-0.8 MPa", "--with", "mannitol", "--write", str(folder)])
    assert code == 2
    err = _one_line(capsys.readouterr().err)
    assert f"{folder}: is a folder, not a file" in err and "give a file name inside it" in err
    assert list(folder.iterdir()) == []


def test_solve_write_refuses_an_existing_file_without_force(capsys, tmp_path, mine):
    out = tmp_path / "solved.toml"
    out.write_text("# someone's plan\n", encoding="utf-8")
    argv = ["solve", str(mine), "--target", "-0.8 MPa", "--with", "mannitol", "--write", str(out)]
    assert main(argv) == 2
    assert "already exists" in _one_line(capsys.readouterr().err)
    assert out.read_text(encoding="utf-8") == "# someone's plan\n"


def test_two_solves_writing_one_new_plan_cannot_both_succeed(tmp_path, mine):
    out = tmp_path / "new.toml"
    argv = [sys.executable, "-m", "mediaplan", "solve", str(mine), "--target", "-0.8 MPa", "--with", "mannitol",
            "--write", str(out)]
    procs = [subprocess.Popen(argv, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, cwd=ROOT)
             for _ in range(2)]
    results = [p.communicate(timeout=120) + (p.returncode,) for p in procs]
    assert sorted(r[2] for r in results) == [0, 2], results
    loser = next(r for r in results if r[2] == 2)
    assert "already exists" in loser[1] or "created by another program meanwhile" in loser[1]
    assert sum("written: " in r[0] for r in results) == 1


# ---- edits keep what the user wrote -----------------------------------------------------------------
COMMENTED = PLAN.read_text(encoding="utf-8").replace(
    '[medium.components]\n', '# QA: checked by the facility, 2024-05-02\n[medium.components]\n').replace(
    'version = "1.0"', 'version = "1.4"').replace('bap = "1 mg/L"', 'BAP  =  "1 mg/L"   # cytokinin')


def test_check_stamp_edits_in_place_and_says_what_it_wrote(capsys, tmp_path):
    p = tmp_path / "qa.toml"
    p.write_text(COMMENTED, encoding="utf-8")
    assert main(["check", "--stamp", str(p)]) == 0
    captured = capsys.readouterr()
    assert captured.out == f"{p}: ok (1 warning: pitzer_default)\n"
    assert f"note: {p}: [provenance] written (" in captured.err and "components and 1 medium" in captured.err
    text = p.read_text(encoding="utf-8")
    assert text.startswith(COMMENTED) and "\n[provenance]\n" in text  # every line kept, the table added after
    assert (tmp_path / "qa.toml.bak").read_text(encoding="utf-8") == COMMENTED
    # a second stamp on the same day has nothing to change, says so, and makes no second backup
    assert main(["check", "--stamp", str(p)]) == 0
    assert "already up to date" in capsys.readouterr().err
    assert p.read_text(encoding="utf-8") == text
    assert sorted(f.name for f in tmp_path.iterdir()) == ["qa.toml", "qa.toml.bak"]


def test_check_stamp_of_a_read_only_plan_is_refused_and_the_batch_goes_on(capsys, tmp_path):
    """The refusal goes by the file's mode (no write bit set), so it holds for every user, root too."""
    a, b = tmp_path / "a.toml", tmp_path / "b.toml"
    a.write_text(COMMENTED, encoding="utf-8")
    b.write_text(COMMENTED, encoding="utf-8")
    os.chmod(a, 0o444)
    try:
        assert main(["check", "--stamp", str(a), str(b)]) == 2
        captured = capsys.readouterr()
        assert f"mediaplan: {a}: not stamped: is read-only" in captured.err
        assert captured.out.count(": ok") == 2 and "[provenance]" in b.read_text(encoding="utf-8")
        assert a.read_text(encoding="utf-8") == COMMENTED
    finally:
        os.chmod(a, 0o644)


def test_fit_write_cells_edits_the_plan_in_place(capsys, tmp_path):
    p = tmp_path / "cells.toml"
    p.write_text(COMMENTED, encoding="utf-8")
    assert main(["fit", str(ROOT / "plans" / "demo_plasmolysis_counts.csv"), "--write-cells", str(p)]) == 0
    text = p.read_text(encoding="utf-8")
    assert text.startswith(COMMENTED) and "\n[cells]\n" in text
    assert f"saved cell reference in {p}" in capsys.readouterr().err


def test_solve_written_back_into_its_input_keeps_its_comments(capsys, tmp_path):
    p = tmp_path / "solve.toml"
    p.write_text(COMMENTED, encoding="utf-8")
    argv = ["solve", str(p), "--target", "-0.8 MPa", "--with", "mannitol", "--write", str(p), "--force"]
    assert main(argv) == 0
    text = p.read_text(encoding="utf-8")
    assert "# QA: checked by the facility, 2024-05-02" in text and 'version = "1.4"' in text
    assert 'BAP  =  "1 mg/L"   # cytokinin' in text and "mannitol = " in text and "\n[target]\n" in text


# ---- diff's exit status -----------------------------------------------------------------------------
def test_diff_exits_1_when_plans_differ_and_0_when_they_are_the_same(capsys, mine):
    other = ROOT / "plans" / "rooting_half_strength.toml"
    assert main(["diff", str(mine), str(other)]) == 1
    assert "Components" in capsys.readouterr().out  # the differences are still printed
    assert main(["diff", "--json", str(mine), str(other)]) == 1
    assert json.loads(capsys.readouterr().out)["same_medium"] is False
    assert main(["diff", str(mine), str(PLAN)]) == 0
    assert "Components: no differences" in capsys.readouterr().out
    assert main(["diff", "--json", str(mine), str(PLAN)]) == 0
    assert json.loads(capsys.readouterr().out)["same_medium"] is True


def test_diff_help_documents_its_exit_status(capsys):
    with pytest.raises(SystemExit):
        main(["diff", "--help"])
    out = " ".join(capsys.readouterr().out.split())
    assert "Exit status: 0 when the two plans make the same medium" in out and "1 when they differ" in out


# ---- no terminal --------------------------------------------------------------------------------------
@pytest.mark.parametrize("argv", [[], ["open"]], ids=["no command", "open"])
def test_the_app_without_a_terminal_is_one_line_and_exit_2(argv):
    r = subprocess.run([sys.executable, "-m", "mediaplan", *argv], stdin=subprocess.DEVNULL, capture_output=True,
                       text=True, timeout=60, cwd=ROOT)
    assert r.returncode == 2 and r.stdout == ""
    assert r.stderr.count("\n") == 1 and "needs a terminal" in r.stderr and "mediaplan --help" in r.stderr
