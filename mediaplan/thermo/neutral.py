"""Neutral solutes (sugars, polyols, cryoprotectants, trace organics) in water.

Each solute's binary solution with water is described by one of two models:

``"norrish"``
    a_w = x_w exp(-K x_s^2) (Norrish 1966), with x_w, x_s the mole fractions of water and
    solute. With x_s = M_w m / (1 + M_w m) the osmolality is

        Osm(m) = -ln(a_w) / M_w = [ln(1 + M_w m) + K x_s^2] / M_w     [osmol/kg]

``"ideal"``
    Raoult's law, a_w = x_w (the Norrish form with K = 0). Used for solutes with no
    published K; the catalog says so for each.

Molality m is mol solute per kg water. Pure numpy: no I/O, no units library.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

import numpy as np

from mediaplan.thermo.constants import M_WATER
from mediaplan.thermo.ions import parse_species
from mediaplan.thermo.params import NeutralParams

MODELS = ("norrish", "ideal")

# K must exceed this so that ln a_w falls monotonically with m over the whole range
# (d/du of [-ln(1-u) + K u^2] = 1/(1-u) + 2 K u > 0 for all 0 <= u < 1 iff K > -1/2).
_K_MIN = -0.5

_REQUIRED_KEYS = {"model", "m_max", "source"}
_OPTIONAL_KEYS = {"K", "name", "note", "confidence", "K_basis", "m_max_basis", "K_borrowed_from"}


def neutral_params_from_dict(data: Mapping) -> dict[str, NeutralParams]:
    """Build the parameter objects from the parsed neutral-solute catalog.

    Parameters
    ----------
    data : mapping, the parsed ``catalog/neutral.yaml`` document; its ``solutes`` mapping
        holds one entry per species id with keys ``model`` ("norrish" or "ideal"),
        ``K`` [-] (required for "norrish"; absent or 0 for "ideal"), ``m_max`` [mol/kg]
        and ``source`` (citation); optional keys ``name``, ``note``, ``confidence``,
        ``K_basis``, ``m_max_basis``, ``K_borrowed_from`` are accepted and not returned.
        A ``source`` equal to a key of the document's ``sources`` mapping is replaced by
        that full citation.

    Returns
    -------
    dict {species id: NeutralParams}

    Raises
    ------
    ValueError naming the entry for a bad species id, unknown model, missing or
    non-finite number, K <= -0.5, m_max <= 0, empty source or unknown key.
    """
    if not isinstance(data, Mapping) or not isinstance(data.get("solutes"), Mapping):
        raise ValueError("neutral-solute data: expected a mapping with a 'solutes' mapping")
    sources = data.get("sources") or {}
    if not isinstance(sources, Mapping):
        raise ValueError("neutral-solute data: 'sources' must be a mapping of key: citation")
    out: dict[str, NeutralParams] = {}
    for sid, entry in data["solutes"].items():
        where = f"neutral solute {sid!r}"
        if not isinstance(sid, str):
            raise ValueError(f"{where}: species id must be a string")
        try:
            sp = parse_species(sid)
        except ValueError as exc:
            raise ValueError(f"{where}: {exc}") from None
        if sp.is_ion:
            raise ValueError(f"{where}: is an ion, not a neutral solute")
        if not isinstance(entry, Mapping):
            raise ValueError(f"{where}: entry must be a mapping")
        missing = _REQUIRED_KEYS - set(entry)
        if missing:
            raise ValueError(f"{where}: missing {', '.join(sorted(missing))}")
        unknown = set(entry) - _REQUIRED_KEYS - _OPTIONAL_KEYS
        if unknown:
            raise ValueError(f"{where}: unknown key(s) {', '.join(sorted(map(str, unknown)))}")
        model = entry["model"]
        if model not in MODELS:
            raise ValueError(f"{where}: model {model!r} is not one of {', '.join(MODELS)}")
        if model == "norrish":
            if "K" not in entry:
                raise ValueError(f"{where}: model 'norrish' needs K")
            K = _finite(entry["K"], where, "K")
            if K <= _K_MIN:
                raise ValueError(f"{where}: K = {K} must exceed {_K_MIN}")
        else:
            K = _finite(entry.get("K", 0.0), where, "K")
            if K != 0.0:
                raise ValueError(f"{where}: model 'ideal' takes K = 0 (got {K})")
        m_max = _finite(entry["m_max"], where, "m_max")
        if m_max <= 0.0:
            raise ValueError(f"{where}: m_max = {m_max} must be positive [mol/kg]")
        source = entry["source"]
        if not isinstance(source, str) or not source.strip():
            raise ValueError(f"{where}: source must be a non-empty citation")
        if source in sources:
            source = " ".join(str(sources[source]).split())
        out[sid] = NeutralParams(species=sid, model=model, K=K, m_max=m_max, source=source.strip())
    return out


def _finite(value, where: str, key: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise ValueError(f"{where}: {key} must be a number (got {value!r})")
    v = float(value)
    if not math.isfinite(v):
        raise ValueError(f"{where}: {key} must be finite (got {value!r})")
    return v


def _K(p: NeutralParams):
    """Norrish constant of ``p`` (0 for ideal). ``p.K`` may be an array when several solutes are
    stacked (see :func:`stack`); the model must then be "norrish" with ideal ones at K = 0."""
    if p.model == "ideal":
        return 0.0
    if p.model == "norrish":
        return p.K if isinstance(p.K, np.ndarray) else float(p.K)
    raise ValueError(f"neutral solute {p.species!r}: unknown model {p.model!r}")


def stack(params) -> NeutralParams:
    """Several solutes as one NeutralParams whose K is an array (ideal solutes at K = 0), so that the
    functions of this module evaluate all of them in one vectorised call (last axis = solute)."""
    K = np.array([_K(p) for p in params], dtype=float)
    m_max = float(min((p.m_max for p in params), default=float("inf")))
    return NeutralParams("+".join(p.species for p in params), "norrish", K, m_max, "stacked")


def _molality(m) -> np.ndarray:
    m = np.asarray(m, dtype=float)
    if not np.all(np.isfinite(m)) or np.any(m < 0.0):
        raise ValueError("molality must be finite and non-negative [mol/kg]")
    return m


def binary_osmolality(m, p: NeutralParams) -> np.ndarray:
    """Osmolality of the binary solution of one neutral solute in water.

    Parameters
    ----------
    m : float or array_like, molality [mol/kg water], >= 0
    p : NeutralParams, model of the solute

    Returns
    -------
    numpy.ndarray, osmolality -ln(a_w)/M_w [osmol/kg], same shape as ``m``

    Notes
    -----
    Norrish: Osm = [ln(1 + M_w m) + K x_s^2] / M_w with x_s = M_w m/(1 + M_w m); ideal: K = 0.
    The osmotic coefficient Osm/m tends to 1 as m -> 0 (slope K - 1/2 times M_w). The K
    values of the catalog are for 25 °C; the model has no temperature dependence.
    Values above ``p.m_max`` are computed, not refused: callers warn.

    References
    ----------
    Norrish RS (1966) An equation for the activity coefficients and equilibrium relative
    humidities of water in confectionery syrups. J Food Technol 1:25-39.
    """
    m = _molality(m)
    K = _K(p)
    u = M_WATER * m
    xs = u / (1.0 + u)
    return (np.log1p(u) + K * xs * xs) / M_WATER


def binary_osmolality_dm(m, p: NeutralParams) -> np.ndarray:
    """Derivative of :func:`binary_osmolality` with respect to molality.

    Parameters
    ----------
    m : float or array_like, molality [mol/kg water]
    p : NeutralParams

    Returns
    -------
    numpy.ndarray, d(Osm)/dm [osmol/mol]

    Notes
    -----
    d(Osm)/dm = 1/(1 + M_w m) + 2 K x_s / (1 + M_w m)^2 (analytic).
    """
    m = _molality(m)
    K = _K(p)
    d = 1.0 + M_WATER * m
    xs = M_WATER * m / d
    return 1.0 / d + 2.0 * K * xs / (d * d)


def molality_at_osmolality(y, p: NeutralParams) -> np.ndarray:
    """Molality of the binary solution that has a given osmolality (inverse of
    :func:`binary_osmolality`).

    Parameters
    ----------
    y : float or array_like, osmolality [osmol/kg], >= 0
    p : NeutralParams

    Returns
    -------
    numpy.ndarray, molality [mol/kg water]; 0 where ``y`` is 0

    Notes
    -----
    In the solute mole fraction u = x_s the equation is g(u) = -ln(1 - u) + K u^2 - M_w y = 0,
    increasing in u for K > -1/2. Newton's method starts from the exact ideal solution
    u0 = 1 - exp(-M_w y); for K >= 0, g is convex and g(u0) >= 0, so the iterates decrease
    monotonically to the root. Converged to machine precision (relative error in m below
    1e-13 in practice); m = u / (M_w (1 - u)).
    """
    y = np.asarray(y, dtype=float)
    if not np.all(np.isfinite(y)) or np.any(y < 0.0):
        raise ValueError("osmolality must be finite and non-negative [osmol/kg]")
    K = _K(p)
    target = M_WATER * y
    u = -np.expm1(-target)  # ideal solution, exact for K = 0
    if np.any(K != 0.0):
        for _ in range(100):
            one_minus = 1.0 - u
            g = -np.log1p(-u) + K * u * u - target
            dg = 1.0 / one_minus + 2.0 * K * u
            step = g / dg
            u_new = np.clip(u - step, 0.0, np.nextafter(1.0, 0.0))
            done = np.all(np.abs(u_new - u) <= 4.0 * np.finfo(float).eps * np.abs(u_new))
            u = u_new
            if done:
                break
    return u / (M_WATER * (1.0 - u))


def water_activity(m, p: NeutralParams) -> np.ndarray:
    """Water activity of the binary solution.

    Parameters
    ----------
    m : float or array_like, molality [mol/kg water]
    p : NeutralParams

    Returns
    -------
    numpy.ndarray, a_w = x_w exp(-K x_s^2) [-]
    """
    return np.exp(-M_WATER * binary_osmolality(m, p))


def osmotic_coefficient(m, p: NeutralParams) -> np.ndarray:
    """Molal osmotic coefficient phi = Osm / m of the binary solution (1 at m = 0).

    Parameters
    ----------
    m : float or array_like, molality [mol/kg water]
    p : NeutralParams

    Returns
    -------
    numpy.ndarray, phi [-]
    """
    m = _molality(m)
    with np.errstate(invalid="ignore", divide="ignore"):
        phi = binary_osmolality(m, p) / m
    return np.where(m > 0.0, phi, 1.0)
