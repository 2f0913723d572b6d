"""The recent-plans list: newest first, bounded, tolerant of a damaged state file, written atomically."""

from __future__ import annotations

import json

import pytest

from mediaplan.files import recent


@pytest.fixture(autouse=True)
def _state(tmp_path, monkeypatch):
    monkeypatch.setenv("MEDIAPLAN_STATE_DIR", str(tmp_path / "state"))


def _plan(tmp_path, name):
    p = tmp_path / name
    p.write_text("# a plan\n")
    return p


def test_newest_first_without_repeats(tmp_path):
    a, b = _plan(tmp_path, "a.toml"), _plan(tmp_path, "b.toml")
    recent.remember_plan(a)
    recent.remember_plan(b)
    recent.remember_plan(a)
    assert recent.recent_plans() == [a.resolve(), b.resolve()]


def test_bounded_and_missing_files_left_out(tmp_path):
    plans = [_plan(tmp_path, f"p{i}.toml") for i in range(recent.RECENT_LIMIT + 3)]
    for p in plans:
        recent.remember_plan(p)
    got = recent.recent_plans()
    assert len(got) == recent.RECENT_LIMIT
    assert got[0] == plans[-1].resolve()
    plans[-1].unlink()
    assert plans[-1].resolve() not in recent.recent_plans()
    assert plans[-2].exists()  # reading the list never deletes a plan


@pytest.mark.parametrize("content", [b"", b"not json", b"{\"a\": 1}", b"[1, 2, null]", b"\xff\xfe",
                                     b"[\"relative.toml\"]", b"[" + b"\"x\"," * 40000 + b"\"x\"]"])
def test_a_damaged_list_reads_as_empty_and_is_replaced(tmp_path, content):
    f = recent.recent_file()
    f.parent.mkdir(parents=True)
    f.write_bytes(content)
    assert recent.recent_plans() == []
    p = _plan(tmp_path, "kept.toml")
    recent.remember_plan(p)
    assert json.loads(f.read_text()) == [str(p.resolve())]


def test_a_folder_in_the_list_is_not_a_plan(tmp_path):
    f = recent.recent_file()
    f.parent.mkdir(parents=True)
    f.write_text(json.dumps([str(tmp_path)]))
    assert recent.recent_plans() == []
