"""The cautions line names components as people read them; JSON volume_l carries no float noise."""

from __future__ import annotations

import json

import pytest

from mediaplan.cli.main import main
from mediaplan.medium.evaluate import evaluate, tidy_volume_l
from mediaplan.medium.recipe import Recipe


def test_cautions_name_components_by_their_display_names(capsys, catalog):
    assert main(["calc", "--base", "ms1962"]) == 0
    line = next(ln for ln in capsys.readouterr().out.splitlines() if ln.startswith("Cautions: "))
    assert "ammonium nitrate" in line and "ammonium_nitrate" not in line
    hazardous = [c for c in catalog.components.values() if c.hazard]
    assert not any(c.id in line for c in hazardous if c.id != c.name)


@pytest.mark.parametrize("command", ["calc", "prep"])
@pytest.mark.parametrize(("volume", "expected"), [("2 L", 2.0), ("250 mL", 0.25), ("3 L", 3.0)])  # common practice
def test_json_volume_is_the_typed_volume(tmp_path, capsys, command, volume, expected):
    plan = tmp_path / "p.toml"
    plan.write_text(f'[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n\n[medium]\nvolume = "{volume}"\n'
                    'base = "ms1962"\n', encoding="utf-8")
    argv = ["calc", "--plan", str(plan)] if command == "calc" else ["prep", str(plan)]
    assert main([*argv, "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert type(d["volume_l"]) is float and d["volume_l"] == expected


def test_only_the_volume_is_tidied(catalog):
    ev = evaluate(Recipe(volume="2 L").with_amount("sucrose", "30 g/L"), catalog)
    assert ev.volume_l == Recipe(volume="2 L").volume_m3 * 1000.0  # as computed (2.0000000000000004)
    d = ev.to_dict()
    assert d["volume_l"] == 2.0 and d["osmolality_mosmol_per_kg"] == ev.osmolality_mosmol_per_kg
    assert tidy_volume_l(0.25000000000000006) == 0.25 and tidy_volume_l(float("nan")) != 0.0
