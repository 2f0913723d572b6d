"""The plan's [[readings]]: typed records read with file/line/field errors, written back as read, and
appended by the in-place editor with every other byte kept."""

from __future__ import annotations

import datetime
from dataclasses import replace

import pytest

from mediaplan.files import planfile
from mediaplan.files.edit import updated_text
from mediaplan.files.plan_tables import ReadingRecord
from mediaplan.medium.errors import PlanFileError

HEAD = """[mediaplan]
format = "mediaplan-plan"
version = "{version}"

[plan]
title = "Readings demo (invented)"

[medium]
volume = "1 L"

[medium.components]
sucrose = "30 g/L"
"""

# invented readings of an invented batch (the figures only need to be read and written back)
READINGS = """
# first batch of the week
[[readings]]
value = "92 mOsm/kg"     # as displayed
instrument = "freezing-point"
date = 2026-11-02
operator = "demo"

[[readings]]
note = "after the autoclave"
value = "95 mOsm/kg"
instrument = "vapour-pressure"
chamber_temperature = "25 degC"
date = "2026-11-03"
"""


def test_readings_are_read_as_records(catalog):
    plan = planfile.loads(HEAD.format(version="1.0") + READINGS, catalog=catalog)
    a, b = plan.readings
    assert a == ReadingRecord(value="92 mOsm/kg", instrument="freezing-point", date=datetime.date(2026, 11, 2),
                              operator="demo")
    assert (b.value, b.instrument, b.chamber_temperature, b.date, b.note) == (
        "95 mOsm/kg", "vapour-pressure", "25 degC", "2026-11-03", "after the autoclave")


def test_readings_round_trip(catalog, tmp_path):
    text = HEAD.format(version="1.0") + READINGS
    plan = planfile.loads(text, catalog=catalog)
    again = planfile.loads(planfile.dumps(plan), catalog=catalog)
    assert again.readings == plan.readings
    assert [type(r.date) for r in again.readings] == [datetime.date, str]
    # key order as read (note first in the second reading)
    assert list(planfile.to_dict(plan)["readings"][1]) == ["note", "value", "instrument", "chamber_temperature",
                                                          "date"]
    # a plan without readings writes no [[readings]]
    bare = planfile.loads(HEAD.format(version="1.0"), catalog=catalog)
    assert "readings" not in planfile.dumps(bare)


def test_append_keeps_every_byte(catalog):
    text = HEAD.format(version="1.0") + READINGS
    plan = planfile.loads(text, catalog=catalog)
    new = ReadingRecord(value="93 mOsm/kg", instrument="freezing-point", date=datetime.date(2026, 11, 9))
    edited = updated_text(text, replace(plan, readings=(*plan.readings, new)), catalog=catalog)
    assert edited.startswith(text)
    assert planfile.loads(edited, catalog=catalog).readings[-1] == new
    # the first reading of a plan: a new array of tables after everything else
    bare = HEAD.format(version="1.0")
    first = updated_text(bare, replace(planfile.loads(bare, catalog=catalog), readings=(new,)), catalog=catalog)
    assert first.startswith(bare) and "[[readings]]" in first[len(bare):]


@pytest.mark.parametrize("body,words,line", [
    ('\n[[readings]]\nvalue = "92 mOsm/kg"\ninstrumnet = "freezing-point"\n', "unknown key instrumnet", 16),
    ('\n[[readings]]\nvalue = 92\n', "value must be text", 15),
    ('\n[[readings]]\nvalue = "92 mOsm/kg"\ndate = 5\n', "date must be text", 16),
])
def test_bad_readings_are_named(catalog, body, words, line):
    with pytest.raises(PlanFileError) as err:
        planfile.loads(HEAD.format(version="1.0") + body, file="p.toml", catalog=catalog)
    assert words in str(err.value) and err.value.file == "p.toml"
    assert err.value.field.startswith("readings")
    if line is not None:
        assert err.value.line == line


def test_readings_must_be_an_array_of_tables(catalog):
    text = 'readings = "92 mOsm/kg"\n' + HEAD.format(version="1.0")
    with pytest.raises(PlanFileError) as err:
        planfile.loads(text, file="p.toml", catalog=catalog)
    assert "array of tables" in str(err.value) and err.value.line == 1 and err.value.field == "readings"


def test_a_newer_minor_version_keeps_unknown_keys(catalog):
    text = HEAD.format(version="1.3") + '\n[[readings]]\nvalue = "92 mOsm/kg"\nbatch_id = "B-7"\n'
    plan = planfile.loads(text, catalog=catalog)
    assert plan.readings[0].extra == (("batch_id", "B-7"),)
    assert any("readings[1].batch_id" in n for n in plan.read_notes)
    assert planfile.to_dict(plan)["readings"] == [{"value": "92 mOsm/kg", "batch_id": "B-7"}]
