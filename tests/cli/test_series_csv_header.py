"""series --csv writes how the series was made as '# key: value' lines that fit reads back."""

from __future__ import annotations

import json

import pytest

from mediaplan.cli.main import main
from mediaplan.files.counts import stated_in

# invented counts of a clean plasmolysis curve over six levels (common practice for a fit test)
COUNTS = [(0, 30), (3, 30), (11, 30), (21, 30), (28, 30), (30, 30)]
SERIES = ["series", "--with", "sorbitol", "--from=-0.5 MPa", "--to=-1.5 MPa", "--steps", "6",
          "--temperature", "20 degC", "--csv"]


def _filled(tmp_path, capsys, extra=()) -> tuple[str, object]:
    assert main([*SERIES, *extra]) == 0
    lines = capsys.readouterr().out.splitlines()
    out, i = [], 0
    for line in lines:
        if line[:1].isdigit():  # a level row: its empty plasmolysed and total filled in
            line = line.removesuffix(",,") + ",{},{}".format(*COUNTS[i])
            i += 1
        out.append(line)
    path = tmp_path / "counts.csv"
    path.write_text("\n".join(out) + "\n", encoding="utf-8")
    return "\n".join(lines), path


def _fit(argv, capsys) -> dict:
    assert main(["fit", *argv, "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_the_sheet_states_osmoticum_temperature_and_background(tmp_path, capsys):
    text, path = _filled(tmp_path, capsys, ["--base", "ms1962", "--strength", "0.5", "--strength-scope", "all"])
    assert text.splitlines()[0].startswith("# ")
    stated = {k: v for k, (_, v) in stated_in(path).items()}
    assert stated == {"osmoticum": "sorbitol", "temperature": "20 degC", "base": "ms1962", "strength": "0.5",
                      "strength_scope": "all"}
    assert "# strength_scope: all" in text  # a scope other than a new recipe's is said too


def test_fit_reads_the_series_as_made_without_being_told(tmp_path, capsys):
    _, path = _filled(tmp_path, capsys)
    told = _fit([str(path), "--with", "sorbitol", "--temperature", "20 degC"], capsys)
    read = _fit([str(path)], capsys)
    assert read["temperature_c"] == 20.0
    assert any("osmoticum sorbitol as the file states" in n for n in read["notes"])
    for key in ("water_potential_50_mpa", "osmolality_50_mosmol_per_kg", "level_sd_mpa"):
        assert read[key] == told[key]
    # without the comments the fit falls back to 25 °C and knows no osmoticum: another osmolality
    bare = tmp_path / "bare.csv"
    bare.write_text("".join(ln + "\n" for ln in path.read_text().splitlines() if not ln.startswith("#")))
    plain = _fit([str(bare)], capsys)
    assert plain["temperature_c"] == 25.0
    assert plain["osmolality_50_mosmol_per_kg"] != pytest.approx(read["osmolality_50_mosmol_per_kg"], rel=1e-4)


def test_the_plan_written_is_named(tmp_path, capsys):
    plan = tmp_path / "series.toml"
    assert main([*SERIES, "--write", str(plan)]) == 0
    assert f"# plan: {plan}" in capsys.readouterr().out
