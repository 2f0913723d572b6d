"""PEG with other solutes: the additive and the ZSR figure (mediaplan.thermo.mixing.mixing_span).

What is published and was read: the abstract of Michel 1983 (Plant Physiol 72:66, doi:10.1104/pp.72.1.66,
PMC1066170): PEG 8000 with mannitol, and with NaCl, has a water potential "significantly lower than
additive", and "the synergism of MAN-PEG and of NaCl-PEG are related linearly to the concentration of solute
added with PEG". His tables (the size of the synergy) were not read, so no number of his is checked here:
the tests hold the model to the sign and the trends, and the span (additive to ZSR) is what a figure for
PEG in a medium carries.

Measured with the bundled catalog at 25 °C, PEG 8000 at 0.2 g/g water (additive -0.511 MPa alone):
mannitol 0.1 / 0.2 / 0.4 mol/kg adds a synergy (ZSR - additive) of -0.160 / -0.274 / -0.450 MPa;
NaCl 0.05 / 0.1 / 0.2 mol/kg adds -0.144 / -0.250 / -0.418 MPa.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import yaml

from mediaplan.thermo.mixing import MixtureInput, additive_osmolality, mixing_span, zsr_osmolality
from mediaplan.thermo.neutral import binary_osmolality, neutral_params_from_dict
from mediaplan.thermo.peg import peg_osmolality
from mediaplan.thermo.pitzer import PitzerSystem, pitzer_params_from_dict
from mediaplan.thermo.potential import potential_from_osmolality

REPO = Path(__file__).resolve().parents[2]
T25 = 298.15


@pytest.fixture(scope="module")
def neutral():
    with (REPO / "catalog" / "neutral.yaml").open(encoding="utf-8") as fh:
        return neutral_params_from_dict(yaml.safe_load(fh))


@pytest.fixture(scope="module")
def nacl():
    with (REPO / "catalog" / "pitzer.yaml").open(encoding="utf-8") as fh:
        return PitzerSystem(["Na[+]", "Cl[-]"], pitzer_params_from_dict(yaml.safe_load(fh)))


def _peg_with_mannitol(neutral, c, m):
    m = np.atleast_1d(np.asarray(m, dtype=float))
    return MixtureInput(None, None, [neutral["mannitol"]], m[:, None], [8000], np.full((m.size, 1), c), T25)


def _peg_with_nacl(nacl, c, m):
    m = np.atleast_1d(np.asarray(m, dtype=float))
    return MixtureInput(nacl, np.column_stack([m, m]), [], np.zeros((m.size, 0)), [8000],
                        np.full((m.size, 1), c), T25)


def _synergy_mpa(span):
    """ZSR minus additive water potential [MPa] (negative: lower than additive)."""
    return (potential_from_osmolality(span.zsr, T25) - potential_from_osmolality(span.additive, T25)) / 1e6


# PEG 8000 0.1-0.3 g/g water and the added solute at amounts used in plasmolysis and stress media
# (common practice)
CASES = [(c, kind, m) for c in (0.1, 0.2, 0.3) for kind, m in (("mannitol", 0.1), ("mannitol", 0.4),
                                                                 ("NaCl", 0.05), ("NaCl", 0.2))]


@pytest.mark.parametrize(("c", "kind", "m"), CASES, ids=[f"Michel1983-sign-PEG{c}-{k}{m}" for c, k, m in CASES])
def test_mixture_lower_than_additive(neutral, nacl, c, kind, m):
    """Michel 1983 (abstract): mannitol-PEG and NaCl-PEG water potentials are lower than additive."""
    inp = _peg_with_mannitol(neutral, c, m) if kind == "mannitol" else _peg_with_nacl(nacl, c, m)
    span = mixing_span(inp)
    assert float(span.zsr[0]) > float(span.additive[0])
    assert float(span.high[0]) == float(span.zsr[0]) and float(span.low[0]) == float(span.additive[0])
    # the synergy is a real share of the figure, not rounding: over 5 % of the additive potential
    assert abs(_synergy_mpa(span)[0]) > 0.05 * abs(potential_from_osmolality(span.additive[0], T25) / 1e6)


@pytest.mark.parametrize("kind", ["mannitol", "NaCl"])
def test_synergy_grows_with_added_solute_and_with_peg(neutral, nacl, kind):
    """Michel 1983 (abstract): the synergy grows with the solute added to PEG; more PEG, more synergy."""
    ms = np.array([0.025, 0.05, 0.1, 0.2]) if kind == "NaCl" else np.array([0.05, 0.1, 0.2, 0.4])
    build = _peg_with_mannitol if kind == "mannitol" else _peg_with_nacl
    arg = neutral if kind == "mannitol" else nacl
    last = None
    for c in (0.1, 0.2, 0.3):
        syn = _synergy_mpa(mixing_span(build(arg, c, ms)))
        assert np.all(np.diff(syn) < 0)             # more negative with more added solute
        if last is not None:
            assert np.all(syn < last)               # and with more PEG
        last = syn


@pytest.mark.xfail(strict=True, reason="ZSR's synergy is concave in the added solute (doubling mannitol "
                   "0.2 -> 0.4 mol/kg at PEG 0.2 g/g multiplies it by 1.64, not 2); Michel 1983 reports it "
                   "linear. His tables were not read, so the size of the difference is unknown.")
def test_synergy_linear_in_added_solute(neutral):
    """Michel 1983 (abstract): synergy linear in the concentration of the solute added with PEG."""
    ms = np.array([0.0, 0.05, 0.1, 0.2, 0.3, 0.4])
    syn = _synergy_mpa(mixing_span(_peg_with_mannitol(neutral, 0.2, ms)))
    A = np.column_stack([ms, np.ones_like(ms)])
    coef = np.linalg.lstsq(A, syn, rcond=None)[0]
    assert np.max(np.abs(A @ coef - syn)) <= 0.03 * np.ptp(syn)


def test_additive_is_the_sum_of_the_binary_figures(neutral, nacl):
    """The additive figure is each solute's own binary osmolality, summed (hand evaluation)."""
    c, m_man, m_nacl = 0.2, 0.3, 0.1
    inp = MixtureInput(nacl, np.array([[m_nacl, m_nacl]]), [neutral["mannitol"]], np.array([[m_man]]), [8000],
                       np.array([[c]]), T25)
    expected = (float(nacl.osmolality(np.array([m_nacl, m_nacl]), T25))
                + float(binary_osmolality(m_man, neutral["mannitol"])) + float(peg_osmolality(c, T25, 8000)))
    assert float(additive_osmolality(inp)[0]) == pytest.approx(expected, rel=1e-12)


def test_one_group_has_no_span(neutral, nacl):
    """A medium of one ZSR group: additive and ZSR are the same figure (nothing to mix)."""
    for inp in (_peg_with_mannitol(neutral, 0.25, 0.0), _peg_with_nacl(nacl, 0.0, 0.1),
                _peg_with_mannitol(neutral, 0.0, 0.3)):
        span = mixing_span(inp)
        assert float(span.additive[0]) == pytest.approx(float(span.zsr[0]), rel=1e-9)


def test_span_is_batched_like_zsr(neutral):
    ms = np.array([0.0, 0.1, 0.3])
    inp = _peg_with_mannitol(neutral, 0.2, ms)
    span = mixing_span(inp)
    assert span.additive.shape == span.zsr.shape == (3,)
    assert np.allclose(span.zsr, zsr_osmolality(inp).osmolality, rtol=0, atol=0)
    rows = [float(additive_osmolality(_peg_with_mannitol(neutral, 0.2, m))[0]) for m in ms]
    assert np.allclose(span.additive, rows, rtol=1e-13)
