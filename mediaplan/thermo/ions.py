"""Dissolved species: names, charges and the stoichiometry of dissolution.

Species names follow one convention across catalog, core and outputs:
ions carry their charge in brackets (``K[+]``, ``Ca[2+]``, ``NO3[-]``, ``SO4[2-]``, ``H2PO4[-]``),
neutral solutes are bare lower-case ids (``sucrose``, ``mannitol``, ``peg8000``).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache

_ION_RE = re.compile(r"^(?P<core>[A-Za-z0-9()_]+)\[(?P<n>\d*)(?P<sign>[+-])\]$")
_NEUTRAL_RE = re.compile(r"^[a-z][a-z0-9_]*$")


@dataclass(frozen=True)
class Species:
    """One dissolved species.

    Attributes
    ----------
    id : str, e.g. ``Ca[2+]`` or ``sucrose``
    charge : int, signed charge number (0 for neutral solutes)
    """

    id: str
    charge: int

    @property
    def is_ion(self) -> bool:
        return self.charge != 0


@lru_cache(maxsize=512)
def parse_species(name: str) -> Species:
    """Parse a species name into a :class:`Species`.

    Raises ``ValueError`` for a name that follows neither convention.
    """
    m = _ION_RE.match(name)
    if m:
        n = int(m.group("n") or 1)
        if n == 0:
            raise ValueError(f"species {name!r}: charge 0 in brackets; write neutral solutes without brackets")
        return Species(name, n if m.group("sign") == "+" else -n)
    if _NEUTRAL_RE.match(name):
        return Species(name, 0)
    raise ValueError(f"species {name!r}: write ions as K[+], Ca[2+], SO4[2-] and neutral solutes in lower case")


def charge_balance(species: dict[str, float]) -> float:
    """Net charge per formula unit of a stoichiometry map {species: count}."""
    return sum(parse_species(s).charge * n for s, n in species.items())
