"""The catalog's solubility_table is read strictly (files/catalog.py), and a plan's storage temperature
([medium] storage_temperature) is read, written back and refused when misspelt (files/planfile.py).

The numbers in the catalog entries below are test inputs, not data (the format is what is tested).
"""

from __future__ import annotations

import textwrap

import pytest

from mediaplan.files import planfile
from mediaplan.files.catalog import bundled_folder, load_catalog
from mediaplan.medium.errors import CatalogError, MediaplanError

ENTRY = """\
sources:
  ours: "a test source"
components:
  - id: house_osmoticum
    name: "house osmoticum"
    formula: "C6H14O6"
    group: osmoticum
    molar_mass: 182.172
    species: {{"house_osmoticum": 1}}
    solubility: 20.0
{table}
    source:
      solubility: ours
      molar_mass: ours
"""


def _facility(tmp_path, table: str):
    d = tmp_path / "facility" / "components"
    d.mkdir(parents=True)
    (d / "ours.yaml").write_text(ENTRY.format(table=textwrap.indent(textwrap.dedent(table), "    ")),
                                 encoding="utf-8")
    return d.parent


def test_a_table_loads_with_its_rows_and_sources(tmp_path):
    folder = _facility(tmp_path, """\
        solubility_table:
          - {temperature_c: 10, g_per_100g_water: 15.0, source: ours}
          - {temperature_c: 30, g_per_100g_water: 25.0, source: "from memory (unverified)"}
        """)
    c = load_catalog([bundled_folder(), folder]).components["house_osmoticum"]
    assert [round(p.temperature_k - 273.15, 9) for p in c.solubility_table] == [10, 30]
    assert c.solubility_table[0].source == "a test source" and not c.solubility_table[0].from_memory
    assert c.solubility_table[1].from_memory
    assert c.saturation_at(293.15).g_per_100g_water == pytest.approx(20.0)


@pytest.mark.parametrize("table, words", [
    ("""\
     solubility_table:
       - {temperature_c: 10, g_per_100g: 15.0, source: ours}
       - {temperature_c: 30, g_per_100g_water: 25.0, source: ours}
     """, "unknown key 'g_per_100g' .*did you mean g_per_100g_water"),
    ("""\
     solubility_tabel:
       - {temperature_c: 10, g_per_100g_water: 15.0, source: ours}
     """, "unknown key 'solubility_tabel'.*did you mean solubility_table"),
    ("""\
     solubility_table:
       - {temperature_c: 30, g_per_100g_water: 25.0, source: ours}
       - {temperature_c: 10, g_per_100g_water: 15.0, source: ours}
     """, "go up in temperature"),
    ("""\
     solubility_table:
       - {temperature_c: 10, g_per_100g_water: 15.0}
       - {temperature_c: 30, g_per_100g_water: 25.0, source: ours}
     """, "lacks source"),
    ("""\
     solubility_table:
       - {temperature_c: 10, g_per_100g_water: "15 g", source: ours}
       - {temperature_c: 30, g_per_100g_water: 25.0, source: ours}
     """, "must be a number"),
    ("""\
     solubility_table:
       - {temperature_c: 283, g_per_100g_water: 15.0, source: ours}
       - {temperature_c: 303, g_per_100g_water: 25.0, source: ours}
     """, "outside .* °C"),
    ("""\
     solubility_table:
       - {temperature_c: 10, g_per_100g_water: 15.0, source: ours}
     """, "at least two rows"),
])
def test_a_bad_table_is_one_line_naming_file_and_line(tmp_path, table, words):
    folder = _facility(tmp_path, table)
    with pytest.raises(CatalogError, match=words) as info:
        load_catalog([bundled_folder(), folder])
    text = str(info.value)
    assert "ours.yaml:" in text and "\n" not in text


PLAN = """\
[mediaplan]
format = "mediaplan-plan"
version = "1.0"

[medium]
volume = "1 L"
temperature = "25 degC"
{key} = "4 degC"

[medium.components]
mannitol = "0.5 mol/kg"
"""


def test_storage_temperature_round_trips(catalog):
    plan = planfile.loads(PLAN.format(key="storage_temperature"), catalog=catalog)
    assert plan.recipe.storage_temperature_k == pytest.approx(277.15)
    again = planfile.loads(planfile.dumps(plan), catalog=catalog)
    assert again.recipe.storage_temperature == "4 degC"
    assert planfile.loads(planfile.dumps(planfile.loads(PLAN.format(key="storage_temperature")
                                                        .replace('storage_temperature = "4 degC"\n', ""))))\
        .recipe.storage_temperature is None


def test_a_misspelt_storage_key_is_refused(catalog):
    with pytest.raises(MediaplanError, match="storage_temprature"):
        planfile.loads(PLAN.format(key="storage_temprature"), catalog=catalog)
