"""write_output: the one way a command's text reaches standard output or an ``-o FILE``."""

from __future__ import annotations

import pytest

from mediaplan.files.output import write_output
from mediaplan.medium.errors import PlanFileError


def test_stdout_gets_exactly_one_final_newline(capsys):
    write_output("a\nb")
    write_output("c\n")
    write_output("")
    assert capsys.readouterr().out == "a\nb\nc\n\n"


def test_a_file_gets_the_text_byte_for_byte_and_no_backup(tmp_path, capsys):
    out = tmp_path / "sheet.md"
    out.write_text("old", encoding="utf-8")
    write_output("# Medium\n\nµ, °C, ψ", out, force=True)  # replacing an existing file is asked for
    assert out.read_bytes() == "# Medium\n\nµ, °C, ψ".encode()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["sheet.md"]  # no .bak, no temp file left
    captured = capsys.readouterr()
    assert captured.out == "" and captured.err == f"wrote {out}\n"


def test_a_folder_that_does_not_exist_is_one_clear_error(tmp_path):
    target = tmp_path / "no such folder" / "sheet.md"
    with pytest.raises(PlanFileError) as info:
        write_output("x", str(target))
    assert info.value.file == str(target) and "cannot write" in str(info.value)
    assert "choose another folder" in str(info.value)
