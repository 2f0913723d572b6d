"""The cautions line names components as people read them; JSON volume_l carries no float noise."""

from __future__ import annotations

import json

import pytest

from mediaplan.cli.common import tidy_volumes
from mediaplan.cli.main import main


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


def test_tidy_volumes_touches_only_volume_l():
    noisy = {"volume_l": 2.0000000000000004, "osmolality": 1.0000000000000002,
             "rows": [{"volume_l": 0.25000000000000006, "grams": 0.1 + 0.2}], "n": 3}
    assert tidy_volumes(noisy) == {"volume_l": 2.0, "osmolality": 1.0000000000000002,
                                   "rows": [{"volume_l": 0.25, "grams": 0.1 + 0.2}], "n": 3}
