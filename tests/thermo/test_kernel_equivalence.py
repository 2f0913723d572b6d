"""The fast Pitzer kernel gives the answers of the full one.

``PitzerSystem.scaled`` takes one full pass over the ion pairs and triplets of a composition and then only
rescales its sums (pairs as t², triplets and Z·pairs as t³, I and the group totals as t), and carries them
to another temperature through their temperature derivatives. The ZSR solver asks it at every step. Here:

- the scaled φ against a full pass at the scaled molalities, one row and batches, at 0, 25 and 40 °C, and a
  pass made at 25 °C carried to 0 and 40 °C: 1e-12 relative (rounding is about 1e-15); a row alone and
  inside a batch: the same bits;
- ZSR and ``evaluate()`` with the scaled kernel against the same solver with a full Pitzer pass at every
  step (the method before the kernel was added), over the media of the published-value checks
  (tests/medium/test_engine_published.py) and the compositions of tests/thermo/test_mixing.py: 1e-12.

The compositions are test inputs (MS-like macro salts, strong single salts, seawater-like), not
published values; the published-value checks themselves run unchanged in their own files.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.thermo.mixing import zsr_osmolality
from mediaplan.thermo.pitzer import PitzerSystem
from tests.thermo.test_mixing import COMPOSITIONS, FIELDS, TEMPERATURES, _input, _stacked

#: agreement asked of the scaled kernel (issue 16: "identical to 3e-16" measured; 1e-12 asked)
AGREE = 1e-12

IONS = {  # test inputs [mol/kg]
    "ms_macro_salts": {"NH4[+]": 20.6e-3, "NO3[-]": 39.4e-3, "K[+]": 20.05e-3, "Ca[2+]": 2.99e-3,
                       "Cl[-]": 5.98e-3, "Mg[2+]": 1.50e-3, "SO4[2-]": 1.50e-3, "H2PO4[-]": 1.25e-3},
    "seawater_like": {"Na[+]": 0.486, "K[+]": 0.0106, "Mg[2+]": 0.0547, "Ca[2+]": 0.0107, "Cl[-]": 0.566,
                      "SO4[2-]": 0.0293},
    "mgso4_strong": {"Mg[2+]": 1.0, "SO4[2-]": 1.0},
    "nacl_dilute": {"Na[+]": 1e-4, "Cl[-]": 1e-4},
}
SCALES = [1e-3, 0.1, 0.5, 0.999, 1.0, 1.7, 4.0]


def _full(system: PitzerSystem, m0: np.ndarray, T: float):
    """φ(t) by a full pass at t·m0 (the method the scaled kernel replaces)."""
    return lambda t: system.osmotic_coefficient(m0 * (np.asarray(t, dtype=float)[..., None] if np.ndim(t) else t), T)


@pytest.fixture
def full_pass_per_step(monkeypatch):
    """PitzerSystem.scaled replaced by a full pass at each call, as the solver ran before the kernel."""
    def scaled(self, m0, T):
        full = _full(self, np.asarray(m0, dtype=float), T)
        return (lambda t: float(full(t))) if np.ndim(m0) == 1 else full
    monkeypatch.setattr(PitzerSystem, "scaled", scaled)


@pytest.mark.parametrize("T", list(TEMPERATURES.values()), ids=list(TEMPERATURES))
@pytest.mark.parametrize("comp", list(IONS))
def test_scaled_phi_is_the_full_pass(catalog, comp, T):
    system = PitzerSystem(list(IONS[comp]), catalog.pitzer)
    m0 = np.array(list(IONS[comp].values()))
    one = system.scaled(m0, T)
    for t in SCALES:
        assert one(t) == pytest.approx(float(system.osmotic_coefficient(t * m0, T)), rel=AGREE, abs=0)
    rows = np.vstack([m0, 0.5 * m0, np.zeros_like(m0), 3.0 * m0])
    batch = system.scaled(rows, T)
    for s in SCALES:
        t = np.array([s, 2.0 * s, s, s / 3.0])
        np.testing.assert_allclose(batch(t), system.osmotic_coefficient(rows * t[:, None], T), rtol=AGREE, atol=0)
        assert batch(t)[2] == 1.0  # pure water
        # a row and the same row inside a batch: the same bits (the sums run in one fixed order)
        assert batch(t)[0] == one(s) and batch(t)[1] == system.scaled(0.5 * m0, T)(2.0 * s)


@pytest.mark.parametrize("comp", list(IONS))
def test_a_row_and_a_batch_give_the_same_bits_over_many_scales(catalog, comp):
    """One row's φ (its arithmetic written out on Python floats) and the batch's (numpy arrays) over 200
    scales from 1e-4 to 10 and three temperatures, each from its own full pass: the same bits, not merely
    close. (A row's pass carried from another temperature agrees to rounding only: see the test below.)"""
    m0 = np.array(list(IONS[comp].values()))
    scales = np.geomspace(1e-4, 10.0, 200)
    for T in (273.15, 298.15, 310.15):
        system = PitzerSystem(list(IONS[comp]), catalog.pitzer)
        one = system.scaled(m0, T)
        batch = system.scaled(np.tile(m0, (scales.size, 1)), T)(scales)
        assert [one(float(t)) for t in scales] == batch.tolist()


@pytest.mark.parametrize("T", [273.15, 277.15, 313.15])
@pytest.mark.parametrize("comp", list(IONS))
def test_a_pass_carried_to_another_temperature(catalog, comp, T):
    """The medium's pass at 25 °C serves the 0 °C solve of the freezing-point figure (no second pass)."""
    system = PitzerSystem(list(IONS[comp]), catalog.pitzer)
    m0 = np.array(list(IONS[comp].values()))
    system.scaled(m0, 298.15)
    carried = system.scaled(m0, T)  # the same composition: the 25 °C pass, carried to T
    for t in SCALES:
        assert carried(t) == pytest.approx(float(system.osmotic_coefficient(t * m0, T)), rel=AGREE, abs=0)


@pytest.mark.parametrize("T", list(TEMPERATURES.values()), ids=list(TEMPERATURES))
@pytest.mark.parametrize("comp", [c for c, v in COMPOSITIONS.items() if v[0]])
def test_zsr_with_the_scaled_kernel_is_zsr_with_full_passes(catalog, comp, T, monkeypatch):
    fast_one = zsr_osmolality(_input(catalog, comp, T))
    fast_batch = zsr_osmolality(_stacked(_input(catalog, comp, T, 0.7), 2))
    with monkeypatch.context() as mp:
        def scaled(self, m0, T):
            full = _full(self, np.asarray(m0, dtype=float), T)
            return (lambda t: float(full(t))) if np.ndim(m0) == 1 else full
        mp.setattr(PitzerSystem, "scaled", scaled)
        slow_one = zsr_osmolality(_input(catalog, comp, T))
        slow_batch = zsr_osmolality(_stacked(_input(catalog, comp, T, 0.7), 2))
    for fast, slow in ((fast_one, slow_one), (fast_batch, slow_batch)):
        for name in FIELDS:
            np.testing.assert_allclose(np.asarray(getattr(fast, name)), np.asarray(getattr(slow, name)),
                                       rtol=AGREE, atol=1e-300, err_msg=name)


# the media of the published-value checks (tests/medium/test_engine_published.py) and two more temperatures
PUBLISHED_MEDIA = {
    "ms_macro_salts": [("NH4NO3", "1650 mg/L"), ("KNO3", "1900 mg/L"), ("CaCl2·2H2O", "440 mg/L"),
                       ("MgSO4·7H2O", "370 mg/L"), ("KH2PO4", "170 mg/L")],
    "ms_like_pyeql": [("NH4NO3", "20.6 mmol/kg"), ("KNO3", "18.8 mmol/kg"), ("CaCl2", "2.99 mmol/kg"),
                      ("MgSO4", "1.50 mmol/kg"), ("KH2PO4", "1.25 mmol/kg")],
    "nacl_crc": [("sodium_chloride", "0.5 mol/kg")],
    "sucrose_crc": [("sucrose", "1.0 mol/kg")],
}


def _published_recipes():
    out = {}
    for name, items in PUBLISHED_MEDIA.items():
        for temp in ("25 degC", "4 degC"):
            r = Recipe(temperature=temp)
            for cid, amount in items:
                r = r.with_amount(cid, amount)
            out[f"{name}-{temp}"] = r
    out["ms1962"] = Recipe(base="ms1962")
    out["ms1962-half"] = Recipe(base="ms1962", strength=0.5)
    return out


RECIPES = _published_recipes()


def _figures(ev) -> list[float]:
    d = ev.to_dict()
    figs = [v for v in d.values() if isinstance(v, float)]
    for c in d["components"]:
        figs += [c["molality_mmol_per_kg"], c["osmolality_mosmol_per_kg"], c["share"]]
    return figs


@pytest.mark.parametrize("name", list(RECIPES))
def test_evaluate_with_the_scaled_kernel_is_evaluate_with_full_passes(catalog, name, full_pass_per_step,
                                                                     monkeypatch):
    slow = _figures(evaluate(RECIPES[name], catalog))
    monkeypatch.undo()  # the scaled kernel again
    from mediaplan.medium import model as _model
    _model._MODEL_CACHE.clear()  # fresh Pitzer systems: nothing carried over from the slow run
    fast = _figures(evaluate(RECIPES[name], catalog))
    assert len(fast) == len(slow)
    for a, b in zip(fast, slow, strict=True):
        assert a == pytest.approx(b, rel=AGREE, abs=1e-300) or (math.isnan(a) and math.isnan(b))
