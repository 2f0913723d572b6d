"""Text from files cannot act on a terminal, a spreadsheet or a browser: a table of hostile titles (and
catalog names, component keys, file names) through calc, check and prep in every format."""

from __future__ import annotations

import csv
import io
import json
import re
from pathlib import Path

import pytest
import yaml

from mediaplan.cli.main import main
from mediaplan.files.catalog import bundled_folder
from mediaplan.views.jsontext import json_text
from mediaplan.views.safe_text import csv_cell, html_text, is_number, markdown, one_line, terminal

#: what a terminal acts on: C0 controls but tab and newline, DEL, C1 controls, bidirectional overrides
RAW_CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")

HOSTILE_TITLES = {
    "clear screen": "\x1b[2J\x1b[HAll clear",
    "bell": "Ring\x07\x07",
    "window title": "\x1b]0;owned\x07Medium",
    "8-bit CSI": "\x9b31mRed",
    "bidi override": "Medium \u202eTXT.EXE",
    "carriage return": "Good\rEvil",
    "spreadsheet command": "=cmd|' /C calc'!A0",
    "spreadsheet plus": "+SUM(1,2)",
    "spreadsheet minus": "-2+3+cmd|' /C calc'!A0",
    "spreadsheet at": "@SUM(A1:A9)",
    "script": "<script>alert(1)</script>",
    "image": '<img src=x onerror="alert(1)">',
}


def _plan(tmp_path: Path, title: str, name: str = "plan.toml") -> Path:
    p = tmp_path / name
    p.write_text('[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n\n[plan]\ntitle = '
                 + json.dumps(title) + '\nnotes = ' + json.dumps(title) + '\n\n[medium]\nvolume = "1 L"\n\n'
                 '[medium.components]\nsucrose = "30 g/L"\n', encoding="utf-8")  # 30 g/L: common practice
    return p


def _clean(text: str) -> bool:
    return RAW_CONTROL.search(text) is None


@pytest.mark.parametrize("title", HOSTILE_TITLES.values(), ids=HOSTILE_TITLES.keys())
def test_calc_text_and_json_show_no_control_characters(capsys, tmp_path, title):
    plan = _plan(tmp_path, title)
    assert main(["calc", "--plan", str(plan)]) == 0
    out = capsys.readouterr().out
    assert _clean(out) and terminal(title) in out
    assert main(["calc", "--plan", str(plan), "--json"]) == 0
    out = capsys.readouterr().out
    assert _clean(out) and json.loads(out)["title"] == title  # escaped in the text, the same once decoded


@pytest.mark.parametrize("title", HOSTILE_TITLES.values(), ids=HOSTILE_TITLES.keys())
def test_check_lines_and_json_show_no_control_characters(capsys, tmp_path, title):
    good = _plan(tmp_path, title)
    bad = tmp_path / "bad.toml"
    bad.write_text(good.read_text(encoding="utf-8").replace("sucrose", json.dumps(title)), encoding="utf-8")
    assert main(["check", str(good), str(bad)]) == 1
    captured = capsys.readouterr()
    lines = captured.out.splitlines()
    assert len(lines) == 2 and _clean(captured.out) and _clean(captured.err)
    assert lines[1].startswith(f"{bad}: invalid: ")
    assert one_line(" ".join(title.split())) in lines[1]  # an error's whitespace is one space, as always
    assert main(["check", "--json", str(good)]) == 0
    out = capsys.readouterr().out
    assert _clean(out) and json.loads(out)[0]["title"] == title


@pytest.mark.parametrize("title", HOSTILE_TITLES.values(), ids=HOSTILE_TITLES.keys())
def test_prep_csv_makes_formulas_inert(capsys, tmp_path, title):
    assert main(["prep", str(_plan(tmp_path, title)), "--format", "csv"]) == 0
    out = capsys.readouterr().out
    assert _clean(out)
    rows = list(csv.reader(io.StringIO(out)))
    assert rows[0][0] == "title"
    cell = rows[0][1]
    assert not cell.startswith(("=", "+", "-", "@"))
    assert cell == (("'" if title.startswith(("=", "+", "-", "@")) else "") + terminal(title))
    for row in rows:  # no text cell anywhere starts a formula
        assert all(c == "" or not c.startswith(("=", "+", "@")) for c in row), row


@pytest.mark.parametrize("fmt", ["md", "html"])
@pytest.mark.parametrize("title", HOSTILE_TITLES.values(), ids=HOSTILE_TITLES.keys())
def test_prep_markdown_and_html_escape_html(capsys, tmp_path, title, fmt):
    assert main(["prep", str(_plan(tmp_path, title)), "--format", fmt]) == 0
    out = capsys.readouterr().out
    assert _clean(out)
    assert "<script" not in out and "<img" not in out
    if title.startswith("<"):
        assert "&lt;" + title[1:7] in out
    if fmt == "md":
        assert out.startswith("# " + markdown(title) + "\n")


def test_calc_report_formats_escape_the_title(capsys, tmp_path):
    plan = _plan(tmp_path, HOSTILE_TITLES["script"])
    for fmt in ("md", "html"):
        assert main(["calc", "--plan", str(plan), "--format", fmt]) == 0
        out = capsys.readouterr().out
        assert "<script" not in out and "&lt;script&gt;" in out and _clean(out)


def test_csv_numbers_are_never_quoted(capsys, tmp_path):
    assert main(["calc", "--plan", str(_plan(tmp_path, "Plain title")), "--format", "csv"]) == 0
    rows = list(csv.reader(io.StringIO(capsys.readouterr().out)))
    potential = next(r for r in rows if r and r[0] == "osmotic potential")
    assert potential[1].startswith("-0.") and float(potential[1]) < 0  # a negative number stays a number


def _hostile_catalog(tmp_path: Path) -> Path:
    """A facility folder whose sucrose entry carries markup and a terminal escape in its name."""
    entry = None
    for f in sorted((bundled_folder() / "components").glob("*.yaml")):
        data = yaml.safe_load(f.read_text(encoding="utf-8"))
        entry = next((c for c in data.get("components", []) if c["id"] == "sucrose"), None)
        if entry:
            break
    assert entry is not None
    entry = dict(entry, name='<b onmouseover="x()">sucrose</b>\x1b[5m')
    entry["source"] = {k: "facility record (invented for this test)" for k in entry.get("source", {})}
    folder = tmp_path / "facility"
    (folder / "components").mkdir(parents=True)
    (folder / "components" / "ours.yaml").write_text(yaml.safe_dump({"components": [entry]}), encoding="utf-8")
    return folder


def test_catalog_names_are_escaped_in_every_view(capsys, tmp_path):
    folder = _hostile_catalog(tmp_path)
    plan = _plan(tmp_path, "Plain title")
    for argv in (["calc", "--plan", str(plan)], ["prep", str(plan)], ["prep", str(plan), "--format", "html"],
                 ["catalog", "show", "sucrose"], ["catalog", "search", "sucrose"]):
        assert main(["--catalog", str(folder), *argv]) == 0, argv
        captured = capsys.readouterr()
        assert _clean(captured.out) and _clean(captured.err), argv
        if argv[0] == "prep":
            assert "<b " not in captured.out and "&lt;b" in captured.out


def test_error_lines_escape_control_characters(capsys):
    assert main(["calc", "\x1b[31mred\x07=1 g/L"]) == 2
    err = capsys.readouterr().err
    assert _clean(err) and err.count("\n") == 1 and "\\x1b[31mred\\x07" in err


def test_usage_errors_escape_control_characters(capsys):
    with pytest.raises(SystemExit) as info:
        main(["calc", "--format", "\x1b[2Jmd"])
    assert info.value.code == 2
    err = capsys.readouterr().err
    assert _clean(err) and err.count("\n") == 1


def test_file_names_with_escapes_in_check_lines(capsys, tmp_path):
    plan = _plan(tmp_path, "Plain title", name="odd\x1b[8mname.toml")
    assert main(["check", str(plan)]) == 0
    out = capsys.readouterr().out
    assert _clean(out) and "odd\\x1b[8mname.toml: ok" in out


# ---- the functions themselves ---------------------------------------------------------------------------
@pytest.mark.parametrize("raw, shown", [
    ("a\x1b[31mb", "a\\x1b[31mb"), ("tab\tand\nnewline", "tab\tand\nnewline"), ("bell\x07", "bell\\x07"),
    ("del\x7f", "del\\x7f"), ("csi\x9b", "csi\\x9b"), ("rlo\u202e", "rlo\\u202e"), ("ψ −0.8 MPa µ°", "ψ −0.8 MPa µ°"),
])
def test_terminal(raw, shown):
    assert terminal(raw) == shown and terminal(terminal(raw)) == shown


def test_one_line():
    assert one_line("a\nb\x1bc\td") == "a\\nb\\x1bc\td"


@pytest.mark.parametrize("cell, out", [
    ("=1+1", "'=1+1"), ("+A1", "'+A1"), ("-A1", "'-A1"), ("@A1", "'@A1"), ("-0.4405", "-0.4405"),
    ("+5", "+5"), ("-1,234.5", "-1,234.5"), ("-1e-3", "-1e-3"), ("-", "'-"), ("30 g/L", "30 g/L"),
    ("−0.8 MPa", "−0.8 MPa"), (3.5, 3.5), (-2, -2), ("", ""), ("a\x1bb", "a\\x1bb"),
])
def test_csv_cell(cell, out):
    assert csv_cell(cell) == out


@pytest.mark.parametrize("text, number", [("-0.44", True), ("1,234", True), ("12,34", False), ("1e5", True),
                                           ("-", False), ("+", False), ("", False), ("1 L", False)])
def test_is_number(text, number):
    assert is_number(text) is number


def test_markdown_and_html():
    assert markdown("<b>x</b> & y\nz") == "&lt;b&gt;x&lt;/b&gt; &amp; y z"
    assert html_text('<a href="x">\x07') == "&lt;a href=&quot;x&quot;&gt;\\x07"


def test_json_escapes_what_a_terminal_would_act_on_and_decodes_the_same():
    obj = {"title": "\x1b[2J\x9b\u202eψ"}
    text = json_text(obj)
    assert _clean(text) and json.loads(text) == obj and "ψ" in text
