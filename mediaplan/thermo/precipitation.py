"""Screen for calcium salts that may precipitate from a medium or a stock (pure, no I/O).

Activities from the Davies (1938) equation, solubility products at 25 °C; a screen that says
"watch out", not a speciation model.

References
----------
Davies CW (1938) The extent of dissociation of salts in water. VIII. J Chem Soc 2093-2098.
"""

from __future__ import annotations

import math

#: thermodynamic solubility products at 25 °C (from memory, unverified): gypsum CaSO4·2H2O 10^-4.58,
#: brushite CaHPO4·2H2O 10^-6.59
KSP = {("Ca[2+]", "SO4[2-]"): (10**-4.58, "calcium sulfate (gypsum)"),
       ("Ca[2+]", "HPO4[2-]"): (10**-6.59, "calcium hydrogen phosphate (brushite)")}
#: fraction of orthophosphate present as HPO4[2-] at pH 5.8 (pKa2 = 7.2): 10^(5.8-7.2)/(1+10^(5.8-7.2))
HPO4_FRACTION_PH58 = 10 ** (5.8 - 7.2) / (1 + 10 ** (5.8 - 7.2))
#: the species :func:`calcium_saturation` reads from its molalities (any other may be left out of them)
SPECIES_READ = frozenset({"Ca[2+]", "HPO4[2-]", "H2PO4[-]", *(an for _cat, an in KSP)})


def davies_log10_gamma(z: int, ionic_strength: float) -> float:
    """log10 of the activity coefficient of an ion of charge z at ionic strength I [mol/kg], 25 °C."""
    s = math.sqrt(ionic_strength)
    return -0.509 * z * z * (s / (1 + s) - 0.3 * ionic_strength)


def calcium_saturation(m: dict[str, float], ionic_strength: float) -> list[tuple[str, str, float]]:
    """(anion, salt label, IAP/Ksp) for each calcium salt whose ions are present.

    m : species molalities [mol/kg] by species name; H2PO4[-] counts toward HPO4[2-] at pH 5.8.
    """
    ca = m.get("Ca[2+]", 0.0)
    if ca <= 0:
        return []
    g2 = 10 ** davies_log10_gamma(2, ionic_strength)
    hpo4 = m.get("HPO4[2-]", 0.0) + HPO4_FRACTION_PH58 * m.get("H2PO4[-]", 0.0)
    out = []
    for (_cat, an), (ksp, label) in KSP.items():
        a = hpo4 if an == "HPO4[2-]" else m.get(an, 0.0)
        if a > 0:
            out.append((an, label, ca * g2 * a * g2 / ksp))
    return out
