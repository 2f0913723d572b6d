"""The fitted plasmolysis curve as data points, SVG text or PNG bytes.

``curve_points`` is a pure function that any front end can draw (the terminal app uses it with
textual-plotext). ``svg_text`` writes SVG by hand (no dependency); ``png_bytes`` uses matplotlib,
imported only when called (the ``plot`` extra). Neither writes files: the caller saves the result.
"""

from __future__ import annotations

import io
import math
from dataclasses import dataclass
from xml.sax.saxutils import escape

import numpy as np

from mediaplan.medium.errors import MediaplanError
from mediaplan.tasks.plasmolysis import PlasmolysisFit, inverse_link


@dataclass
class CurvePoints:
    """Everything a plot of a fit shows (potentials [MPa], proportions [0-1])."""

    x_mpa: np.ndarray  # grid along the water-potential axis
    fitted: np.ndarray  # fitted proportion plasmolysed on the grid
    band_low: np.ndarray  # pointwise 95 % band on the grid
    band_high: np.ndarray
    observed_x_mpa: np.ndarray  # one entry per counted row
    observed: np.ndarray
    observed_total: np.ndarray
    water_potential_50_mpa: float
    ci95_mpa: tuple[float, float] | None
    link: str


def curve_points(fit: PlasmolysisFit, n: int = 121) -> CurvePoints:
    """The fitted curve with a pointwise 95 % band (Wald on the linear predictor, the fit's dispersion).

    The band uses the same critical value as the fit's interval (normal, or t on the residual df
    when the fit was widened for overdispersion).
    """
    ox = np.array([r["water_potential_mpa"] for r in fit.rows], dtype=float)
    lo, hi = float(ox.min()), float(ox.max())
    if fit.ci95_mpa is not None:
        lo, hi = min(lo, fit.ci95_mpa[0]), max(hi, fit.ci95_mpa[1])
    lo, hi = min(lo, fit.water_potential_50_mpa), max(hi, fit.water_potential_50_mpa)
    pad = 0.08 * (hi - lo or 1.0)
    x = np.linspace(lo - pad, min(hi + pad, 0.0), n)
    V = np.asarray(fit.covariance)
    eta = fit.intercept + fit.slope_per_mpa * x
    se = np.sqrt(np.maximum(V[0, 0] + 2 * x * V[0, 1] + x * x * V[1, 1], 0.0))
    if fit.widened:
        from scipy.stats import t as student_t  # only a widened fit needs t's quantile (and scipy)

        q = float(student_t.ppf(0.975, fit.df))
    else:
        from mediaplan.tasks.plasmolysis.fit import Z_95  # scipy.stats.norm.ppf(0.975), the same float

        q = Z_95
    a, b = inverse_link(eta - q * se, fit.link), inverse_link(eta + q * se, fit.link)
    return CurvePoints(
        x_mpa=x, fitted=inverse_link(eta, fit.link), band_low=np.minimum(a, b), band_high=np.maximum(a, b),
        observed_x_mpa=ox, observed=np.array([r["observed"] for r in fit.rows], dtype=float),
        observed_total=np.array([r["total"] for r in fit.rows], dtype=float),
        water_potential_50_mpa=fit.water_potential_50_mpa,
        ci95_mpa=tuple(fit.ci95_mpa) if fit.ci95_mpa is not None else None, link=fit.link)


def nice_ticks(lo: float, hi: float, target: int = 6) -> list[float]:
    """Round tick values covering [lo, hi] (steps of 1, 2 or 5 times a power of ten)."""
    span = hi - lo
    if span <= 0:
        return [lo]
    raw = span / target
    mag = 10 ** math.floor(math.log10(raw))
    step = next(s * mag for s in (1, 2, 5, 10) if s * mag >= raw)
    first = math.ceil(lo / step - 1e-9) * step
    ticks = []
    v = first
    while v <= hi + 1e-9 * step:
        ticks.append(round(v, 10) + 0.0)
        v += step
    return ticks


# ---- SVG -----------------------------------------------------------------------------------
_W, _H = 640, 420
_ML, _MR, _MT, _MB = 64, 20, 40, 52
_INK = "#222222"
_GRID = "#e4e4e4"
_BAND = "#cfe3e0"
_CURVE = "#1f6f66"
_POINT = "#b3472d"
_MARK = "#6b6b6b"


def svg_text(cp: CurvePoints, title: str = "") -> str:
    """A self-contained SVG document of the curve, its band, the observed proportions and the 50 % point."""
    x0, x1 = float(cp.x_mpa.min()), float(cp.x_mpa.max())
    pw, ph = _W - _ML - _MR, _H - _MT - _MB

    def sx(v: float) -> float:
        return _ML + (v - x0) / (x1 - x0) * pw

    def sy(p: float) -> float:
        return _MT + (1.0 - p) * ph

    out = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{_W}" height="{_H}" viewBox="0 0 {_W} {_H}" '
           'font-family="sans-serif" font-size="12">',
           f'<rect x="0" y="0" width="{_W}" height="{_H}" fill="#ffffff"/>']
    if title:
        out.append(f'<text x="{_W / 2:.1f}" y="22" text-anchor="middle" font-size="14" fill="{_INK}">'
                   f"{escape(title)}</text>")
    for t in nice_ticks(x0, x1):
        X = sx(t)
        out.append(f'<line x1="{X:.1f}" y1="{_MT}" x2="{X:.1f}" y2="{_MT + ph}" stroke="{_GRID}"/>')
        out.append(f'<text x="{X:.1f}" y="{_MT + ph + 16}" text-anchor="middle" fill="{_INK}">{t:g}</text>')
    for p in (0.0, 0.25, 0.5, 0.75, 1.0):
        Y = sy(p)
        out.append(f'<line x1="{_ML}" y1="{Y:.1f}" x2="{_ML + pw}" y2="{Y:.1f}" stroke="{_GRID}"/>')
        out.append(f'<text x="{_ML - 6}" y="{Y + 4:.1f}" text-anchor="end" fill="{_INK}">{100 * p:.0f}</text>')
    band = [f"{sx(x):.1f},{sy(p):.1f}" for x, p in zip(cp.x_mpa, cp.band_high, strict=True)]
    band += [f"{sx(x):.1f},{sy(p):.1f}" for x, p in zip(cp.x_mpa[::-1], cp.band_low[::-1], strict=True)]
    out.append(f'<polygon points="{" ".join(band)}" fill="{_BAND}" stroke="none"/>')
    curve = " ".join(f"{sx(x):.1f},{sy(p):.1f}" for x, p in zip(cp.x_mpa, cp.fitted, strict=True))
    out.append(f'<polyline points="{curve}" fill="none" stroke="{_CURVE}" stroke-width="2"/>')
    X50 = sx(cp.water_potential_50_mpa)
    out.append(f'<line x1="{X50:.1f}" y1="{_MT}" x2="{X50:.1f}" y2="{_MT + ph}" stroke="{_MARK}" '
               'stroke-dasharray="4 3"/>')
    if cp.ci95_mpa is not None:
        a, b = sx(cp.ci95_mpa[0]), sx(cp.ci95_mpa[1])
        Y = sy(0.5)
        out.append(f'<line x1="{a:.1f}" y1="{Y:.1f}" x2="{b:.1f}" y2="{Y:.1f}" stroke="{_MARK}" stroke-width="3"/>')
    label = f"50 %: {cp.water_potential_50_mpa:.3g} MPa"
    if cp.ci95_mpa is not None:
        label += f" (95 % CI {cp.ci95_mpa[0]:.3g} to {cp.ci95_mpa[1]:.3g})"
    out.append(f'<text x="{_ML + 8}" y="{_MT + 14}" fill="{_INK}">{escape(label)}</text>')
    tmax = float(cp.observed_total.max()) if cp.observed_total.size else 1.0
    for x, p, n in zip(cp.observed_x_mpa, cp.observed, cp.observed_total, strict=True):
        r = 2.5 + 3.5 * math.sqrt(n / tmax)
        out.append(f'<circle cx="{sx(x):.1f}" cy="{sy(p):.1f}" r="{r:.1f}" fill="{_POINT}" fill-opacity="0.8"/>')
    out.append(f'<rect x="{_ML}" y="{_MT}" width="{pw}" height="{ph}" fill="none" stroke="{_INK}"/>')
    out.append(f'<text x="{_ML + pw / 2:.1f}" y="{_H - 12}" text-anchor="middle" fill="{_INK}">'
               "water potential of the solution (MPa)</text>")
    out.append(f'<text x="16" y="{_MT + ph / 2:.1f}" text-anchor="middle" fill="{_INK}" '
               f'transform="rotate(-90 16 {_MT + ph / 2:.1f})">cells plasmolysed (%)</text>')
    out.append("</svg>")
    return "\n".join(out) + "\n"


def png_bytes(cp: CurvePoints, title: str = "", *, dpi: int = 150) -> bytes:
    """The same figure as PNG, drawn with matplotlib (the ``plot`` extra)."""
    try:
        import matplotlib

        matplotlib.use("Agg", force=True)
        import matplotlib.pyplot as plt
    except ImportError:
        raise MediaplanError("PNG export needs matplotlib, which is not installed",
                             hint="pip install 'mediaplan[plot]', or export .svg instead") from None
    fig, ax = plt.subplots(figsize=(6.4, 4.2), dpi=dpi)
    try:
        ax.fill_between(cp.x_mpa, 100 * cp.band_low, 100 * cp.band_high, color=_BAND, lw=0, label="95 % band")
        ax.plot(cp.x_mpa, 100 * cp.fitted, color=_CURVE, lw=2, label=f"{cp.link} fit")
        tmax = float(cp.observed_total.max()) if cp.observed_total.size else 1.0
        ax.scatter(cp.observed_x_mpa, 100 * cp.observed, s=12 + 40 * cp.observed_total / tmax, color=_POINT,
                   alpha=0.8, zorder=3, label="observed")
        ax.axvline(cp.water_potential_50_mpa, color=_MARK, ls="--", lw=1)
        if cp.ci95_mpa is not None:
            ax.plot(cp.ci95_mpa, [50, 50], color=_MARK, lw=3, label="95 % CI of the 50 % point")
        ax.set_xlabel("water potential of the solution (MPa)")
        ax.set_ylabel("cells plasmolysed (%)")
        ax.set_ylim(-2, 102)
        if title:
            ax.set_title(title)
        ax.legend(loc="best", fontsize=8, frameon=False)
        fig.tight_layout()
        buf = io.BytesIO()
        fig.savefig(buf, format="png")
    finally:
        plt.close(fig)
    return buf.getvalue()
