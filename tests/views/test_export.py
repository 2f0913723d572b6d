"""Exports: Markdown, CSV and self-contained printable HTML of prep sheets and evaluation reports."""

from __future__ import annotations

import csv
import datetime
import io
import re
import subprocess
from pathlib import Path

import pytest

from mediaplan.files.planfile import Plan
from mediaplan.files.sharing import provenance_of
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.prep import build_sheet
from mediaplan.views.export import evaluation_report, prep_sheet

CHROMIUM = Path("/usr/bin/chromium")
DAY = datetime.date(2024, 3, 1)


@pytest.fixture
def demo(catalog):
    """An invented scenario: a shoot-multiplication medium for a fictitious cultivar trial."""
    recipe = (Recipe(base="ms1962").with_amount("bap", "1 mg/L").with_amount("gibberellic_acid", "0.5 mg/L")
              .with_amount("agar", "8 g/L"))
    plan = Plan(recipe=recipe, title="Demo: shoot multiplication (invented scenario)", author="demo lab")
    plan.provenance = provenance_of(recipe, catalog)
    sheet = build_sheet(recipe, catalog, volume="2 L", stocks=True, title=plan.title)
    return plan, sheet, evaluate(recipe, catalog)


@pytest.mark.parametrize("fmt", ["md", "csv", "html"])
def test_documents_carry_title_date_provenance_and_sign_lines(demo, fmt):
    plan, sheet, ev = demo
    for text in (prep_sheet(sheet, plan, fmt, date=DAY), evaluation_report(ev, plan, fmt, date=DAY)):
        assert plan.title.replace("&", "&amp;") in text or plan.title in text
        assert "2024-03-01" in text
        assert plan.provenance["components"]["ammonium_nitrate"] in text
        for s in ("prepared by", "checked by", "date"):
            assert s in text


def test_csv_reads_back_as_rows(demo):
    plan, sheet, _ = demo
    rows = list(csv.reader(io.StringIO(prep_sheet(sheet, plan, "csv", date=DAY))))
    header = rows.index(["component", "amount", "per batch", "how", "notes"])
    kno3 = next(r for r in rows[header:] if r and r[0].startswith("potassium nitrate"))
    assert kno3[2] == "3.800 g"  # 1900 mg/L (Murashige & Skoog 1962, via ms1962.yaml) × 2 L


def test_html_is_self_contained(demo):
    plan, sheet, ev = demo
    for text in (prep_sheet(sheet, plan, "html"), evaluation_report(ev, plan, "html")):
        assert text.startswith("<!DOCTYPE html>")
        assert not re.search(r"<script|<link|@import|url\(|https?://|src=", text, re.IGNORECASE)
        assert text.count("<table>") == text.count("</table>") >= 2


def test_unknown_format_is_one_clear_error(demo):
    from mediaplan.medium.errors import MediaplanError

    plan, sheet, _ = demo
    with pytest.raises(MediaplanError, match="md, csv or html"):
        prep_sheet(sheet, plan, "pdf")


def test_cli_writes_html_file(tmp_path, capsys):
    from mediaplan.cli.main import main

    out = tmp_path / "sheet.html"
    assert main(["prep", "--base", "ms1962", "--volume", "1 L", "--stocks", "--format", "html",
                 "-o", str(out)]) == 0
    assert "<h2>Stock solutions</h2>" in out.read_text(encoding="utf-8")


@pytest.mark.skipif(not CHROMIUM.exists(), reason="/usr/bin/chromium absent (apt-get install chromium)")
def test_html_renders_in_headless_chromium(demo, tmp_path):
    plan, sheet, _ = demo
    page = tmp_path / "sheet.html"
    page.write_text(prep_sheet(sheet, plan, "html", date=DAY), encoding="utf-8")
    png = tmp_path / "sheet.png"
    subprocess.run([str(CHROMIUM), "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                    "--disable-component-update", "--disable-sync", "--no-first-run",
                    f"--user-data-dir={tmp_path / 'profile'}", f"--screenshot={png}", "--window-size=1000,1400",
                    page.as_uri()], check=True, capture_output=True, timeout=120)
    data = png.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    assert len(data) > 20_000  # a page of tables, not a blank image (a blank 1000×1400 PNG is ~5 kB)
    import matplotlib.image as mpimg

    img = mpimg.imread(str(png))
    assert img.shape[0] == 1400 and img.shape[1] == 1000
    assert img[..., :3].std() > 0.05  # ink on the page
