"""ZSR mixing (mediaplan.thermo.mixing): one composition is solved on Python floats and a batch on numpy
arrays, by the same Newton function; the two must agree to 1e-12 over every kind of medium.

The compositions below are test inputs, not published values: salts near the macro salts of
Murashige & Skoog (1962) medium, strong single electrolytes, neutral solutes with and without a
published model, PEG 6000 and 8000, and mixtures of all three kinds, at 0, 25 and 40 °C.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from mediaplan.thermo import mixing
from mediaplan.thermo.mixing import MixtureInput, zsr_osmolality
from mediaplan.thermo.neutral import binary_osmolality, binary_osmolality_dm
from mediaplan.thermo.params import NeutralParams
from mediaplan.thermo.pitzer import PitzerSystem

#: agreement asked of the two paths (issue: "agree by construction ... to 1e-12 relative")
AGREE = 1e-12

# ions [mol/kg], neutral solutes [mol/kg], PEG [g PEG / g water]; "unmodelled" has no published model
# (ideal solution). MS-like macro salts: the salt mixture of benchmarks/bench_engine.py.
MS_SALTS = {"NH4[+]": 20.6e-3, "NO3[-]": 39.4e-3, "K[+]": 20.05e-3, "Ca[2+]": 2.99e-3, "Cl[-]": 5.98e-3,
            "Mg[2+]": 1.50e-3, "SO4[2-]": 1.50e-3, "H2PO4[-]": 1.25e-3}
COMPOSITIONS = {
    "ms_macro_salts": (MS_SALTS, {}, {}),
    "nacl_1_molal": ({"Na[+]": 1.0, "Cl[-]": 1.0}, {}, {}),
    "cacl2_strong": ({"Ca[2+]": 1.5, "Cl[-]": 3.0}, {}, {}),
    "kcl_trace": ({"K[+]": 1e-6, "Cl[-]": 1e-6}, {}, {}),
    "sucrose_mannitol": ({}, {"sucrose": 0.3, "mannitol": 0.2}, {}),
    "sucrose_concentrated": ({}, {"sucrose": 2.5}, {}),
    "glycerol_sorbitol_glucose": ({}, {"glycerol": 1.0, "sorbitol": 0.4, "glucose": 0.1}, {}),
    "trace_organics_ideal": ({}, {"myo_inositol": 5.5e-4, "glycine": 2.7e-5, "unmodelled": 3e-6,
                                  "mes": 2.6e-3}, {}),
    "peg8000": ({}, {}, {8000: 0.2}),
    "peg6000_and_8000": ({}, {}, {6000: 0.1, 8000: 0.15}),
    "peg_in_salt": ({"K[+]": 0.01, "Cl[-]": 0.01}, {}, {8000: 0.15}),
    "ms_with_sucrose": (MS_SALTS, {"sucrose": 0.0876, "myo_inositol": 5.5e-4, "glycine": 2.7e-5}, {}),
    "everything": (MS_SALTS, {"sucrose": 0.2, "mannitol": 0.3, "unmodelled": 1e-3}, {8000: 0.1}),
}
TEMPERATURES = {"0C": 273.15, "25C": 298.15, "40C": 313.15}
FIELDS = ("osmolality", "ideal", "electrolyte_phi", "electrolyte_phi_own", "fraction_electrolyte",
          "fraction_neutral", "fraction_peg")


def _input(catalog, comp: str, T: float, scale: float = 1.0) -> MixtureInput:
    ions, neutral, peg = COMPOSITIONS[comp]
    pitzer = PitzerSystem(list(ions), catalog.pitzer) if ions else None
    params = [catalog.neutral.get(sp) or NeutralParams(sp, "ideal", 0.0, math.inf, "none: ideal")
              for sp in neutral]
    return MixtureInput(pitzer, np.array([list(ions.values())]) * scale if ions else None, params,
                        np.array([list(neutral.values())]).reshape(1, -1) * scale, list(peg),
                        np.array([list(peg.values())]).reshape(1, -1) * scale, T)


def _stacked(inp: MixtureInput, rows: int) -> MixtureInput:
    def rep(a):
        return None if a is None else np.repeat(np.asarray(a), rows, axis=0)

    return MixtureInput(inp.pitzer, rep(inp.ion_m), inp.neutral, rep(inp.neutral_m), inp.peg_grades,
                        rep(inp.peg_c), inp.T)


def _assert_rows_agree(one, batch, row: int, rel: float = AGREE) -> None:
    for name in FIELDS:
        a = np.asarray(getattr(one, name))[0]
        b = np.asarray(getattr(batch, name))[row]
        np.testing.assert_allclose(a, b, rtol=rel, atol=1e-300, err_msg=name)


@pytest.mark.parametrize("T", list(TEMPERATURES.values()), ids=list(TEMPERATURES))
@pytest.mark.parametrize("comp", list(COMPOSITIONS))
def test_float_path_agrees_with_the_batched_path(catalog, comp, T):
    inp = _input(catalog, comp, T)
    one = zsr_osmolality(inp)
    batch = zsr_osmolality(_stacked(inp, 3))
    assert one.state is not None and batch.state is None  # the float path ran for one row, arrays for three
    assert one.osmolality[0] > 0 and math.isfinite(one.osmolality[0])
    for row in range(3):
        _assert_rows_agree(one, batch, row)


@pytest.mark.parametrize("comp", ["ms_macro_salts", "sucrose_mannitol", "peg_in_salt", "everything"])
def test_each_row_of_a_mixed_batch_is_the_row_solved_alone(catalog, comp):
    """A batch of different strengths (as a sweep or a series grid makes) gives each row its own answer:
    rows that settle early keep their solution while the others go on."""
    T = TEMPERATURES["25C"]
    scales = [0.0, 1e-3, 0.5, 1.0, 3.0]
    alone = [zsr_osmolality(_input(catalog, comp, T, s)) for s in scales]
    rows = [_input(catalog, comp, T, s) for s in scales]
    batch = zsr_osmolality(MixtureInput(
        rows[0].pitzer, None if rows[0].ion_m is None else np.vstack([r.ion_m for r in rows]), rows[0].neutral,
        np.vstack([r.neutral_m for r in rows]), rows[0].peg_grades, np.vstack([r.peg_c for r in rows]), T))
    for i, one in enumerate(alone):
        # osmolality and shares to 1e-12; the electrolyte φ at the ZSR state of a row that settled early
        # is refreshed once more by the rows still moving: it agrees to the Pitzer step's tolerance
        for name in ("osmolality", "ideal", "fraction_electrolyte", "fraction_neutral", "fraction_peg"):
            np.testing.assert_allclose(np.asarray(getattr(one, name))[0], np.asarray(getattr(batch, name))[i],
                                       rtol=AGREE, atol=1e-300, err_msg=f"{name}, scale {scales[i]}")
        np.testing.assert_allclose(one.electrolyte_phi[0], batch.electrolyte_phi[i], rtol=mixing._PHI_TOL)


def test_pure_water_on_both_paths(catalog):
    inp = _input(catalog, "everything", 298.15, 0.0)
    for res in (zsr_osmolality(inp), zsr_osmolality(_stacked(inp, 2))):
        assert res.osmolality[0] == 0.0 and res.fraction_electrolyte[0] == 0.0
        assert np.all(res.fraction_neutral[0] == 0.0) and np.all(res.fraction_peg[0] == 0.0)
        assert res.ideal[0] == 0.0


@pytest.mark.parametrize("comp", ["ms_macro_salts", "ms_with_sucrose", "peg_in_salt", "everything",
                                  "sucrose_mannitol", "trace_organics_ideal", "peg8000"])
def test_warm_start_at_another_temperature_is_the_cold_solve(catalog, comp):
    """evaluate() solves the medium at 0 °C (the freezing-point osmometer) from its 25 °C state."""
    warm_from = zsr_osmolality(_input(catalog, comp, 298.15))
    cold = zsr_osmolality(_input(catalog, comp, 273.15))
    warm = zsr_osmolality(_input(catalog, comp, 273.15), start=warm_from.state)
    for name in ("osmolality", "fraction_electrolyte", "fraction_neutral", "fraction_peg"):
        np.testing.assert_allclose(np.asarray(getattr(warm, name))[0], np.asarray(getattr(cold, name))[0],
                                   rtol=AGREE, atol=1e-300, err_msg=name)


def test_electrolytes_past_pitzer_range_give_no_answer_on_either_path(catalog):
    """KCl 0.1 mol/kg beside PEG 8000 at 10.9 g/g: the ZSR state asks the electrolytes for an osmolality
    where Pitzer's φ turns negative. Both paths answer NaN (the float path used to raise ValueError: math
    domain error, and the series designer with it)."""
    pitzer = PitzerSystem(["K[+]", "Cl[-]"], catalog.pitzer)
    inp = MixtureInput(pitzer, np.array([[0.1, 0.1]]), [], np.zeros((1, 0)), [8000], np.array([[10.9]]), 293.15)
    one = zsr_osmolality(inp)
    batch = zsr_osmolality(_stacked(inp, 2))
    assert math.isnan(one.osmolality[0]) and np.all(np.isnan(batch.osmolality))
    # the same salt with a sane amount of PEG beside it, in the same batch, still has its answer
    ok = MixtureInput(pitzer, np.array([[0.1, 0.1], [0.1, 0.1]]), [], np.zeros((2, 0)), [8000],
                      np.array([[10.9], [0.2]]), 293.15)
    mixed = zsr_osmolality(ok)
    assert math.isnan(mixed.osmolality[0]) and math.isfinite(mixed.osmolality[1])
    alone = zsr_osmolality(MixtureInput(pitzer, np.array([[0.1, 0.1]]), [], np.zeros((1, 0)), [8000],
                                        np.array([[0.2]]), 293.15))
    assert mixed.osmolality[1] == pytest.approx(alone.osmolality[0], rel=AGREE)


@pytest.mark.parametrize("species", ["sucrose", "mannitol", "glycerol", "myo_inositol"])
def test_neutral_binary_equations_are_those_of_the_neutral_module(catalog, species):
    """The Newton system writes the Norrish osmolality and its slope once for floats and arrays; they
    are the equations of mediaplan.thermo.neutral (same operations: equal to rounding)."""
    p = catalog.neutral[species]
    m = np.array([1e-6, 0.01, 0.3, 1.0, 3.0])
    o, d = mixing._binary(mixing._ARRAYS, True, float(p.K), m, 298.15)
    np.testing.assert_allclose(o, binary_osmolality(m, p), rtol=1e-15)
    np.testing.assert_allclose(d, binary_osmolality_dm(m, p), rtol=1e-15)
    for mi in m:
        of, df = mixing._binary(mixing._FLOATS, True, float(p.K), float(mi), 298.15)
        assert of == pytest.approx(float(binary_osmolality(mi, p)), rel=1e-15)
        assert df == pytest.approx(float(binary_osmolality_dm(mi, p)), rel=1e-15)


def test_solutes_sharing_a_binary_model_form_one_group(catalog):
    """Solutes with one binary model (here several without a published model: ideal) have one isopiestic
    molality; each keeps its own share m_j / x of the osmolality."""
    ideal = [NeutralParams(f"x{i}", "ideal", 0.0, math.inf, "none") for i in range(4)]
    m = np.array([[0.01, 0.02, 0.03, 0.04]])
    res = zsr_osmolality(MixtureInput(None, None, ideal, m, [], np.zeros((1, 0)), 298.15))
    together = zsr_osmolality(MixtureInput(None, None, ideal[:1], m.sum(axis=1, keepdims=True), [],
                                           np.zeros((1, 0)), 298.15))
    assert res.osmolality[0] == pytest.approx(together.osmolality[0], rel=AGREE)
    np.testing.assert_allclose(res.fraction_neutral[0], m[0] / m.sum(), rtol=AGREE)
