"""The incipient-plasmolysis point from counts.

Counts (plasmolysed of total, per level, replicates allowed) are fitted by a binomial GLM in
water potential with a logit or probit link, by iteratively reweighted least squares (Fisher
scoring). The water potential at which half the cells are plasmolysed, psi50 = -b0/b1, gets a
Fieller (1954) confidence interval. When Pearson's chi-square shows overdispersion (p < 0.05)
the covariance is multiplied by the heterogeneity factor chi2/df and the t quantile on df
replaces the normal one (Finney 1971). At psi50 turgor is taken as zero, so the cells' osmotic
potential equals the solution's water potential; its osmolality follows from
:mod:`mediaplan.thermo.potential` at the series temperature.

The levels' own uncertainty (their water potentials as made, :mod:`mediaplan.tasks.uncertainty`) is
carried into the 50 % point when the caller gives it (``level_uncertainty``): its standard uncertainty
at psi50, u_L, is taken as wholly shared by the levels around psi50 (the model's error and a
misread temperature move every level together, so psi50 moves with them; the weighing of each level is
independent and would partly average out, so this is conservative), independent of the counts'
sampling error. Each side of the Fieller interval is combined with it in quadrature:
psi50 - sqrt((psi50 - lower)^2 + (z u_L)^2) to psi50 + sqrt((upper - psi50)^2 + (z u_L)^2), z the
interval's own critical value.

References
----------
Fieller EC (1954) Some problems in interval estimation. J R Stat Soc B 16:175-185.
Finney DJ (1971) Probit Analysis, 3rd ed. Cambridge University Press (heterogeneity factor, ch. 4).
McCullagh P, Nelder JA (1989) Generalized Linear Models, 2nd ed. Chapman & Hall (IRLS, ch. 2, 4).
Albert A, Anderson JA (1984) Biometrika 71:1-10 (existence of the logistic MLE; separation).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import asdict, dataclass, field

import numpy as np

from mediaplan.medium.errors import FitError, MediaplanError
from mediaplan.medium.evaluate import finite
from mediaplan.tasks.plasmolysis.counts import Counts
from mediaplan.tasks.plasmolysis.glm import check_link, fit_glm, separation
from mediaplan.tasks.plasmolysis.tails import chi2_sf, normal_quantile
from mediaplan.thermo import potential
from mediaplan.thermo.constants import T0


@dataclass
class PlasmolysisFit:
    """The fitted curve and the incipient plasmolysis point (units in the field names)."""

    link: str
    water_potential_50_mpa: float
    ci95_mpa: list[float] | None
    ci_method: str
    osmolality_50_mosmol_per_kg: float
    osmolality_ci95_mosmol_per_kg: list[float] | None
    osmotic_potential_mpa: float  # of the cell sap: equal to the solution's water potential at 50 %
    temperature_c: float
    intercept: float
    slope_per_mpa: float
    covariance: list[list[float]]  # of (intercept, slope), scaled by the dispersion when widened
    deviance: float
    pearson_chi2: float
    df: int
    deviance_p: float
    pearson_p: float
    heterogeneity: float  # Pearson chi2 / df
    overdispersed: bool
    widened: bool
    n_levels: int
    n_rows: int
    cells: int
    iterations: int
    source: str
    rows: list[dict]
    warnings: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    #: standard uncertainty of the levels' water potential at the 50 % point [MPa] (None: not given)
    level_sd_mpa: float | None = None
    #: the 95 % interval with the levels' uncertainty combined (None: not given, or unbounded) [MPa]
    ci95_with_levels_mpa: list[float] | None = None
    osmolality_ci95_with_levels_mosmol_per_kg: list[float] | None = None

    @property
    def coef(self) -> np.ndarray:
        return np.array([self.intercept, self.slope_per_mpa])

    def to_dict(self) -> dict:
        return finite(asdict(self))

    def cells_table(self, date: str) -> dict:
        """The ``[cells]`` table of a plan: the fitted reference for tonicity."""
        t = {"potential": f"{self.water_potential_50_mpa:.4g} MPa",
             "osmolality": f"{self.osmolality_50_mosmol_per_kg:.4g} mOsm/kg",
             "source": f"incipient plasmolysis fit, {date}, {self.link}, {self.n_levels} levels"}
        if self.ci95_mpa is not None:
            t["ci95"] = f"{self.ci95_mpa[0]:.4g} to {self.ci95_mpa[1]:.4g} MPa ({self.ci_method})"
        return t


#: the two-sided 95 % critical value of the standard normal, as the fit has always taken it
#: (scipy.special.ndtri(0.975); the correctly rounded value is one unit in the last place above)
Z_95 = 1.959963984540054


def critical_normal(alpha: float) -> float:
    """The two-sided critical value z_(1 - alpha/2) of the standard normal [-]."""
    return Z_95 if alpha == 0.05 else normal_quantile(1 - alpha / 2)


def fieller_interval(b0: float, b1: float, V: np.ndarray, q: float) -> tuple[float, float] | None:
    """Fieller (1954) interval of theta = -b0/b1 at critical value q; None when it is unbounded.

    The set of theta with (b0 + theta b1)^2 <= q^2 (V00 + 2 theta V01 + theta^2 V11); bounded when
    g = q^2 V11 / b1^2 < 1 (the slope differs significantly from zero).
    """
    a = b1 * b1 - q * q * V[1, 1]
    if a <= 0:
        return None
    bh = b0 * b1 - q * q * V[0, 1]
    c = b0 * b0 - q * q * V[0, 0]
    disc = bh * bh - a * c
    if disc < 0:
        return None
    r = math.sqrt(disc)
    return (float((-bh - r) / a), float((-bh + r) / a))


def combine_with_levels(psi50: float, ci: Sequence[float], level_sd: float, q: float) -> list[float]:
    """The interval ``ci`` of psi50 [MPa] with the levels' standard uncertainty ``level_sd`` [MPa]
    combined in quadrature on each side, at critical value q."""
    lo, hi = min(ci), max(ci)
    w = q * level_sd
    return [psi50 - math.hypot(psi50 - lo, w), psi50 + math.hypot(hi - psi50, w)]


def fit_counts(counts: Counts, link: str = "logit", *, temperature_k: float | None = None,
               alpha: float = 0.05, level_uncertainty: Callable[[float], float] | None = None) -> PlasmolysisFit:
    """Fit counts and find the incipient plasmolysis point with its interval.

    Parameters
    ----------
    counts : observed counts in water potential [MPa]
    link : ``logit`` or ``probit``
    temperature_k : series temperature [K] for potential -> osmolality (default: the counts', else 25 °C)
    alpha : 1 - confidence level of the interval
    level_uncertainty : psi [MPa] -> standard uncertainty [MPa] of a level's water potential made at psi
        (:func:`mediaplan.tasks.uncertainty.level_uncertainty`), carried into the interval (see the
        module's notes); None leaves the counts' interval alone

    Raises
    ------
    FitError on separation (every level all-or-nothing on either side of a point), when no level or
    every level is plasmolysed, or when the fit does not converge.
    """
    check_link(link)
    x, y, n = counts.water_potential_mpa, counts.plasmolysed, counts.total
    file = counts.source
    sep = separation(x, y, n)
    if sep is not None:
        raise FitError(_separation_message(sep), file=file,
                       hint="add levels in that range or count more cells per level")
    T = temperature_k or counts.temperature_k or 298.15
    g = fit_glm(x, y, n, link)
    if not g.converged or not np.all(np.isfinite(g.coef)) or g.coef[1] == 0:
        raise FitError(f"the {link} fit did not converge", file=file, hint="check the counts; try the other link")
    b0, b1 = (float(v) for v in g.coef)
    psi50 = -b0 / b1
    warnings: list[str] = []
    if b1 > 0:
        warnings.append("plasmolysis falls as the solution gets more concentrated: check the level column and "
                        "that the counts are not swapped")
    df = g.df
    het = g.pearson_chi2 / df if df > 0 else math.nan
    pearson_p = chi2_sf(df, g.pearson_chi2) if df > 0 else math.nan
    deviance_p = chi2_sf(df, g.deviance) if df > 0 else math.nan
    overdispersed = df > 0 and pearson_p < 0.05 and het > 1
    V = g.cov.copy()
    if overdispersed:
        V *= het
        from scipy.special import stdtrit  # the t quantile scipy.stats' t.ppf calls (only when widened)

        q = float(stdtrit(df, 1 - alpha / 2))
        method = f"Fieller, widened by heterogeneity factor {het:.3g} (t on {df} df)"
        warnings.append(f"overdispersed: Pearson chi2 = {g.pearson_chi2:.3g} on {df} df (p = {pearson_p:.2g}); "
                        f"the interval is widened by the heterogeneity factor {het:.3g} — variation between "
                        "pieces or replicates exceeds binomial sampling")
    else:
        q = critical_normal(alpha)
        method = "Fieller"
    ci = fieller_interval(b0, b1, V, q)
    if ci is None:
        warnings.append("the slope is not significantly different from zero: the 95 % interval is unbounded; "
                        "count more cells or widen the series")
    lo_x, hi_x = float(x.min()), float(x.max())
    if not lo_x <= psi50 <= hi_x:
        warnings.append(f"the 50 % point ({psi50:.3g} MPa) lies outside the levels tested ({hi_x:.3g} to "
                        f"{lo_x:.3g} MPa): extrapolated; extend the series")
    osm50 = float(potential.osmolality_from_potential(psi50 * 1e6, T)) * 1000.0
    osm_ci = None
    if ci is not None:
        osm_ci = sorted(float(potential.osmolality_from_potential(v * 1e6, T)) * 1000.0 for v in ci)
    if not -3.5 <= psi50 <= -0.3:
        warnings.append(f"{psi50:.3g} MPa is outside the usual range of cell sap (about -0.6 to -3.0 MPa): "
                        "check the units of the level column")
    level_sd = ci_levels = osm_ci_levels = None
    if level_uncertainty is not None and math.isfinite(psi50) and psi50 < 0:
        try:
            sd = float(level_uncertainty(psi50))
        except MediaplanError as exc:  # psi50 beyond what the osmoticum reaches: no level made there
            sd = math.nan
            warnings.append(f"the levels' own uncertainty is not included: {exc.message}")
        if math.isfinite(sd):
            level_sd = sd
            if ci is not None:
                ci_levels = combine_with_levels(psi50, ci, sd, q)
                osm_ci_levels = sorted(float(potential.osmolality_from_potential(v * 1e6, T)) * 1000.0
                                       for v in ci_levels)
    rows = [{"water_potential_mpa": float(xi), "plasmolysed": int(yi), "total": int(ni),
             "observed": float(yi / ni), "fitted": float(mi)} for xi, yi, ni, mi in zip(x, y, n, g.mu, strict=True)]
    return PlasmolysisFit(
        link=link, water_potential_50_mpa=psi50, ci95_mpa=[float(v) for v in ci] if ci is not None else None, ci_method=method,
        osmolality_50_mosmol_per_kg=osm50, osmolality_ci95_mosmol_per_kg=osm_ci, osmotic_potential_mpa=psi50,
        temperature_c=T - T0, intercept=b0, slope_per_mpa=b1, covariance=V.tolist(), deviance=g.deviance,
        pearson_chi2=g.pearson_chi2, df=df, deviance_p=deviance_p, pearson_p=pearson_p, heterogeneity=het,
        overdispersed=overdispersed, widened=overdispersed, n_levels=counts.n_levels, n_rows=int(x.size),
        cells=int(n.sum()), iterations=g.iterations, source=file, rows=rows, warnings=warnings,
        notes=list(counts.notes), level_sd_mpa=level_sd, ci95_with_levels_mpa=ci_levels,
        osmolality_ci95_with_levels_mosmol_per_kg=osm_ci_levels)


def _separation_message(sep: tuple[str, float, float]) -> str:
    kind, a, b = sep
    if kind == "none":
        return (f"no cell is plasmolysed at any level ({b:.4g} to {a:.4g} MPa): the 50 % point is more negative "
                "than the series; extend it to more negative potentials")
    if kind == "all":
        return (f"every cell is plasmolysed at every level ({b:.4g} to {a:.4g} MPa): the 50 % point is less "
                "negative than the series; extend it towards less negative potentials")
    if kind == "separated":
        span = f"at {a:.4g} MPa" if a == b else f"between {b:.4g} and {a:.4g} MPa"
        return (f"complete separation: the counts jump from no plasmolysis to full plasmolysis {span} with no "
                "partial levels on either side; the 50 % point lies there but no slope or interval can be "
                "estimated")
    return (f"the counts run the wrong way: plasmolysis only at {b:.4g} MPa and above, none at {a:.4g} MPa and "
            "below; check the level column and the counts")
