"""One catalog-mismatch policy on every command that reads a plan: the same warning line naming the entry,
the field and both values; --strict refuses (exit 2; check reports the plan invalid, exit 1)."""

from __future__ import annotations

import json

import pytest
import yaml

from mediaplan.cli.main import main
from mediaplan.files import planfile
from mediaplan.files.catalog import bundled_folder
from mediaplan.files.planfile import Plan
from mediaplan.files.sharing import provenance_record
from mediaplan.medium.recipe import Recipe

# the warning calc and prep give (tests/files/test_mismatch_policy.py): 211.5 is the bundled apparent molar
# volume of sucrose, 209.8 the facility's (invented for this test)
SAID = "catalog differs from the plan's record: component sucrose: the plan's embedded copy differs"
FIELD = "apparent_molar_volume 211.5 in the plan, 209.8 here"


@pytest.fixture(scope="module")
def setup(tmp_path_factory, catalog):
    tmp = tmp_path_factory.mktemp("mismatch")
    data = yaml.safe_load((bundled_folder() / "components" / "sugars_polyols.yaml").read_text(encoding="utf-8"))
    entry = next(c for c in data["components"] if c["id"] == "sucrose")
    entry["apparent_molar_volume"] = 209.8
    entry["source"] = {k: "facility measurement (invented for this test)" for k in entry.get("source", {})}
    folder = tmp / "facility"
    (folder / "components").mkdir(parents=True)
    (folder / "components" / "ours.yaml").write_text(yaml.safe_dump({"components": [entry]}), encoding="utf-8")
    r = Recipe().with_amount("sucrose", "30 g/L")
    plan = Plan(recipe=r, title="Stamped (invented)")
    # embedded copies of the stamped entries, so the warning names the field; --trust local settles them
    plan.provenance = provenance_record(r, catalog, embed=True)
    path = tmp / "p.toml"
    planfile.write(plan, path)
    # a counted series (invented counts of a clean curve) for fit
    levels = "".join(f"\n[[series.levels]]\nlevel = {i + 1}\nwater_potential_mpa = {-0.2 * (i + 2):.1f}\n"
                     f"plasmolysed = [{n}]\ntotal = [30]\n" for i, n in enumerate([0, 4, 15, 27, 30]))
    path.write_text(path.read_text(encoding="utf-8") + '\n[series]\nosmoticum = "mannitol"\n'
                    'temperature = "25 degC"\n' + levels, encoding="utf-8")
    other = tmp / "q.toml"
    planfile.write(Plan(recipe=r.with_amount("sucrose", "20 g/L"), title="other (invented)"), other)
    return str(folder), str(path), str(other)


COMMANDS = {
    "calc": lambda p, q: ["calc", "--plan", p],
    "prep": lambda p, q: ["prep", p],
    "solve": lambda p, q: ["solve", p, "--target=-1.0 MPa", "--with", "mannitol"],
    "series": lambda p, q: ["series", "--plan", p, "--with", "mannitol", "--from=-0.6 MPa", "--to=-1.2 MPa",
                            "--steps", "3"],
    "fit": lambda p, q: ["fit", p],
    "check": lambda p, q: ["check", p],
    "diff": lambda p, q: ["diff", p, q],
    "reading": lambda p, q: ["reading", p, "100 mOsm/kg"],
}
OK_STATUS = {"diff": 1, "reading": (0, 1)}  # the plans differ; a reading is consistent or not


@pytest.mark.parametrize("name", list(COMMANDS))
def test_every_command_gives_the_same_warning(setup, capsys, name):
    folder, p, q = setup
    code = main(["--catalog", folder, *COMMANDS[name](p, q), "--trust", "local"])
    out = capsys.readouterr()
    assert code in (OK_STATUS.get(name, 0) if isinstance(OK_STATUS.get(name), tuple) else (OK_STATUS.get(name, 0),))
    said = out.out + out.err
    if name == "check":  # one line per plan: the same difference on the plan's line, the same note in JSON
        assert "catalog differs: " + SAID.split(": ", 1)[1] in out.out and FIELD in out.out
        assert main(["--catalog", folder, "check", p, "--trust", "local", "--json"]) == 0
        said = " ".join(json.loads(capsys.readouterr().out)[0]["notes"])
    assert SAID in said and FIELD in said


@pytest.mark.parametrize("name", list(COMMANDS))
def test_strict_refuses_on_every_command(setup, capsys, name):
    folder, p, q = setup
    code = main(["--catalog", folder, *COMMANDS[name](p, q), "--trust", "local", "--strict"])
    out = capsys.readouterr()
    if name == "check":  # check's verdict: the plan is invalid (exit 1), the line says why
        assert code == 1 and "invalid: component sucrose: the plan's embedded copy differs" in out.out
    else:
        assert code == 2
        assert SAID in out.err.strip().splitlines()[-1]


@pytest.mark.parametrize("name", list(COMMANDS))
def test_without_trust_the_embedded_conflict_waits(setup, capsys, name):
    folder, p, q = setup
    code = main(["--catalog", folder, *COMMANDS[name](p, q)])
    out = capsys.readouterr()
    assert code == (1 if name == "check" else 2)
    assert "--trust" in out.out + out.err
