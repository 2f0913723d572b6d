"""The PEG-mixture warning says what the figure holds: the ZSR figure with its synergy, the additive figure,
and that the truth is expected between them (Michel 1983, Plant Physiol 72:66, abstract: a synergy of this
sign for PEG with mannitol and with NaCl; its size not checked here)."""

from __future__ import annotations

import re

import pytest

import mediaplan as mp


@pytest.fixture(scope="module")
def ms_sucrose_peg():
    # MS with 30 g/L sucrose and PEG 8000 at 200 g/kg water (common practice for a PEG stress medium)
    return mp.evaluate(mp.Recipe(base="ms1962").with_amount("sucrose", "30 g/L").with_amount("peg8000", "200 g/kg"))


def test_warning_gives_both_figures(ms_sucrose_peg):
    ev = ms_sucrose_peg
    (w,) = [w for w in ev.warnings if w.code == "peg_mixture"]
    assert "upper bound" not in w.message
    figures = [float(x.replace("−", "-")) for x in re.findall(r"\(([−-]\d+\.\d+) MPa", w.message)]
    assert len(figures) == 2
    zsr, additive = figures
    assert zsr == pytest.approx(ev.osmotic_potential_mpa, abs=0.0005)   # the figure shown is the ZSR one
    assert additive > zsr                                               # the sum of own effects is less negative
    assert "between the two" in w.message


def test_no_warning_without_other_solutes():
    ev = mp.evaluate(mp.Recipe().with_amount("peg8000", "200 g/kg"))
    assert not [w for w in ev.warnings if w.code == "peg_mixture"]
