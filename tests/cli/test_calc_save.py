"""calc --save: the medium as computed becomes a new plan that gives the same figures."""

from __future__ import annotations

import json

from mediaplan.cli.main import main


def _osmolality(argv, capsys) -> float:
    assert main(argv + ["--json"]) == 0
    return json.loads(capsys.readouterr().out)["osmolality_mosmol_per_kg"]


def test_saved_plan_gives_the_same_figures_and_says_where(tmp_path, capsys):
    out = tmp_path / "half_ms.toml"
    args = ["calc", "--base", "ms1962", "--strength", "0.5", "sucrose=20 g/L", "--cells=-1.1 MPa",
            "--temperature", "22 degC"]
    assert main(args + ["--save", str(out)]) == 0
    captured = capsys.readouterr()
    assert f"saved the medium as a plan: {out}" in captured.err
    text = out.read_text(encoding="utf-8")
    assert 'potential = "-1.1 MPa"' in text and 'temperature = "22 degC"' in text
    assert _osmolality(["calc", "--plan", str(out)], capsys) == _osmolality(args, capsys)


def test_an_existing_file_is_kept_unless_forced(tmp_path, capsys):
    out = tmp_path / "mine.toml"
    out.write_text("# a colleague's notes\n", encoding="utf-8")
    assert main(["calc", "sucrose=30 g/L", "--save", str(out)]) == 2
    assert "already exists" in capsys.readouterr().err
    assert out.read_text(encoding="utf-8") == "# a colleague's notes\n"
    assert main(["calc", "sucrose=30 g/L", "--save", str(out), "--force"]) == 0
    assert 'sucrose = "30 g/L"' in out.read_text(encoding="utf-8")


def test_the_plan_read_is_never_the_one_saved(tmp_path, capsys):
    plan = tmp_path / "p.toml"
    assert main(["calc", "sucrose=30 g/L", "--save", str(plan)]) == 0
    before = plan.read_bytes()
    assert main(["calc", "--plan", str(plan), "mannitol=10 g/L", "--save", str(plan), "--force"]) == 2
    assert "plan being read" in capsys.readouterr().err
    assert plan.read_bytes() == before


def test_the_strength_scope_is_saved_and_gives_the_same_figures(tmp_path, capsys):
    for scope in ("macro", "all"):
        out = tmp_path / f"scoped_{scope}.toml"
        args = ["calc", "--base", "ms1962", "--strength", "0.5", "--strength-scope", scope]
        assert main(args + ["--save", str(out)]) == 0
        capsys.readouterr()
        # "all" is what a plan with a base reads when it states no scope: the key is left out
        assert (f'strength_scope = "{scope}"' in out.read_text(encoding="utf-8")) == (scope != "all")
        assert _osmolality(["calc", "--plan", str(out)], capsys) == _osmolality(args, capsys)


def test_json_names_the_file_saved(tmp_path, capsys):
    out = tmp_path / "j.toml"
    assert main(["calc", "sucrose=30 g/L", "--save", str(out), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["saved"] == str(out)
