"""Every command's text reaches the terminal or ``-o FILE`` the same way (files/output.write_output)."""

from __future__ import annotations

import pytest

from mediaplan.cli.main import main


@pytest.mark.parametrize("argv", [
    ["calc", "--plan", "plans/protoplast_wash.toml"],
    ["solve", "plans/shoot_multiplication.toml", "--target", "-0.8 MPa", "--with", "mannitol"],
    ["series", "--from", "-0.2 MPa", "--to", "-1.0 MPa", "--steps", "3", "--with", "mannitol"],
    ["series", "--from", "-0.2 MPa", "--to", "-1.0 MPa", "--steps", "3", "--with", "mannitol", "--csv"],
    ["fit", "plans/demo_plasmolysis_counts.csv"],
    ["prep", "plans/protoplast_wash.toml"],
    ["catalog", "search", "sucrose"],
    ["catalog", "show", "sucrose"],
    ["check", "plans/protoplast_wash.toml"],
    ["diff", "plans/shoot_multiplication.toml", "plans/rooting_half_strength.toml"],
    ["locate"],
], ids=lambda a: " ".join(a[:2]))
def test_text_ends_in_exactly_one_newline(capsys, argv):
    assert main(argv) == (1 if argv[0] == "diff" else 0)  # diff: exit 1 when the plans differ, as these do
    out = capsys.readouterr().out
    assert out.endswith("\n") and not out.endswith("\n\n")


@pytest.mark.parametrize("command", [["prep", "plans/protoplast_wash.toml"],
                                     ["calc", "--plan", "plans/protoplast_wash.toml"]])
def test_o_into_a_missing_folder_is_one_line_naming_the_file_with_a_hint(capsys, tmp_path, command):
    target = tmp_path / "missing" / "out.md"
    assert main([*command, "-o", str(target)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and str(target) in err
    assert "cannot write" in err and "choose another folder" in err


def test_prep_o_writes_the_same_text_it_prints(capsys, tmp_path):
    assert main(["prep", "plans/protoplast_wash.toml", "--format", "csv"]) == 0
    printed = capsys.readouterr().out
    target = tmp_path / "sheet.csv"
    assert main(["prep", "plans/protoplast_wash.toml", "--format", "csv", "-o", str(target)]) == 0
    assert capsys.readouterr().err.strip().endswith(f"wrote {target}")
    assert target.read_text(encoding="utf-8") == printed
