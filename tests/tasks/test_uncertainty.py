"""The uncertainty budget: calibrated against published values, not inflated, and right in a known linear case.

Calibration data: the CRC Handbook of Chemistry and Physics, 102nd ed. (2021), "Concentrative properties of
aqueous solutions", freezing-point depressions printed to 0.01 K (tests/data/crc_concentrative_subset.tsv,
tests/data/crc_salts_subset.tsv). Neither parameter set was fitted to these freezing points (Pitzer: isopiestic
osmotic coefficients at 25 °C; Norrish: water activities near 25 °C). The per-class error table
(``MODEL_ERROR``) was set on these rows, so the coverage checked here is a calibration (the table describes
these errors honestly), not a validation on unseen data; the pyEQL value below was not used. The out-of-sample
checks (leave one solute out; published values never used to set the table) are in
tests/tasks/test_uncertainty_validation.py.
"""

from __future__ import annotations

import csv
import math
import statistics
from pathlib import Path

import pytest

from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.plasmolysis import design_series
from mediaplan.tasks.plasmolysis.fit import combine_with_levels
from mediaplan.tasks.solve import solve_target
from mediaplan.tasks.uncertainty import (
    MODEL_ERROR,
    Z95,
    Interval,
    Tolerances,
    budget,
    level_budgets,
    level_potential_intervals,
    model_error,
    solve_ranges,
    tolerances_with,
)
from mediaplan.thermo.constants import M_WATER, R
from mediaplan.thermo.water import molar_volume

DATA = Path(__file__).resolve().parents[1] / "data"
IDS = {"Sucrose": "sucrose", "D-Mannitol": "mannitol", "D-Glucose": "glucose", "D-Fructose": "fructose",
       "Glycerol": "glycerol", "Maltose": "maltose", "Sodium chloride": "sodium_chloride",
       "Potassium chloride": "potassium_chloride", "Calcium chloride": "calcium_chloride_anhydrous"}
#: the printed precision of the table's freezing points [K] (0.01 K: a value may be off by half of it)
ROUNDING_K = 0.005
#: rows up to this osmolality [osmol/kg]: culture media and plasmolysis series (to about -6 MPa)
Y_MAX = 2.5


def _crc_rows():
    out = []
    for name in ("crc_concentrative_subset.tsv", "crc_salts_subset.tsv"):
        with (DATA / name).open(encoding="utf-8") as fh:
            rows = [r for r in csv.reader(fh, delimiter="\t") if r and not r[0].startswith("#")]
        head = rows[0]
        for r in rows[1:]:
            d = dict(zip(head, r, strict=False))
            if d.get("FPD_C"):
                out.append((d["Solute"], float(d["Molality_m"]), float(d["FPD_C"])))
    return out


@pytest.fixture(scope="module")
def crc_cases(catalog):
    """(solute, m [mol/kg], CRC FPD [K], budget of the binary solution, model alone) for every CRC row up to
    Y_MAX: the handbook's solutions are made exactly, so only the model's own error counts."""
    cases = []
    for solute, m, fpd in _crc_rows():
        r = Recipe().with_amount(IDS[solute], f"{m} mol/kg")
        ev = evaluate(r, catalog)
        if ev.osmometer_mosmol_per_kg / 1000.0 > Y_MAX:
            continue
        cases.append((solute, m, fpd, budget(r, catalog, tolerances=Tolerances.exact(), evaluation=ev)))
    return cases


def test_about_95_percent_of_crc_freezing_points_fall_inside(crc_cases):
    """Coverage of the 95 % interval of the freezing-point depression (widened by the table's 0.005 K
    rounding): 90-100 % of the rows, about 95 % expected (measured: 94 of 97 rows, 97 %; a calibration: the
    table was set on these rows)."""
    inside = [b.freezing_point_depression.low - ROUNDING_K <= fpd <= b.freezing_point_depression.high + ROUNDING_K
              for _, _, fpd, b in crc_cases]
    assert len(inside) >= 60
    share = sum(inside) / len(inside)
    missed = [(s, m, fpd) for (s, m, fpd, _), ok in zip(crc_cases, inside, strict=True) if not ok]
    assert 0.90 <= share <= 1.0, (share, missed)


@pytest.mark.parametrize("kind, solutes", [
    ("electrolyte", {"Sodium chloride", "Potassium chloride", "Calcium chloride"}),
    ("norrish", {"Sucrose", "D-Mannitol", "D-Glucose", "D-Fructose", "Glycerol"}),
])
def test_each_class_covers_its_own_rows(crc_cases, kind, solutes):
    """Per class, at least 85 % of its CRC rows inside (a class can be off while the pool looks right)."""
    rows = [(fpd, b) for s, _, fpd, b in crc_cases if s in solutes]
    inside = [b.freezing_point_depression.low - ROUNDING_K <= fpd <= b.freezing_point_depression.high + ROUNDING_K
              for fpd, b in rows]
    assert len(rows) >= 15 and sum(inside) / len(inside) >= 0.85, (kind, sum(inside), len(inside))


def test_intervals_are_not_inflated(crc_cases):
    """The median relative half-width is at most 3x the median relative error observed (rows of 0.2 K and more,
    where the table's rounding is under 2.5 %): a normal error and an honest 95 % interval give 1.96/0.674 =
    2.9x (measured: 2.5x)."""
    big = [(fpd, b) for _, _, fpd, b in crc_cases if fpd >= 0.2]
    half = statistics.median(b.freezing_point_depression.half_width() / b.freezing_point_depression.value
                             for _, b in big)
    err = statistics.median(abs(b.freezing_point_depression.value - fpd) / fpd for fpd, b in big)
    assert half <= 3.0 * err, (half, err)
    assert half >= err  # and not so narrow that half the rows fall outside


def test_an_ms_like_mixture_covers_an_independent_pitzer_implementation(catalog):
    """pyEQL 1.7.0 (native engine) for NH4NO3 20.6, KNO3 18.8, CaCl2 2.99, MgSO4 1.50, KH2PO4 1.25 mmol/kg at
    25 °C: 86.0 mOsm/kg (recorded in the project's reference notes; the same case as
    tests/medium/test_engine_published.py). Not used to set the table."""
    r = Recipe()
    for k, v in (("NH4NO3", "20.6 mmol/kg"), ("KNO3", "18.8 mmol/kg"), ("CaCl2", "2.99 mmol/kg"),
                 ("MgSO4", "1.50 mmol/kg"), ("KH2PO4", "1.25 mmol/kg")):
        r = r.with_amount(k, v)
    b = budget(r, catalog, tolerances=Tolerances.exact())
    assert b.osmolality.contains(86.0)
    assert b.osmolality.half_width() < 0.03 * b.osmolality.value  # and it says so in under 3 %


# ---- the arithmetic -----------------------------------------------------------------------------------------
def test_interval_around_a_value():
    iv = Interval.around(10.0, 1.0)  # value ± 1.96 sd (normal, 95 %)
    assert (iv.low, iv.high) == pytest.approx((10 - 1.959964, 10 + 1.959964), abs=1e-6)
    assert iv.half_width() == pytest.approx(1.959964, abs=1e-6) and iv.to_list() == [iv.low, iv.high]
    assert Interval.around(0.01, 1.0, lower=0.0).low == 0.0  # an osmolality cannot go below zero


def test_one_class_alone_is_its_table_line(catalog):
    """A sucrose solution made exactly: the only source is the Norrish class, so the osmolality's 95 %
    half-width is 1.96 (a + b y) y, and every other figure follows by its derivative (a known linear case)."""
    r = Recipe().with_amount("sucrose", "0.5 mol/kg")
    ev = evaluate(r, catalog)
    b = budget(r, catalog, tolerances=Tolerances.exact(), evaluation=ev)
    assert [c.source for c in b.contributions] == [MODEL_ERROR["norrish"][2]]
    y = ev.osmolality_mosmol_per_kg / 1000.0
    sd_y = model_error("norrish", y) * y
    assert b.osmolality.half_width() == pytest.approx(Z95 * sd_y * 1000.0, rel=1e-9)
    T = r.temperature_k
    dpsi = R * T * M_WATER / float(molar_volume(T))  # Pa per osmol/kg
    assert b.osmotic_potential.half_width() == pytest.approx(Z95 * sd_y * dpsi / 1e6, rel=1e-9)
    assert b.water_activity.half_width() == pytest.approx(Z95 * M_WATER * ev.water_activity * sd_y, rel=1e-6)
    assert b.osmolality.contains(ev.osmolality_mosmol_per_kg) and b.osmotic_potential.high < 0


def test_sources_combine_as_independent(catalog):
    r = Recipe(base="ms1962")
    b = budget(r, catalog)
    rss = math.sqrt(sum(c.sd_osmolality_mosmol_per_kg ** 2 for c in b.contributions))
    assert b.osmolality.half_width() == pytest.approx(Z95 * rss, rel=1e-9)
    assert {"volume", "balance", "temperature", "model: ZSR mixing"} <= {c.source for c in b.contributions}


def test_balance_readability_on_a_weighed_sugar(catalog):
    """30 g of sucrose in 1 L with a 0.1 g balance: relative standard uncertainty 0.1/30 of the sucrose, so
    of about its share of the osmolality (derivative from the whole medium's; 5 % allowed)."""
    r = Recipe().with_amount("sucrose", "30 g/L")
    tol = Tolerances(balance_readability_g=0.1, volume_relative=0.0, temperature_sd_k=0.0, confidence_c_relative=0.0)
    b = budget(r, catalog, tolerances=tol)
    bal = next(c for c in b.contributions if c.source == "balance")
    assert bal.sd_osmolality_mosmol_per_kg == pytest.approx(b.osmolality.value * 0.1 / 30.0, rel=0.05)


def test_volume_tolerance_is_rectangular(catalog):
    """±1 % on the volume, rectangular: 1/sqrt(3) % of the osmolality of a dilute salt solution (5 % allowed
    for the salt's own non-ideality)."""
    r = Recipe().with_amount("sodium_chloride", "10 mM")
    tol = Tolerances(balance_readability_g=0.0, volume_relative=0.01, temperature_sd_k=0.0, confidence_c_relative=0.0)
    vol = next(c for c in budget(r, catalog, tolerances=tol).contributions if c.source == "volume")
    assert vol.sd_osmolality_mosmol_per_kg == pytest.approx(evaluate(r, catalog).osmolality_mosmol_per_kg
                                                            * 0.01 / math.sqrt(3), rel=0.05)


def test_temperature_moves_the_potential_not_the_osmometer(catalog):
    """A mannitol solution (its Norrish constant has no temperature term): 1 K moves ψ by about ψ/T (RT/V_w),
    nothing the osmometer reads."""
    r = Recipe().with_amount("mannitol", "0.3 mol/kg")
    tol = Tolerances(balance_readability_g=0.0, volume_relative=0.0, temperature_sd_k=1.0, confidence_c_relative=0.0)
    ev = evaluate(r, catalog)
    t = next(c for c in budget(r, catalog, tolerances=tol, evaluation=ev).contributions if c.source == "temperature")
    assert t.sd_osmometer_mosmol_per_kg == 0.0
    assert t.sd_potential_mpa == pytest.approx(abs(ev.osmotic_potential_mpa) / r.temperature_k, rel=0.2)


def test_confidence_c_lines_are_named_and_widen_the_interval(catalog):
    b5 = budget(Recipe(base="b5_1968"), catalog)
    c = next(c for c in b5.contributions if c.source == "confidence C lines")
    assert "potassium_nitrate" in c.components and "potassium_nitrate" in c.note
    assert c is b5.contributions[0]  # recalled amounts dominate
    ms = budget(Recipe(base="ms1962"), catalog)  # Murashige & Skoog 1962: no line of confidence C
    assert all(c.source != "confidence C lines" for c in ms.contributions)


def test_peg_with_other_solutes_reaches_the_additive_answer(catalog):
    """MS + PEG 8000: the ZSR synergy is not checked against data here, so the interval reaches the sum of
    the groups' own osmolalities."""
    r = Recipe(base="ms1962").with_amount("peg8000", "150 g/kg")
    b = budget(r, catalog)
    mix = next(c for c in b.contributions if c.source == "model: ZSR mixing with PEG")
    assert "no published check" in mix.note
    assert b.osmolality.half_width() > Z95 * mix.sd_osmolality_mosmol_per_kg * 0.999


def test_tolerances_as_typed():
    t = tolerances_with(Tolerances(), balance_readability="1 mg", volume_tolerance="0.2 %")
    assert t.balance_readability_g == pytest.approx(0.001) and t.volume_relative == pytest.approx(0.002)
    from mediaplan.medium.errors import AmountError

    with pytest.raises(AmountError) as exc:
        tolerances_with(Tolerances(), balance_readability="2 mL")
    assert exc.value.field == "balance_readability"


# ---- solve, series, fit ----------------------------------------------------------------------------------------
def test_solve_range_brackets_the_addition(catalog):
    sol = solve_target(Recipe().with_amount("sucrose", "30 g/L"), catalog, "-0.8 MPa", ["mannitol"])
    (r,) = solve_ranges(sol, catalog)
    assert r.low_g_per_l < r.added_g_per_l < r.high_g_per_l
    # the range follows the relative interval of the result: a few per cent of the addition here
    assert 0.01 < (r.high_g_per_l - r.low_g_per_l) / r.added_g_per_l < 0.2


def test_series_levels_carry_their_intervals(catalog):
    bg = Recipe(volume="50 mL")
    d = design_series(bg, "mannitol", [-0.4e6, -0.8e6, -1.2e6], catalog=catalog)
    ivs = level_potential_intervals(d, level_budgets(d, bg, catalog))
    for lv, iv in zip(d.levels, ivs, strict=True):
        assert iv.low < lv.water_potential_mpa < iv.high
    assert ivs[0].half_width() < ivs[-1].half_width()  # wider as the levels get more negative


def test_levels_combine_with_the_fieller_interval():
    """Each side in quadrature: -1.0 MPa with [-1.1, -0.95] and a level sd of 0.03 MPa (z = 1.96)."""
    lo, hi = combine_with_levels(-1.0, [-1.1, -0.95], 0.03, Z95)
    assert lo == pytest.approx(-1.0 - math.hypot(0.1, Z95 * 0.03))
    assert hi == pytest.approx(-1.0 + math.hypot(0.05, Z95 * 0.03))


@pytest.mark.parametrize("theta", [0.0, 1e-9, 0.3, 30.0, 1e3, 1.1e4, 1e6, float("inf"), float("nan")])
@pytest.mark.filterwarnings("error::RuntimeWarning")
def test_the_osmolality_at_freezing_inverts_without_failing_at_any_depression(theta):
    """The budget's inverse of the freezing-point relation [K -> osmol/kg] answers for any depression:
    where the water activity underflows (a depression of 10^4 K, from a medium far past every model's range)
    its slope vanishes, and the estimate stands rather than a division by zero."""
    import math

    from mediaplan.tasks.uncertainty import _osmolality_at_freezing
    from mediaplan.thermo import potential

    y = _osmolality_at_freezing(theta)
    if 0 < theta < 100:  # in the relation's working range the inverse is exact
        assert float(potential.freezing_point_depression(potential.water_activity(y))) == pytest.approx(theta, rel=1e-9)
    else:
        assert y == 0.0 or math.isnan(y) or y > 0
