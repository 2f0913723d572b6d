"""Plasmolysis counts: IRLS binomial GLM, Fieller interval, goodness of fit, reading counts, plots."""

from __future__ import annotations

import json
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from mediaplan.cli.main import main
from mediaplan.files import planfile
from mediaplan.files.counts import read_counts_csv
from mediaplan.medium.errors import FitError, MediaplanError
from mediaplan.tasks.plasmolysis import (
    Counts,
    fieller_interval,
    fit_counts,
    fit_glm,
    inverse_link,
)
from mediaplan.thermo.potential import osmolality_from_potential
from mediaplan.views.plot import curve_points, png_bytes, svg_text

ROOT = Path(__file__).resolve().parents[2]
DEMO_CSV = ROOT / "plans" / "demo_plasmolysis_counts.csv"


def _replicated_counts(seed: int, link: str):
    rng = np.random.default_rng(seed)
    x = np.repeat(np.linspace(-0.3, -1.7, 8), 3)  # three pieces per level
    n = rng.integers(25, 70, x.size).astype(float)
    y = rng.binomial(n.astype(int), inverse_link(-6.5 * (x + 1.05), link)).astype(float)
    return x, y, n


@pytest.mark.parametrize("link", ["logit", "probit"])
@pytest.mark.parametrize("seed", [1, 2, 3])
def test_irls_matches_statsmodels_glm(link, seed):
    import statsmodels.api as sm  # a required reference library (tests/conftest.py)
    x, y, n = _replicated_counts(seed, link)
    g = fit_glm(x, y, n, link)
    L = sm.families.links.Logit() if link == "logit" else sm.families.links.Probit()
    ref = sm.GLM(np.column_stack([y, n - y]), sm.add_constant(x), family=sm.families.Binomial(link=L)).fit(tol=1e-14)
    np.testing.assert_allclose(g.coef, ref.params, rtol=1e-6)
    np.testing.assert_allclose(np.sqrt(np.diag(g.cov)), ref.bse, rtol=1e-6)
    assert g.deviance == pytest.approx(ref.deviance, rel=1e-6)
    assert g.pearson_chi2 == pytest.approx(ref.pearson_chi2, rel=1e-6)
    assert g.df == ref.df_resid


@pytest.mark.parametrize("link", ["logit", "probit"])
@pytest.mark.parametrize("per_level", [1_000, 10_000, 100_000])
def test_counts_the_model_fits_almost_exactly_converge(link, per_level):
    """Thousands of cells per level on the model's own curve: the deviance is so small that its rounding
    exceeds the deviance test, and the fit was refused as not converging; the coefficients settle."""
    import statsmodels.api as sm  # a required reference library (tests/conftest.py)
    x = np.linspace(-0.3, -1.7, 8)
    n = np.full(x.size, float(per_level))
    y = np.round(n * inverse_link(-6.5 * (x + 1.05), link))
    g = fit_glm(x, y, n, link)
    assert g.converged
    L = sm.families.links.Logit() if link == "logit" else sm.families.links.Probit()
    ref = sm.GLM(np.column_stack([y, n - y]), sm.add_constant(x), family=sm.families.Binomial(link=L)).fit(tol=1e-14)
    np.testing.assert_allclose(g.coef, ref.params, rtol=1e-8)
    assert -g.coef[0] / g.coef[1] == pytest.approx(-1.05, abs=2e-3)  # the curve the counts were drawn on


@pytest.mark.parametrize("link", ["logit", "probit"])
def test_fieller_agrees_with_delta_method_when_the_slope_is_sharp(link):
    # for g = q^2 V11 / b1^2 -> 0 Fieller's interval tends to the delta-method one (Finney 1971, sect. 4.5)
    import statsmodels.api as sm  # a required reference library (tests/conftest.py)
    x = np.linspace(-0.3, -1.7, 8)
    n = np.full(8, 4000.0)
    y = np.round(n * inverse_link(-6.0 * (x + 1.0), link))
    L = sm.families.links.Logit() if link == "logit" else sm.families.links.Probit()
    ref = sm.GLM(np.column_stack([y, n - y]), sm.add_constant(x), family=sm.families.Binomial(link=L)).fit()
    b0, b1 = ref.params
    V = ref.cov_params()
    theta = -b0 / b1
    grad = np.array([-1 / b1, b0 / b1**2])
    se = float(np.sqrt(grad @ V @ grad))
    lo, hi = fieller_interval(b0, b1, np.asarray(V), 1.959963984540054)
    assert lo == pytest.approx(theta - 1.96 * se, abs=0.02 * se)
    assert hi == pytest.approx(theta + 1.96 * se, abs=0.02 * se)


def test_fieller_interval_covers_the_true_point_at_its_nominal_rate():
    # seeded simulation: 400 experiments of 8 levels x 40 cells from a known logistic curve
    rng = np.random.default_rng(20240611)
    x = np.linspace(-0.4, -1.6, 8)
    n = np.full(8, 40.0)
    true = -1.0
    p = inverse_link(-7.0 * (x - true), "logit")
    hit = tried = 0
    for _ in range(400):
        y = rng.binomial(40, p).astype(float)
        try:
            f = fit_counts(Counts(x, y, n, "sim"), "logit")
        except FitError:
            continue  # separation: no interval to score
        if f.ci95_mpa is None:
            continue
        tried += 1
        hit += f.ci95_mpa[0] <= true <= f.ci95_mpa[1]
    assert tried >= 390
    assert 0.90 <= hit / tried <= 0.99


def test_overdispersion_widens_the_interval():
    rng = np.random.default_rng(7)
    x = np.repeat(np.linspace(-0.4, -1.6, 7), 2)
    n = np.full(x.size, 50.0)
    # beta-binomial: strip-to-strip variation on top of binomial sampling
    p = inverse_link(-6.0 * (x + 1.0) + rng.normal(0, 1.2, x.size), "logit")
    y = rng.binomial(50, p).astype(float)
    f = fit_counts(Counts(x, y, n, "sim"), "logit")
    assert f.overdispersed and f.widened and f.heterogeneity > 1
    assert any("overdispersed" in w for w in f.warnings)
    g = fit_glm(x, y, n, "logit")
    plain = fieller_interval(*g.coef, g.cov, 1.959963984540054)
    assert f.ci95_mpa[1] - f.ci95_mpa[0] > plain[1] - plain[0]


def test_osmolality_of_the_fitted_point_and_plausible_range():
    f = fit_counts(read_counts_csv(DEMO_CSV), "logit")
    assert f.osmolality_50_mosmol_per_kg == pytest.approx(
        float(osmolality_from_potential(f.water_potential_50_mpa * 1e6, 298.15)) * 1000, rel=1e-12)
    # plausibility only: typical leaf-cell sap -0.6 to -3.0 MPa (Nobel, Physicochemical and Environmental
    # Plant Physiology); at 25 °C 1 osmol/kg is about -2.47 MPa (potential.py)
    assert -3.0 <= f.water_potential_50_mpa <= -0.6
    assert f.ci95_mpa[0] < f.water_potential_50_mpa < f.ci95_mpa[1]
    assert f.slope_per_mpa < 0 and not f.warnings


@pytest.mark.parametrize("y, pattern", [
    ([0, 0, 0, 0, 0], "no cell is plasmolysed"),
    ([30, 30, 30, 30, 30], "every cell is plasmolysed"),
    ([0, 0, 0, 30, 30], "complete separation"),
    ([0, 0, 12, 30, 30], "complete separation"),  # quasi-complete: one partial level
    ([30, 30, 0, 0, 0], "wrong way"),
])
def test_separation_gives_a_message_not_a_number(y, pattern):
    x = np.array([-0.4, -0.7, -1.0, -1.3, -1.6])
    with pytest.raises(FitError, match=pattern):
        fit_counts(Counts(x, np.array(y, float), np.full(5, 30.0), "sep.csv"))


def test_all_or_nothing_levels_inside_an_overlapping_series_fit_normally():
    x = np.array([-0.4, -0.7, -1.0, -1.3, -1.6, -1.9])
    y = np.array([0, 3, 14, 22, 30, 30], float)
    f = fit_counts(Counts(x, y, np.full(6, 30.0), "ok.csv"), "probit")
    assert -1.3 < f.water_potential_50_mpa < -0.7


@settings(max_examples=25, deadline=None)
@given(st.lists(st.integers(0, 40), min_size=5, max_size=5), st.integers(1, 4))
def test_splitting_levels_into_replicates_keeps_the_coefficients(extra, parts):
    # the binomial likelihood depends on each level's totals only
    x = np.array([-0.4, -0.7, -1.0, -1.3, -1.6])
    n = np.full(5, 40.0 * parts)
    y = np.array([2, 10, 20, 30, 38], float) * parts
    y = np.clip(y + np.array(extra) % 3 - 1, 1, n - 1)
    a = fit_glm(x, y, n, "logit")
    xs = np.repeat(x, parts)
    ys = np.concatenate([np.diff(np.linspace(0, yi, parts + 1).round()) for yi in y])
    ns = np.repeat(n / parts, parts)
    ok = ys <= ns
    if not ok.all():
        return
    b = fit_glm(xs, ys, ns, "logit")
    np.testing.assert_allclose(a.coef, b.coef, rtol=1e-8)


# ---- reading counts --------------------------------------------------------------------------

def _csv(tmp_path, text, name="counts.csv"):
    p = tmp_path / name
    p.write_text(text)
    return p


GOOD_ROWS = "-0.4,1,40\n-0.7,8,40\n-1.0,20,40\n-1.3,33,40\n-1.6,39,40\n"


@pytest.mark.parametrize("text, where, what", [
    ("water_potential_mpa,plasmolysed,total\n-0.4,1,0\n" + GOOD_ROWS, ":2", "total is 0"),
    ("water_potential_mpa,plasmolysed,total\n" + GOOD_ROWS + "-1.9,41,40\n", ":7", "more than total"),
    ("water_potential_mpa,plasmolysed,total\n-0.4,1,40\n-0.7,8,40\n", "", "at least 3"),
    ("water_potential_mpa,plasmolysed,total\n-0.4,one,40\n" + GOOD_ROWS, ":2: plasmolysed", "not a number"),
    ("water_potential_mpa,plasmolysed\n" + "-0.4,1\n", ":1", "missing column total"),
    ("water_potential_mpa,plasmolysed,total\n-0.4,1\n", ":2", "cells where the header has"),
    ("water_potential_mpa,plasmolysed,total\n-0.4,2.5,40\n" + GOOD_ROWS, ":2: plasmolysed", "whole number"),
    ("water_potential_mpa,plasmolysed,total\n0.4,2,40\n" + GOOD_ROWS, ":2", "positive"),
    ("plasmolysed,total\n1,40\n", ":1", "no level column"),
])
def test_bad_counts_name_file_line_and_column(tmp_path, capsys, text, where, what):
    p = _csv(tmp_path, text)
    with pytest.raises(FitError, match=what) as ei:
        fit_counts(read_counts_csv(p))
    assert str(p) + where in str(ei.value)
    assert main(["fit", str(p)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and str(p) in err


def test_comments_blank_lines_and_uncounted_levels_are_skipped(tmp_path):
    p = _csv(tmp_path, "# invented\n\nwater_potential_mpa,plasmolysed,total\n# a note\n" + GOOD_ROWS + "-1.9,,\n")
    c = read_counts_csv(p)
    assert c.water_potential_mpa.size == 5 and any("without counts" in n for n in c.notes)


def test_concentration_columns_are_converted_with_the_model(tmp_path, catalog):
    from mediaplan.medium.recipe import Recipe
    from mediaplan.tasks.plasmolysis import design_series, potentials_between

    d = design_series(Recipe(volume="50 mL"), "mannitol", potentials_between(-0.4e6, -1.6e6, 5), catalog=catalog)
    rows = "\n".join(f"{lv.molality_mol_per_kg!r},{y},40" for lv, y in zip(d.levels, (1, 8, 20, 33, 39),
                                                                           strict=True))
    c = read_counts_csv(_csv(tmp_path, "mannitol_mol_per_kg,plasmolysed,total\n" + rows + "\n"), catalog=catalog)
    np.testing.assert_allclose(c.water_potential_mpa, [-0.4, -0.7, -1.0, -1.3, -1.6], rtol=1e-7)
    assert any("converted" in n for n in c.notes)
    mm = "\n".join(f"{lv.molality_mol_per_kg * 1000!r},{y},40" for lv, y in zip(d.levels, (1, 8, 20, 33, 39),
                                                                                strict=True))
    p = _csv(tmp_path, "concentration (mmol/kg),plasmolysed,total\n" + mm + "\n", "mm.csv")
    with pytest.raises(FitError, match="name the osmoticum"):
        read_counts_csv(p, catalog=catalog)
    c2 = read_counts_csv(p, osmoticum="mannitol", catalog=catalog)
    np.testing.assert_allclose(c2.water_potential_mpa, c.water_potential_mpa, rtol=1e-9)


# ---- command line, plan files, plots -----------------------------------------------------------

@pytest.mark.parametrize("link", ["logit", "probit"])
def test_fit_json_contract(capsys, link):
    assert main(["fit", str(DEMO_CSV), "--link", link, "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["link"] == link
    lo, hi = d["ci95_mpa"]
    assert lo < d["water_potential_50_mpa"] < hi
    assert d["osmolality_50_mosmol_per_kg"] > 0
    # the cell sap figure is the potential at 50 % per R T rho_w (CODATA 2018 R; IAPWS-95 water, 997.0476
    # kg/m^3 at 25 °C, 0.101325 MPa): 2.47164 MPa per osmol/kg; the engine's density agrees to 1e-6
    assert d["osmolality_50_mosmol_per_kg"] == pytest.approx(
        -d["water_potential_50_mpa"] / (8.314462618 * 298.15 * 997.0476e-6) * 1000.0, rel=1e-5)


def test_fit_a_series_plan_and_store_the_cell_reference(tmp_path, capsys, catalog):
    plan_path = tmp_path / "series.toml"
    plan_path.write_bytes((ROOT / "plans" / "demo_plasmolysis_series.toml").read_bytes())
    assert main(["fit", str(plan_path), "--write-cells", str(plan_path), "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    plan = planfile.read(plan_path, catalog=catalog)
    assert plan.cells.source.startswith("incipient plasmolysis fit, ")
    assert plan.cells.source.endswith(", logit, 8 levels")
    assert float(plan.cells.potential.split()[0]) == pytest.approx(d["water_potential_50_mpa"], rel=1e-3)
    # calc reads the [cells] table for tonicity
    assert main(["calc", "--plan", str(plan_path), "mannitol=0.3 mol/kg", "--json"]) == 0
    ev = json.loads(capsys.readouterr().out)
    assert ev["tonicity"]["reference_mosmol_per_kg"] == pytest.approx(d["osmolality_50_mosmol_per_kg"], rel=1e-3)
    # a new plan is created when the file does not exist
    fresh = tmp_path / "cells.toml"
    assert main(["fit", str(DEMO_CSV), "--write-cells", str(fresh)]) == 0
    assert planfile.read(fresh).cells.osmolality is not None


def test_fit_plan_without_counts_says_so(tmp_path, capsys):
    out = tmp_path / "s.toml"
    assert main(["series", "--from", "-0.4 MPa", "--to", "-1.4 MPa", "--with", "mannitol", "--write", str(out)]) == 0
    capsys.readouterr()
    assert main(["fit", str(out)]) == 2
    assert "at least 3" in capsys.readouterr().err


def test_curve_points_and_svg(tmp_path, capsys):
    f = fit_counts(read_counts_csv(DEMO_CSV), "logit")
    cp = curve_points(f)
    assert cp.x_mpa.size == cp.fitted.size == cp.band_low.size
    assert np.all(cp.band_low <= cp.fitted + 1e-12) and np.all(cp.fitted <= cp.band_high + 1e-12)
    assert float(np.interp(0.5, cp.fitted[::-1], cp.x_mpa[::-1])) == pytest.approx(f.water_potential_50_mpa,
                                                                                    abs=0.01)
    root = ET.fromstring(svg_text(cp, "demo & <test>"))
    circles = root.findall("{http://www.w3.org/2000/svg}circle")
    assert len(circles) == len(f.rows)
    out = tmp_path / "curve.svg"
    assert main(["fit", str(DEMO_CSV), "--plot", str(out)]) == 0
    assert out.read_text().startswith("<svg")
    assert main(["fit", str(DEMO_CSV), "--plot", str(tmp_path / "curve.pdf")]) == 2


def test_png_export_and_missing_matplotlib(monkeypatch):
    import matplotlib  # noqa: F401  a required test library (tests/conftest.py)
    cp = curve_points(fit_counts(read_counts_csv(DEMO_CSV), "probit"))
    assert png_bytes(cp, "t", dpi=40).startswith(b"\x89PNG\r\n\x1a\n")
    monkeypatch.setitem(sys.modules, "matplotlib", None)
    with pytest.raises(MediaplanError, match="matplotlib"):
        png_bytes(cp)
