"""Tonicity toward the cells: reflection-weighted effective osmolality, classes, tolerance, CLI."""

from __future__ import annotations

import json

import pytest

from mediaplan.cli.main import main
from mediaplan.medium.errors import AmountError
from mediaplan.medium.evaluate import classify_tonicity, evaluate
from mediaplan.medium.recipe import Recipe


@pytest.mark.parametrize("eff,cls", [(450, "isotonic"), (472.5, "isotonic"), (427.5, "isotonic"),
                                     (473, "hypertonic"), (427, "hypotonic")])
def test_classes_at_the_band_edges(eff, cls):
    t = classify_tonicity(eff, 450.0, 0.05)
    assert t["class"] == cls
    assert t["difference_mosmol_per_kg"] == pytest.approx(eff - 450.0)
    word = {"isotonic": "no net", "hypertonic": "leaves the cells", "hypotonic": "into the cells"}[cls]
    assert word in t["water_flow"]


@pytest.mark.parametrize("ref,tol", [(0.0, 0.05), (-3.0, 0.05), (float("nan"), 0.05), (450.0, -0.1),
                                     (450.0, 1.0), (450.0, float("inf"))])
def test_bad_reference_or_tolerance(ref, tol):
    with pytest.raises(AmountError):
        classify_tonicity(400.0, ref, tol)


def test_impermeant_medium_effective_equals_osmolality(catalog):
    ev = evaluate(Recipe(base="ms1962").with_amount("sucrose", "30 g/L").with_amount("mannitol", "0.3 mol/kg"),
                  catalog, cell_reference_mosmol=500.0)
    assert ev.effective_osmolality_mosmol_per_kg == pytest.approx(ev.osmolality_mosmol_per_kg, rel=1e-9)
    assert ev.tonicity["class"] == "isotonic"


def test_reflection_weights_the_share(catalog, tmp_path):
    """A solute with reflection coefficient 0 adds nothing toward the cells; with 0.5, half its share."""
    from mediaplan.files.catalog import bundled_folder, load_catalog

    (tmp_path / "components").mkdir()
    entries = "".join(
        f"  - id: perm_{tag}\n    name: invented permeant {tag}\n    group: cryoprotectant\n"
        f"    molar_mass: 92.094\n    species: {{glycerol: 1}}\n    reflection_coefficient: {sigma}\n"
        "    source: {reflection_coefficient: invented for a test}\n" for tag, sigma in (("zero", 0.0), ("half", 0.5)))
    (tmp_path / "components" / "x.yaml").write_text(f"description: test\nsources: {{}}\ncomponents:\n{entries}")
    cat = load_catalog([bundled_folder(), tmp_path])
    base = Recipe().with_amount("mannitol", "0.3 mol/kg")
    for cid, sigma in (("perm_zero", 0.0), ("perm_half", 0.5)):
        ev = evaluate(base.with_amount(cid, "0.4 mol/kg"), cat)
        share = ev.component(cid).osmolality_mosmol_per_kg
        assert ev.effective_osmolality_mosmol_per_kg == pytest.approx(ev.osmolality_mosmol_per_kg - (1 - sigma) * share)


def test_cli_cells_and_tolerance(capsys):
    args = ["calc", "mannitol=0.2 mol/kg", "--cells", "-0.55 MPa", "--json"]
    assert main(args) == 0
    t = json.loads(capsys.readouterr().out)["tonicity"]
    # -0.55 MPa at 25 °C is 222.5 mOsm/kg: R T rho_w = 8.314462618 (CODATA 2018) x 298.15 x 997.0476 kg/m^3
    # (IAPWS-95, 0.101325 MPa) = 2.47164 MPa per osmol/kg; the engine's water density agrees to 1e-6.
    # 0.2 mol/kg mannitol is about 201 mOsm/kg
    assert t["reference_mosmol_per_kg"] == pytest.approx(0.55 / (8.314462618 * 298.15 * 997.0476e-6) * 1000,
                                                         rel=1e-5)
    assert t["class"] == "hypotonic"
    assert main([*args, "--tolerance", "15 %"]) == 0
    assert json.loads(capsys.readouterr().out)["tonicity"]["class"] == "isotonic"
    assert main([*args, "--tolerance", "2"]) == 2
    assert "--tolerance" in capsys.readouterr().err
