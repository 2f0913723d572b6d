"""Counts files say how the series was made (header comments) and fit says how it read each column."""

from __future__ import annotations

import pytest

from mediaplan.cli.main import main
from mediaplan.files.counts import header_comments, read_counts_csv, stated_in

# invented counts of a clean plasmolysis curve (common practice for a fit test)
ROWS = "0.1,0,30\n0.2,2,30\n0.3,10,30\n0.4,22,30\n0.5,29,30\n0.6,30,30\n"


def _file(tmp_path, comments: list[str], header="mannitol (mol/kg),plasmolysed,total"):
    p = tmp_path / "counts.csv"
    p.write_text("\n".join([*comments, header]) + "\n" + ROWS, encoding="utf-8")
    return p


def test_header_comments_round_trip(tmp_path):
    lines = header_comments(osmoticum="mannitol", temperature="20 degC", base="ms1962", strength=0.5,
                            plan="series.toml")
    p = _file(tmp_path, lines, header="concentration (mol/kg),plasmolysed,total")
    stated = {k: v for k, (_, v) in stated_in(p).items()}
    assert stated == {"plan": "series.toml", "osmoticum": "mannitol", "base": "ms1962", "strength": "0.5",
                      "temperature": "20 degC"}


def test_the_files_temperature_is_used_when_none_is_given(tmp_path, catalog):
    at20 = read_counts_csv(_file(tmp_path, header_comments(osmoticum="mannitol", temperature="20 degC")),
                           catalog=catalog)
    assert at20.temperature_k == pytest.approx(293.15)
    at25 = read_counts_csv(_file(tmp_path, header_comments(osmoticum="mannitol", temperature="25 degC")),
                           catalog=catalog)
    # the same molality is a less negative potential at 20 °C than at 25 °C (ψ = −RT·c)
    assert at20.water_potential_mpa[0] > at25.water_potential_mpa[0]
    assert any("as the file states" in n for n in at20.notes)


def test_a_concentration_column_takes_its_osmoticum_from_the_file(tmp_path, catalog):
    p = _file(tmp_path, ["# osmoticum: sorbitol"], header="concentration (mol/kg),plasmolysed,total")
    c = read_counts_csv(p, catalog=catalog)
    assert any("osmoticum sorbitol as the file states (line 1)" in n for n in c.notes)


def test_what_the_caller_gives_wins_and_the_difference_is_named(tmp_path, catalog, capsys):
    p = _file(tmp_path, header_comments(osmoticum="mannitol", temperature="20 degC"))
    assert main(["fit", str(p), "--temperature", "25 degC"]) == 0
    err = "".join(capsys.readouterr())  # the text view prints its notes under the fit
    assert "the file states temperature 20 degC; 25 degC used as asked" in err


def test_fit_says_which_column_is_which(tmp_path, capsys):
    p = _file(tmp_path, [], header="total,mannitol (mM),plasmolysed")
    p.write_text("total,mannitol (mM),plasmolysed\n30,100,0\n30,200,2\n30,300,10\n30,400,22\n30,500,29\n"
                 "30,600,30\n", encoding="utf-8")
    assert main(["fit", str(p)]) == 0
    err = "".join(capsys.readouterr())
    assert "columns read: levels from 'mannitol (mM)' in mM, plasmolysed from 'plasmolysed', total from 'total'" in err


def test_a_bad_stated_value_is_one_line_with_its_line(tmp_path, capsys):
    p = _file(tmp_path, ["# osmoticum: mannitol", "# temperature: 99 degC"])
    assert main(["fit", str(p)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and f"{p}:2" in err[0]


def test_a_stated_strength_scope_is_read_back(tmp_path, catalog):
    """A series made in half-strength medium with every line scaled is rebuilt the same way by fit."""
    import numpy as np

    from mediaplan.medium.recipe import Recipe

    head = ["# osmoticum: mannitol", "# base: ms1962", "# strength: 0.5", "# temperature: 25 degC"]
    stated_all = read_counts_csv(_file(tmp_path, [*head, "# strength_scope: all"]), catalog=catalog)
    given_all = read_counts_csv(_file(tmp_path, []), catalog=catalog, osmoticum="mannitol",
                                background=Recipe(base="ms1962", strength=0.5, strength_scope="all"))
    salts = read_counts_csv(_file(tmp_path, head), catalog=catalog)
    assert np.array_equal(stated_all.water_potential_mpa, given_all.water_potential_mpa)
    # vitamins, inositol and glycine at full rather than half strength: a small but real difference
    assert not np.array_equal(stated_all.water_potential_mpa, salts.water_potential_mpa)
