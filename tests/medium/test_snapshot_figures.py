"""The numbers the terminal app's snapshots show (tests/tui/__snapshots__), asserted by value tests.

A snapshot holds the layout; it is regenerated whenever the screen changes, so it cannot be the only check
of a number. Each figure read here from the snapshot SVGs is recomputed from its definition with constants
from their sources (CODATA R, IAPWS-95 water, periodictable molar masses, the published Norrish K of
mannitol, a binomial GLM of the demo counts by statsmodels), never from the engine's own constants, and must
equal what the snapshot shows to the digits shown. The scenarios are those of tests/tui/test_tui_snapshots.py
(invented demo plans). Figures that are sums of others (group totals, the osmolality) are checked as sums.
"""

from __future__ import annotations

import functools
import html
import importlib.util
import math
import re
from pathlib import Path

import iapws  # a required reference library (tests/conftest.py)
import numpy as np
import periodictable  # a required reference library
import pytest
from scipy.optimize import brentq

import mediaplan as mp

SNAPS = Path(__file__).resolve().parents[1] / "tui" / "__snapshots__" / "test_tui_snapshots"
MAIN_SNAPS = ["test_main_screen.svg", "test_main_screen_at[80x24].svg", "test_main_screen_at[140x45].svg",
              "test_component_picker.svg", "test_amount_dialog_with_bad_input.svg"]
SERIES_SNAPS = ["test_plasmolysis_screen_fitted_at[80x24].svg", "test_plasmolysis_screen_fitted_at[140x45].svg"]

R = 8.314462618  # J/(mol K), CODATA 2018 exact
M_W = 0.018015268  # kg/mol, IAPWS-95
K_MANNITOL = 0.906  # Norrish K of D-mannitol, Chirife et al. in PMC2836749 Table 3 (tests/data/parameter_sources.yaml)
K_SUCROSE = 6.47  # Norrish K of sucrose, from memory (unverified; as catalog/neutral.yaml says)


@functools.cache
def rho_w(t_c: float) -> float:
    return iapws.IAPWS95(T=273.15 + t_c, P=0.101325).rho  # kg/m^3, IAPWS-95


def snapshot_text(name: str) -> str:
    """The snapshot's screen as lines of text (the SVG's text runs joined by row)."""
    svg = (SNAPS / name).read_text(encoding="utf-8")
    rows: dict[float, list[str]] = {}
    for m in re.finditer(r'<text[^>]*\by="([\d.]+)"[^>]*>(.*?)</text>', svg):
        rows.setdefault(float(m.group(1)), []).append(html.unescape(m.group(2)).replace("\xa0", " "))
    return "\n".join("".join(rows[y]) for y in sorted(rows))


def shown(text: str, pattern: str) -> list[str]:
    m = re.search(pattern, text)
    assert m, f"the snapshot no longer shows {pattern!r}"
    return list(m.groups())


def assert_shows(figure: str, value: float) -> None:
    """The shown text equals the value to the digits shown (half a unit of the last digit)."""
    decimals = len(figure.split(".")[1]) if "." in figure else 0
    assert abs(float(figure) - value) <= 0.5 * 10.0**-decimals + 1e-12, (figure, value)


def norrish_osmolality(m: float, K: float) -> float:
    """Osmolality [osmol/kg] of a binary solution, a_w = x_w exp(-K x_s^2) (Norrish 1966)."""
    xs = m / (m + 1.0 / M_W)
    return -(math.log(1.0 - xs) - K * xs * xs) / M_W


def zsr_share(m: float, K: float, total: float) -> float:
    """Osmolality a neutral solute at m [mol/kg] contributes to a mixture of total osmolality [osmol/kg] by
    the ZSR rule: m x (binary osmolality / binary molality) at the molality whose binary solution has the
    mixture's water activity (Stokes & Robinson 1966)."""
    m0 = brentq(lambda x: norrish_osmolality(x, K) - total, 1e-9, 10.0)
    return m * total / m0


# ---- the main screen: half-strength MS + 20 g/L sucrose + 0.1 mol/kg mannitol, cells 450 mOsm/kg ----------
DEMO = mp.Recipe(base="ms1962", strength=0.5, strength_scope="all").with_amount("sucrose", "20 g/L").with_amount("mannitol", "0.1 mol/kg")
PREVIEW = DEMO.with_amount("sucrose", "30 g/L")


@pytest.fixture(scope="module")
def demo():
    return mp.evaluate(DEMO, cells="450 mOsm/kg").to_dict()


@pytest.fixture(scope="module")
def preview():
    return mp.evaluate(PREVIEW, cells="450 mOsm/kg").to_dict()


@pytest.mark.parametrize("name", MAIN_SNAPS)
def test_main_panel_figures(demo, name):
    text = snapshot_text(name)
    if name == "test_component_picker.svg":
        # the picker covers the labels of the panel's lower rows: the rows' last figures still show
        text = re.sub(r"│\s+(0\.99\d+)│", r"water activity \1", text)
        text = re.sub(r"│\s+(-0\.\d{3})│", r"freezes at °C \1", text)
        text = re.sub(r"│\s+([\d.]+) ×│", r"tonicity hypotonic ▼ \1 ×", text)
    osm, ideal = shown(text, r"mOsm/kg\s+(-?[\d.]+)\s+(-?[\d.]+)")
    psi, vh = shown(text, r"ψs MPa\s+(-?[\d.]+)\s+(-?[\d.]+)")
    psi_bar, vh_bar = shown(text, r"ψs bar\s+(-?[\d.]+)\s+(-?[\d.]+)")
    (aw,) = shown(text, r"water activity\s+([\d.]+)")
    (freezes,) = shown(text, r"freezes at °C\s+(-?[\d.]+)")
    (ratio,) = shown(text, r"tonicity hypotonic ▼\s+([\d.]+) ×")
    y = float(osm) / 1000.0  # osmol/kg as shown
    # the osmolality is the sum of the groups shown beside it (below)
    # psi = -R T rho_w Osm (R T / V_w with V_w = M_w / rho_w): CODATA and IAPWS-95, exact to the digits shown
    assert_shows(psi, -R * 298.15 * rho_w(25.0) * demo["osmolality_mosmol_per_kg"] * 1e-9)
    assert_shows(psi_bar, -R * 298.15 * rho_w(25.0) * demo["osmolality_mosmol_per_kg"] * 1e-8)
    assert_shows(aw, math.exp(-M_W * demo["osmolality_mosmol_per_kg"] / 1000.0))
    # and consistent with the osmolality shown (rounded to 0.05 mOsm/kg and 5e-6)
    assert abs(math.exp(-M_W * y) - float(aw)) < 5e-6 + M_W * 0.05e-3
    assert_shows(osm, demo["osmolality_mosmol_per_kg"])
    assert_shows(ratio, float(osm) / 450.0)  # the cells' reference of the demo plan
    # van't Hoff: the ideal osmolality (sum of particles per kg of water) and -c R T per litre
    assert_shows(ideal, demo["osmolality_ideal_mosmol_per_kg"])
    c = sum(comp["molarity_mmol_per_l"] * comp["osmolality_ideal_mosmol_per_kg"] / comp["molality_mmol_per_kg"]
            for comp in demo["components"])
    assert_shows(vh, -c * R * 298.15 * 1e-6)
    assert_shows(vh_bar, -c * R * 298.15 * 1e-5)
    # freezing point: theta = M_w Osm(0 °C) R T0^2 / dH_fus (dH_fus 6009.5 J/mol, from memory; first order,
    # the second-order term is 2e-4 of theta here). Osm(0 °C) differs from the 25 °C figure by the salts'
    # temperature terms (under 0.5 % of their 43 mOsm/kg share, 4e-4 K); rounding 5e-4 K; bound 2e-3 K
    theta = M_W * y * R * 273.15**2 / 6009.5
    assert abs(-float(freezes) - theta) <= 2e-3, (freezes, theta)
    # and the osmometer figure that calc prints is that depression over 1.858 K kg/osmol (common practice)
    assert_shows(freezes, -demo["osmometer_mosmol_per_kg"] * 1.858 / 1000.0)


@pytest.mark.parametrize("name", [n for n in MAIN_SNAPS if n != "test_component_picker.svg"]  # the picker covers it
                         + ["test_amount_preview_at_80x24.svg"])
def test_panel_interval(demo, preview, name):
    """The 95 % interval: 1.96 x the root sum of squares of the sources' standard deviations (the method the
    evaluation states; the sources are calibrated in tests/tasks/test_uncertainty.py)."""
    pm_osm, pm_mpa = shown(snapshot_text(name), r"±([\d.]+) mOsm/kg ±([\d.]+) MPa")
    sources = (preview if "preview" in name else demo)["uncertainty"]["sources"]
    assert_shows(pm_osm, 1.959963984540054 * math.sqrt(sum(x["sd_osmolality_mosmol_per_kg"] ** 2 for x in sources)))
    assert_shows(pm_mpa, 1.959963984540054 * math.sqrt(sum(x["sd_potential_mpa"] ** 2 for x in sources)))


def test_main_panel_osmolality_is_its_groups_and_zsr_shares(demo):
    text = snapshot_text("test_main_screen_at[140x45].svg")
    groups = {g: (float(v), int(p)) for g, v, p in re.findall(
        r"│(osmoticum|carbon source|macro salts|other \(\d+\))\s+[^\d│]*?\s([\d.]+)\s+(\d+)%", text)}
    assert set(groups) == {"osmoticum", "carbon source", "macro salts", "other (5)"}
    (osm,) = shown(text, r"mOsm/kg\s+(-?[\d.]+)")
    assert abs(sum(v for v, _ in groups.values()) - float(osm)) <= 0.25  # four roundings of 0.05
    for v, pct in groups.values():
        assert abs(v / float(osm) * 100.0 - pct) <= 0.5 + 0.05  # the % shown is the share, rounded
    total = float(osm) / 1000.0
    # mannitol (the osmoticum) and sucrose (the carbon source) by the ZSR rule with their Norrish K, computed
    # here from the published K (mannitol) and the recalled one (sucrose); molality of sucrose from 20 g/L,
    # 342.297 g/mol (periodictable) and the water per litre of the evaluation (value-tested in test_figures)
    assert_shows(str(groups["osmoticum"][0]), 1000.0 * zsr_share(0.1, K_MANNITOL, total))
    m_suc = 20.0 / periodictable.formula("C12H22O11").mass / demo["water_kg_per_l"]
    assert_shows(str(groups["carbon source"][0]), 1000.0 * zsr_share(m_suc, K_SUCROSE, total))


@pytest.mark.parametrize("component, formula, mg_per_l", [
    ("ammonium nitrate", "NH4NO3", 825.0),  # half of MS 1962's 1650 mg/L
    ("potassium nitrate", "KNO3", 950.0),
    ("calcium chloride dihydrate", "CaCl2(H2O)2", 220.0),
    ("magnesium sulfate heptahydrate", "MgSO4(H2O)7", 185.0),
    ("potassium dihydrogen phosphate", "KH2PO4", 85.0),
    ("sucrose", "C12H22O11", 20000.0),
])
def test_main_table_molalities(demo, component, formula, mg_per_l):
    """mmol/kg shown = mg/L / molar mass (periodictable, IUPAC weights) / water per litre (test_figures)."""
    text = snapshot_text("test_main_screen_at[140x45].svg")
    amount, molality, share = shown(text, re.escape(component) + r"\s+([\d.]+ (?:mg|g)/L)\s+([\d.]+)\s+([\d.]+)%")
    assert float(amount.split()[0]) * (1000.0 if amount.endswith(" g/L") else 1.0) == mg_per_l
    expected = mg_per_l / periodictable.formula(formula).mass / demo["water_kg_per_l"]
    assert_shows(molality, expected)
    # share: the component's part of the osmolality shown in the panel
    (comp,) = [c for c in demo["components"] if c["name"] == component]
    assert_shows(share, 100.0 * comp["osmolality_mosmol_per_kg"] / demo["osmolality_mosmol_per_kg"])


def test_amount_preview_figures(demo, preview):
    text = snapshot_text("test_amount_preview_at_80x24.svg")
    before, after = shown(text, r"osmolality\s+([\d.]+) → ([\d.]+) mOsm/kg")
    psi_before, psi_after = shown(text, r"ψs\s+(-?[\d.]+) → (-?[\d.]+) MPa")
    r_before, r_after = shown(text, r"hypotonic ([\d.]+)× → hypotonic ([\d.]+)×")
    assert_shows(before, demo["osmolality_mosmol_per_kg"])
    assert_shows(after, preview["osmolality_mosmol_per_kg"])
    per_osmol = R * 298.15 * rho_w(25.0) * 1e-9
    assert_shows(psi_before, -per_osmol * demo["osmolality_mosmol_per_kg"])
    assert_shows(psi_after, -per_osmol * preview["osmolality_mosmol_per_kg"])
    assert_shows(r_before, float(before) / 450.0) and assert_shows(r_after, float(after) / 450.0)
    # 10 g/L more sucrose (29.2 mmol/L) adds about 31.6 mOsm/kg: ZSR share of sucrose before and after
    m20 = 20.0 / periodictable.formula("C12H22O11").mass / demo["water_kg_per_l"]
    m30 = 30.0 / periodictable.formula("C12H22O11").mass / preview["water_kg_per_l"]
    gain = zsr_share(m30, K_SUCROSE, float(after) / 1000) - zsr_share(m20, K_SUCROSE, float(before) / 1000)
    assert abs((float(after) - float(before)) - 1000.0 * gain) < 0.6  # the other solutes' shares shift too


# ---- the plasmolysis screen: a mannitol series, -0.4 to -1.8 MPa in 8 levels, demo counts fitted -----------
def _demo_counts():
    spec = importlib.util.spec_from_file_location("tui_helpers_counts", SNAPS.parents[1] / "tui_helpers.py")
    text = Path(spec.origin).read_text(encoding="utf-8")
    m = re.search(r"DEMO_COUNTS = (\(.*?\))\n", text, re.S)
    return eval(m.group(1), {})  # a literal tuple of (plasmolysed, total) pairs


@pytest.mark.parametrize("name", SERIES_SNAPS)
def test_series_levels(name):
    text = snapshot_text(name)
    rows = re.findall(r"^ ?(\d)\s+(-[\d.]+)\s+([\d.]+)\s+([\d.]+)\s+([\d.]+)\s+([\d.]+)\s", text, re.M)
    assert len(rows) == 8
    per_osmol = R * 298.15 * rho_w(25.0) * 1e-6  # MPa per osmol/kg
    for i, (n, psi, osm, _grams, stock, water) in enumerate(rows):
        assert int(n) == i + 1
        assert_shows(psi, -0.4 - 0.2 * i)  # evenly spaced from -0.4 to -1.8 MPa
        assert_shows(osm, -float(psi) / per_osmol * 1000.0)  # each level's osmolality from its potential
        assert abs(float(stock) + float(water) - 50.0) <= 0.01  # the 50 mL of each level, to the shown 0.01 mL


@pytest.mark.parametrize("name", SERIES_SNAPS)
def test_series_fit(name):
    """Incipient plasmolysis: a binomial GLM (logit link) of the demo counts on the levels' potentials, fitted
    by statsmodels; psi50 = -b0/b1 and Fieller's 95 % interval (Finney 1971, sect. 4.5)."""
    import statsmodels.api as sm  # a required reference library

    text = snapshot_text(name)
    psi50, lo, hi = shown(text, r"ψ (-[\d.]+) MPa\s+\(95 % (-[\d.]+) to (-[\d.]+)")
    (sap,) = shown(text, r"cell sap ≈ (\d+) mOsm/kg")
    (cells,) = shown(text, r"(\d+) cells")
    counts = _demo_counts()
    x, y, n = [], [], []
    for i, level in enumerate(counts):
        for k, tot in level:
            x.append(-0.4 - 0.2 * i), y.append(k), n.append(tot)
    x, y, n = np.array(x), np.array(y, float), np.array(n, float)
    assert int(cells) == int(n.sum())
    fit = sm.GLM(np.column_stack([y, n - y]), sm.add_constant(x), family=sm.families.Binomial()).fit(tol=1e-12)
    b0, b1 = fit.params
    V = fit.cov_params()
    assert_shows(psi50, -b0 / b1)
    q = 1.959963984540054  # 97.5 % normal quantile
    g = q * q * V[1, 1] / b1**2
    m = -b0 / b1
    centre = m + g / (1 - g) * (m + V[0, 1] / V[1, 1])
    half = q / (b1 * (1 - g)) * math.sqrt(V[0, 0] + 2 * m * V[0, 1] + m * m * V[1, 1] - g * (V[0, 0] - V[0, 1] ** 2
                                                                                             / V[1, 1]))
    assert_shows(lo, min(centre - half, centre + half))
    assert_shows(hi, max(centre - half, centre + half))
    assert abs(int(sap) - (-float(psi50)) / (R * 298.15 * rho_w(25.0) * 1e-6) * 1000.0) <= 0.5 + 0.3
