"""Plan files: exact round trip, versions, atomic and conflict-safe saves."""

from __future__ import annotations

from pathlib import Path

import pytest

from mediaplan.files import planfile
from mediaplan.files.planfile import Plan
from mediaplan.medium.errors import ConflictError, MediaplanError, PlanFileError
from mediaplan.medium.recipe import Recipe

PLANS = sorted((Path(__file__).resolve().parents[2] / "plans").glob("*.toml"))


@pytest.mark.parametrize("path", PLANS, ids=lambda p: p.name)
def test_example_plans_round_trip_exactly(path, catalog):
    text = path.read_text()
    plan = planfile.loads(text, file=str(path), catalog=catalog)
    assert planfile.dumps(plan) == text
    again = planfile.loads(planfile.dumps(plan), catalog=catalog)
    assert again.recipe == plan.recipe


def test_unknown_tables_of_newer_minor_are_kept(catalog):
    text = '[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.7"\n\n[medium]\nvolume = "1 L"\n\n' \
           '[medium.components]\nsucrose = "30 g/L"\n\n[future_feature]\nknob = 3\n'
    plan = planfile.loads(text, catalog=catalog)
    assert plan.extra == {"future_feature": {"knob": 3}}
    assert "[future_feature]" in planfile.dumps(plan)


def test_newer_major_is_refused_with_line():
    text = '[mediaplan]\nformat = "mediaplan-plan"\nversion = "2.0"\n[medium]\nvolume = "1 L"\n'
    with pytest.raises(PlanFileError) as exc:
        planfile.loads(text, file="x.toml")
    assert "x.toml:3" in str(exc.value) and "newer" in str(exc.value)


@pytest.mark.parametrize(
    "body, fragment, line",
    [
        ('[medium]\nvolume = "1 L"\n[medium.components]\nsucrose = "30 g"\n', "not a concentration", 7),
        ('[medium]\nvolume = "1 L"\n[medium.components]\nunobtainium = "30 g/L"\n', "unknown component", 7),
        ('[medium]\nvolume = "0 L"\n', "more than zero", 5),
        ('[medium]\nvolume = "1 L"\nbase = "nosuchmedium"\n', "unknown base medium", 6),
        ('[medium]\nvolume = "1 L"\n[medium.components]\nsucrose = 30\n', "must be text", 7),
        ('[medium\nvolume = "1 L"\n', "malformed TOML", 4),
    ],
)
def test_bad_plans_name_file_line_and_fix(body, fragment, line, catalog):
    text = '[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n' + body
    with pytest.raises(MediaplanError) as exc:
        planfile.loads(text, file="bad.toml", catalog=catalog)
    msg = str(exc.value)
    assert fragment in msg
    assert f"bad.toml:{line}" in msg
    assert "\n" not in msg


def test_save_is_atomic_keeps_backup_and_refuses_changed_file(tmp_path, catalog):
    p = tmp_path / "m.toml"
    plan = Plan(recipe=Recipe().with_amount("sucrose", "30 g/L"), title="t")
    planfile.write(plan, p)
    first = p.read_text()
    opened = planfile.read(p, catalog=catalog)
    opened2 = planfile.read(p, catalog=catalog)
    opened.title = "changed"
    planfile.write(opened)
    assert (tmp_path / "m.toml.bak").read_text() == first
    assert "changed" in p.read_text()
    # the second window still holds the old content hash: its save is refused, nothing is lost
    opened2.title = "other"
    with pytest.raises(ConflictError):
        planfile.write(opened2)
    assert "changed" in p.read_text()
    # saving a new plan over an existing different file is refused too
    with pytest.raises(ConflictError):
        planfile.write(Plan(title="new"), p)
    assert not list(tmp_path.glob(".*.tmp"))


def test_read_errors(tmp_path):
    with pytest.raises(PlanFileError, match="no such plan file"):
        planfile.read(tmp_path / "missing.toml")
    (tmp_path / "bin.toml").write_bytes(b"\xff\xfe\x00")
    with pytest.raises(PlanFileError, match="UTF-8"):
        planfile.read(tmp_path / "bin.toml")
    with pytest.raises(PlanFileError, match="folder"):
        planfile.read(tmp_path)
