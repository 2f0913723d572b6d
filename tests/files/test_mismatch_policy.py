"""One catalog-mismatch policy for calc and prep: warn naming entry, field and both values; --strict refuses;
an embedded copy that differs waits for --trust."""

from __future__ import annotations

import json

import pytest
import yaml

from mediaplan.cli.main import main
from mediaplan.files import planfile
from mediaplan.files.catalog import bundled_folder
from mediaplan.files.planfile import Plan
from mediaplan.files.sharing import MISMATCH_POLICY, provenance_record
from mediaplan.medium.recipe import Recipe


def _facility(tmp_path, **changes):
    """A facility folder whose sucrose entry differs from the bundled one."""
    data = yaml.safe_load((bundled_folder() / "components" / "sugars_polyols.yaml").read_text(encoding="utf-8"))
    entry = next(c for c in data["components"] if c["id"] == "sucrose")
    entry.update(changes)
    entry["source"] = {k: "facility measurement (invented for this test)" for k in entry.get("source", {})}
    folder = tmp_path / "facility"
    (folder / "components").mkdir(parents=True)
    (folder / "components" / "ours.yaml").write_text(yaml.safe_dump({"components": [entry]}), encoding="utf-8")
    return folder


def _stamped(catalog, tmp_path, *, embed: bool):
    r = Recipe().with_amount("sucrose", "30 g/L")
    plan = Plan(recipe=r, title="Stamped (invented)")
    plan.provenance = provenance_record(r, catalog, embed=embed)
    path = tmp_path / "p.toml"
    planfile.write(plan, path)
    return path


@pytest.mark.parametrize("command", [["calc", "--plan"], ["prep"]])
def test_a_changed_entry_warns_with_the_field_and_both_values(catalog, tmp_path, capsys, command):
    path = _stamped(catalog, tmp_path, embed=True)
    folder = _facility(tmp_path, apparent_molar_volume=209.8)
    # the embedded copy conflicts: nothing is computed until the user says which entry to trust
    assert main(["--catalog", str(folder), *command, str(path)]) == 2
    assert "--trust" in capsys.readouterr().err
    assert main(["--catalog", str(folder), *command, str(path), "--trust", "local", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    said = " ".join(out["notes"])
    assert "sucrose" in said and "apparent_molar_volume 211.5 in the plan, 209.8 here" in said  # issue 12


@pytest.mark.parametrize("command", [["calc", "--plan"], ["prep"]])
def test_strict_refuses_a_recorded_entry_that_differs(catalog, tmp_path, capsys, command):
    path = _stamped(catalog, tmp_path, embed=False)
    folder = _facility(tmp_path, apparent_molar_volume=209.8)
    assert main(["--catalog", str(folder), *command, str(path), "--json"]) == 0
    assert any("component sucrose differs" in n for n in json.loads(capsys.readouterr().out)["notes"])
    assert main(["--catalog", str(folder), *command, str(path), "--strict"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert "catalog differs from the plan's record: component sucrose differs" in err[-1]


def test_components_the_stamp_does_not_cover_are_named(catalog, tmp_path, capsys):
    path = _stamped(catalog, tmp_path, embed=False)
    assert main(["calc", "--plan", str(path), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["notes"] == []
    text = path.read_text(encoding="utf-8").replace('sucrose = "30 g/L"', 'sucrose = "30 g/L"\nmannitol = "10 g/L"')
    path.write_text(text, encoding="utf-8")
    assert main(["calc", "--plan", str(path), "--json"]) == 0
    assert any("not covered" in n and "mannitol" in n for n in json.loads(capsys.readouterr().out)["notes"])


def test_the_policy_is_stated_once():
    assert "--strict" in MISMATCH_POLICY and "--trust" in MISMATCH_POLICY
