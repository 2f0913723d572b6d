"""Masses and volumes as a laboratory balance and a pipette handle them.

Every mass on a sheet is carried unrounded; rounding happens only here (:func:`round_mass`,
:func:`format_mass`), so that Σ over stocks (stock concentration × volume per batch) + direct
weighings = the plan's mass per batch. The texts made here (``1.650 g``, ``250 mL``) are part of the
sheet's content (its steps and its JSON), not a terminal layout.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

#: masses below this are flagged "weigh via stock" [g] (common practice: an analytical balance
#: reading 0.1 mg weighs 10 mg to about 1 %)
WEIGH_VIA_STOCK_G = 0.010
#: the finest mass a sheet shows [g] (0.1 mg)
BALANCE_RESOLUTION_G = 1e-4
#: smallest volume of stock to pipette into one batch [mL] (common practice)
MIN_PIPETTE_ML = 0.1

#: dilute stocks tried for a mass too small to weigh, in order: (grams dissolved [g], made up to [mL])
_SUBSTOCKS = ((0.1, 100.0), (0.01, 100.0), (0.01, 1000.0))


def round_mass(grams: float) -> float:
    """Four significant figures, never finer than 0.1 mg [g]."""
    if grams <= 0 or not math.isfinite(grams):
        return 0.0
    r = float(f"{grams:.4g}")
    return round(r / BALANCE_RESOLUTION_G) * BALANCE_RESOLUTION_G if r >= BALANCE_RESOLUTION_G else r


def format_mass(grams: float | None) -> str:
    """A mass [g] for a lab balance: ``1.650 g``, ``440.0 mg``, ``6.2 mg``; below 0.1 mg ``< 0.1 mg``; no mass
    (None, or not a finite number) ``—``."""
    if grams is None or not math.isfinite(grams):
        return "—"
    if grams <= 0:
        return "0 g"
    r = round_mass(grams)
    if grams < BALANCE_RESOLUTION_G * 0.95:
        return "< 0.1 mg"
    if r >= 1.0:
        return f"{r:.{max(0, 3 - int(math.floor(math.log10(r))))}f} g"
    mg = r * 1000.0
    decimals = max(0, min(1, 3 - int(math.floor(math.log10(mg)))))
    return f"{mg:.{decimals}f} mg"


def format_volume_ml(ml: float) -> str:
    """A volume [mL] to four significant figures, in litres from 1000 mL on."""
    if ml >= 1000:
        return f"{ml / 1000:.4g} L"
    return f"{ml:.4g} mL"


@dataclass(frozen=True)
class SubStock:
    """A dilute stock for a mass too small to weigh: dissolve ``grams`` [g] in ``volume_ml`` [mL],
    pipette ``pipette_ml`` [mL] of it."""

    grams: float
    volume_ml: float
    pipette_ml: float

    @property
    def mg_per_ml(self) -> float:
        """Concentration of the dilute stock [mg/mL]."""
        return self.grams * 1000.0 / self.volume_ml

    def text(self) -> str:
        """The instruction as one phrase (printed on the sheet beside the component)."""
        return (f"dissolve {format_mass(self.grams)} in {self.volume_ml:g} mL ({self.mg_per_ml:g} mg/mL) "
                f"and pipette {self.pipette_ml:.3g} mL")

    def to_dict(self) -> dict:
        """``grams`` [g], ``volume_ml`` [mL], ``pipette_ml`` [mL] (JSON-ready)."""
        return asdict(self)


def substock_for(grams: float) -> SubStock:
    """A dilute stock for ``grams`` [g] too small to weigh: 100 mg or 10 mg made up to 100 mL or 1 L,
    whichever gives a pipetted volume of at least 0.1 mL."""
    for g, vol in _SUBSTOCKS:
        pip = grams / g * vol
        if pip >= MIN_PIPETTE_ML:
            return SubStock(g, vol, pip)
    g, vol = _SUBSTOCKS[-1]
    return SubStock(g, vol, grams / g * vol)
