"""Parameter containers handed from the catalog layer to the core (plain data, no I/O)."""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class BinaryPitzer:
    """Pitzer binary parameters of one cation-anion pair at 25 °C.

    beta0, beta1, beta2 [kg/mol]; cphi [kg^2/mol^2]; alpha1, alpha2 [kg^1/2 mol^-1/2];
    max_m [mol/kg] upper end of the data the parameters were fitted to.
    """

    cation: str
    anion: str
    beta0: float
    beta1: float
    beta2: float
    cphi: float
    alpha1: float
    alpha2: float
    max_m: float
    source: str
    #: temperature terms: ((parameter, (A1, A2, A3, A4, A5)), ...) with
    #: P(T) - P(Tr) = A1 (1/T - 1/Tr) + A2 ln(T/Tr) + A3 (T - Tr) + A4 (T^2 - Tr^2) + A5 (1/T^2 - 1/Tr^2),
    #: Tr = 298.15 K; parameter one of beta0, beta1, beta2, cphi
    temperature_terms: tuple = ()
    temperature_source: str = ""


@dataclass(frozen=True)
class PitzerParams:
    """All Pitzer parameters: binary pairs, like-charge theta and triplet psi.

    theta keys are sorted pairs of ion ids; psi keys are (sorted like-charge pair..., opposite ion).
    ``a_phi_coeffs`` are the coefficients of the A_phi(T) fit of Møller (1988), eq. 13.
    """

    binary: dict[tuple[str, str], BinaryPitzer]
    theta: dict[tuple[str, str], float] = field(default_factory=dict)
    psi: dict[tuple[str, str, str], float] = field(default_factory=dict)
    b: float = 1.2
    a_phi_coeffs: tuple[float, ...] = (
        0.336901532, -0.00063210043, 9.14252359, -0.0135143986, 0.00226089488, 1.92118597e-06, 45.2586464, 0.0,
    )


@dataclass(frozen=True)
class NeutralParams:
    """Model of one neutral solute's binary solution with water.

    model : "norrish" (a_w = x_w exp(-K x_s^2)) or "ideal" (Raoult's law, a_w = x_w)
    K : Norrish constant [-] (ignored for "ideal")
    m_max : upper end of the validity range [mol/kg]
    source : citation of K
    """

    species: str
    model: str
    K: float
    m_max: float
    source: str
