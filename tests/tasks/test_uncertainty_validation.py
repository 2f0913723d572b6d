"""Out-of-sample checks of the uncertainty budget's model error (mediaplan.tasks.uncertainty.MODEL_ERROR).

tests/tasks/test_uncertainty.py checks the budget on the CRC Handbook rows its constants were set on: a
calibration. Here are the two checks on data the constants did not see.

1. Leave one solute out. The rule that turns rows into constants is written out (:func:`rule_b`): a is
   judgement (the CRC table's 0.005 K rounding is 1.5-10 % of its dilute rows, so the rows cannot set it),
   b the smallest on a 0.0005 grid such that 1.96 (a + b y0) of each row's freezing-point depression, plus
   the rounding, covers at least 95 % of the class's rows. Applied to all rows of a class it gives the
   shipped b. For each solute, b is derived again from the OTHER solutes of its class and the left-out
   solute's rows are checked. Measured (rows up to 2.5 osmol/kg, CRC 102nd ed. 2021):
     electrolytes  NaCl 8/8 (b = 0.0065), KCl 5/5 (0.0065), CaCl2 2/5 (b = 0 from NaCl and KCl alone)
     Norrish       sucrose 16/16, glucose 13/13, fructose 13/13, mannitol 13/13 (each b = 0.008),
                   glycerol 2/8 (b = 0.0025 from the sugars; one of its misses is the 0.5 % row that
                   tests/thermo/test_neutral.py treats as a misprint)
     overall       72 of 81 rows, 89 %: a solute unlike the others of its class (CaCl2, the one 2:1 salt;
                   glycerol, the one small polyol) is covered worse than the pooled calibration says.
   (A two-parameter narrowest-interval rule drives a to 0: b = 0.0115 for the electrolytes, 0.010 for the
   Norrish class. For media-strength salts (0.09 osmol/kg) its 95 % half-width is 0.2 %, narrower than two
   Pitzer implementations with the same parameters differ: the pyEQL mixture below, 0.28 % away, falls
   outside. The held-out salt rows fare the same under both rules.)

2. Published values never used to set the constants, computed through the whole engine (recipe ->
   evaluate -> budget with Tolerances.exact(): model error only, the solutions being exact):
   - CRC Handbook (102nd ed., 2021) freezing points of KNO3, NaNO3 and KH2PO4, as transcribed for the
     Pitzer temperature terms in tests/thermo/test_pitzer_temperature.py (reused, not transcribed again).
     The temperature terms were taken from Pitzer (1991) tables, not fitted to these rows. No NH4NO3 rows
     are transcribed in the project: none is checked.
   - pyEQL 1.7.0 (native engine) for an MS-like salt mixture, 86.0 mOsm/kg at 25 °C (project reference
     notes). Weakness: another implementation with the SAME May et al. (2011) parameters, ions paired into
     salts by a rule of thumb: it checks the mixture sum, not the parameters' own error; a calculation, not
     a measurement.
   - MS salts about -0.21 MPa (Kozai et al., book chapter on the water potential of culture media; two
     figures, so ±0.005 MPa). Weakness: a calculation of unstated method, to two figures.
   Measured: KNO3 4/11 (inside up to 0.31 mol/kg; the model is 2.4-6.0 % high from 0.41 mol/kg, while the
   interval is 1.8-3.0 %), NaNO3 10/10, KH2PO4 20/20, pyEQL inside, Kozai inside: 36 of 43, 84 %. The
   intervals are too narrow for KNO3 beyond 0.3 mol/kg, a gap of that pair's parameters at 0 °C (25 °C set
   plus first temperature derivatives only): covering it by the class constants would take b = 0.015
   and widen every other salt's interval at 2 osmol/kg about twofold (1.9x). The strict xfail below records it.
   Excluded: the NaCl osmotic coefficients of Pitzer, Peiper & Busey (1984): the Pitzer NaCl parameters were
   fitted to the same isopiestic data, so they would check the model on its own fitting data; MS with 30 g/L
   sucrose "near -0.4 MPa" (Kozai et al., one figure: ±0.05 MPa, 12 %) is too coarse to test an interval of
   about 2 %; the E-AIM NH4NO3/NaNO3 example (thermo_sources.yaml) is a model, at 10 mol/kg.

Each fold's b is compared with the shipped one: the shipped u is nowhere below 0.75 times a fold's u from
0.05 to 2.5 osmol/kg (measured: at most 21 % below, the Norrish folds' b = 0.008 at 2.4 osmol/kg; the 95 %
rule on 50 rows tolerates two misses, on 63 three, so leaving a sugar out raises b).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pytest
from scipy.optimize import brentq

from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.uncertainty import MODEL_ERROR, Tolerances, budget, model_error
from mediaplan.thermo import potential
from tests.thermo.test_pitzer_temperature import CRC_KH2PO4, CRC_KNO3, CRC_NANO3

#: CRC solute name -> (catalog id, class in MODEL_ERROR); maltose (a borrowed constant, set by judgement)
#: takes no part in the rule
SOLUTES = {"Sodium chloride": ("sodium_chloride", "electrolyte"),
           "Potassium chloride": ("potassium_chloride", "electrolyte"),
           "Calcium chloride": ("calcium_chloride_anhydrous", "electrolyte"),
           "Sucrose": ("sucrose", "norrish"), "D-Glucose": ("glucose", "norrish"),
           "D-Fructose": ("fructose", "norrish"), "D-Mannitol": ("mannitol", "norrish"),
           "Glycerol": ("glycerol", "norrish")}
#: the CRC prints the depression to 0.01 K (as tests/tasks/test_uncertainty.py)
ROUNDING_K = 0.005
#: rows up to this osmolality [osmol/kg] (as tests/tasks/test_uncertainty.py)
Y_MAX = 2.5
#: the grid of b [1/(osmol/kg)] the rule searches
GRID = np.round(np.arange(0.0, 0.0301, 0.0005), 4)
#: the share of a class's rows 1.96 u must cover
TARGET = 0.95


@dataclass(frozen=True)
class Row:
    """One binary solution: its published freezing-point depression and the engine's.

    theta_pub, theta_model : [K]; y0 : the model's osmolality at the freezing point [osmol/kg];
    k : the budget's 95 % half-width of the depression per unit of relative model error [K]
    (half-width = k · u(y0), exact: the class's model error is the budget's only source here)
    """

    solute: str
    kind: str
    m: float
    theta_pub: float
    theta_model: float
    y0: float
    k: float


def _y_at_freezing(theta: float) -> float:
    """The osmolality [osmol/kg] whose water activity freezes at a depression theta [K]."""
    return brentq(lambda y: float(potential.freezing_point_depression(potential.water_activity(y))) - theta,
                  1e-9, 20.0, xtol=1e-13)


def _row(catalog, solute: str, kind: str, cid: str, m: float, theta_pub: float) -> Row | None:
    r = Recipe().with_amount(cid, f"{m} mol/kg")
    ev = evaluate(r, catalog)
    if ev.osmometer_mosmol_per_kg / 1000.0 > Y_MAX:
        return None
    b = budget(r, catalog, tolerances=Tolerances.exact(), evaluation=ev)
    assert [c.source for c in b.contributions if c.sd_osmometer_mosmol_per_kg > 0] == [MODEL_ERROR[kind][2]]
    iv = b.freezing_point_depression
    y0 = _y_at_freezing(iv.value)
    return Row(solute, kind, m, theta_pub, iv.value, y0, iv.half_width() / model_error(kind, y0))


@pytest.fixture(scope="module")
def crc_rows(catalog) -> list[Row]:
    """The CRC rows the constants were set on (tests/data/crc_*_subset.tsv), up to Y_MAX."""
    from tests.tasks.test_uncertainty import _crc_rows

    out = []
    for solute, m, fpd in _crc_rows():
        if solute in SOLUTES:
            cid, kind = SOLUTES[solute]
            row = _row(catalog, solute, kind, cid, m, fpd)
            if row is not None:
                out.append(row)
    return out


def covered(rows: list[Row], a: float, b: float) -> np.ndarray:
    """Which rows lie inside 1.96 (a + b y0) of the model's depression, widened by the table's rounding."""
    err = np.array([abs(r.theta_model - r.theta_pub) for r in rows])
    half = np.array([r.k * (a + b * r.y0) for r in rows])
    return err <= half + ROUNDING_K


def rule_b(rows: list[Row], a: float) -> float:
    """The rule that sets a class's b: the smallest b on GRID whose intervals cover TARGET of the rows."""
    for b in GRID:
        if covered(rows, a, float(b)).mean() >= TARGET:
            return float(b)
    raise AssertionError("no b on the grid covers the rows")


@pytest.fixture(scope="module")
def folds(crc_rows):
    """solute -> (kind, b derived without it, how many of its rows that covers, how many rows)."""
    out = {}
    for solute, (_, kind) in SOLUTES.items():
        a = MODEL_ERROR[kind][0]
        train = [r for r in crc_rows if r.kind == kind and r.solute != solute]
        test = [r for r in crc_rows if r.solute == solute]
        b = rule_b(train, a)
        out[solute] = (kind, b, int(covered(test, a, b).sum()), len(test))
    return out


def test_the_rule_gives_the_shipped_constants(crc_rows):
    """Applied to all of a class's CRC rows, the rule gives the b that is shipped."""
    for kind in ("electrolyte", "norrish"):
        a, b = MODEL_ERROR[kind][:2]
        rows = [r for r in crc_rows if r.kind == kind]
        assert len(rows) >= 15
        assert rule_b(rows, a) == pytest.approx(b, abs=1e-12), kind


def test_leave_one_solute_out(folds):
    """Each solute's rows checked with b derived from the other solutes of its class (figures in the module
    docstring): 89 % overall, each class at least 80 %, and every solute but the two unlike their class
    (CaCl2, glycerol) fully covered."""
    inside = sum(f[2] for f in folds.values())
    total = sum(f[3] for f in folds.values())
    assert total >= 75
    assert inside / total >= 0.85, folds
    for kind in ("electrolyte", "norrish"):
        k_in = sum(f[2] for f in folds.values() if f[0] == kind)
        k_all = sum(f[3] for f in folds.values() if f[0] == kind)
        assert k_in / k_all >= 0.80, (kind, folds)
    for solute, (_, _, n_in, n) in folds.items():
        if solute not in ("Calcium chloride", "Glycerol"):
            assert n_in == n, (solute, folds[solute])


def test_shipped_constants_not_narrower_than_the_folds(folds):
    """The shipped u is at least 0.75 times every fold's u over the range of media and series (0.05 to
    2.5 osmol/kg): the shipped constants do not rest on one lucky solute (measured: at most 21 % below)."""
    y = np.linspace(0.05, Y_MAX, 50)
    for solute, (kind, b, _, _) in folds.items():
        a, b_shipped = MODEL_ERROR[kind][:2]
        assert np.all(a + b_shipped * y >= 0.75 * (a + b * y)), (solute, b, b_shipped)


# ---- published values never used to set the constants ------------------------------------------------------
HELD_OUT = {"KNO3": CRC_KNO3, "NaNO3": CRC_NANO3, "KH2PO4": CRC_KH2PO4}  # CRC 102nd ed. (2021), see docstring


@pytest.fixture(scope="module")
def held_out(catalog) -> dict[str, list[bool]]:
    """salt -> which of its CRC rows lie inside the budget's 95 % interval of the freezing-point depression
    (the table's 0.005 K rounding allowed for, as for the calibration rows)."""
    out: dict[str, list[bool]] = {}
    for salt, rows in HELD_OUT.items():
        flags = []
        for m, theta in rows:
            r = Recipe().with_amount(salt, f"{m} mol/kg")
            iv = budget(r, catalog, tolerances=Tolerances.exact()).freezing_point_depression
            flags.append(iv.low - ROUNDING_K <= theta <= iv.high + ROUNDING_K)
        out[salt] = flags
    return out


def _ms_salts(catalog, items):
    r = Recipe()
    for k, v in items:
        r = r.with_amount(k, v)
    return budget(r, catalog, tolerances=Tolerances.exact())


@pytest.fixture(scope="module")
def mixtures(catalog) -> dict[str, bool]:
    """The two published mixture figures, each inside its budget's 95 % interval or not."""
    pyeql = _ms_salts(catalog, [("NH4NO3", "20.6 mmol/kg"), ("KNO3", "18.8 mmol/kg"), ("CaCl2", "2.99 mmol/kg"),
                                ("MgSO4", "1.50 mmol/kg"), ("KH2PO4", "1.25 mmol/kg")])
    # pyEQL 1.7.0, native engine, 25 °C: 86.0 mOsm/kg (project reference notes), printed to 0.05 mOsm/kg
    pyeql_in = pyeql.osmolality.low - 0.05 <= 86.0 <= pyeql.osmolality.high + 0.05
    kozai = _ms_salts(catalog, [("NH4NO3", "1650 mg/L"), ("KNO3", "1900 mg/L"), ("CaCl2·2H2O", "440 mg/L"),
                                ("MgSO4·7H2O", "370 mg/L"), ("KH2PO4", "170 mg/L")])
    # Kozai et al.: MS salts about -0.21 MPa, two figures (±0.005 MPa)
    kozai_in = kozai.osmotic_potential.low - 0.005 <= -0.21 <= kozai.osmotic_potential.high + 0.005
    return {"pyEQL 1.7.0 MS-like mixture": pyeql_in, "Kozai et al. MS salts": kozai_in}


def test_held_out_salts_inside(held_out):
    """NaNO3 and KH2PO4 entirely inside; KNO3 inside up to 0.31 mol/kg (the media range: MS has 0.019)."""
    assert all(held_out["NaNO3"]) and all(held_out["KH2PO4"]), held_out
    kno3 = [ok for (m, _), ok in zip(CRC_KNO3, held_out["KNO3"], strict=True) if m <= 0.31]
    assert len(kno3) >= 4 and all(kno3)


@pytest.mark.xfail(reason="KNO3 freezing points 2.4-6.0 % above the CRC from 0.41 mol/kg, interval 1.8-3.0 %: "
                          "the pair's parameters at 0 °C, not covered by the class constants", strict=True)
def test_held_out_kno3_inside_everywhere(held_out):
    assert all(held_out["KNO3"])


def test_held_out_mixtures_inside(mixtures):
    assert all(mixtures.values()), mixtures


def test_held_out_coverage_overall(held_out, mixtures):
    """All held-out values together: 36 of 43 inside (84 %) against the 95 % the intervals claim; the seven
    misses are the KNO3 rows from 0.41 mol/kg (the strict xfail above). Asserted: at least 80 % overall, and
    95 % once KNO3 above 0.31 mol/kg is set aside."""
    flags = [ok for v in held_out.values() for ok in v] + list(mixtures.values())
    assert len(flags) >= 40
    assert sum(flags) / len(flags) >= 0.80, (sum(flags), len(flags))
    rest = [ok for salt, v in held_out.items() for (m, _), ok in zip(HELD_OUT[salt], v, strict=True)
            if not (salt == "KNO3" and m > 0.31)] + list(mixtures.values())
    assert sum(rest) / len(rest) >= 0.95, (sum(rest), len(rest))
