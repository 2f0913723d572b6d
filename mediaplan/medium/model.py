"""A recipe's components compiled for fast, vectorised evaluation.

``MediumModel`` fixes a list of components (and so the species, stoichiometry, molar masses and
apparent molar volumes) and the temperature; ``solve`` then takes arrays of amounts (batches of
variants) and returns molalities and the ZSR solution. ``evaluate()`` uses it for one recipe; the
solver and the plasmolysis designer use it for many.
"""

from __future__ import annotations

from collections import OrderedDict
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from mediaplan.medium.catalog import Catalog, Component
from mediaplan.medium.errors import MediaplanError
from mediaplan.thermo import water
from mediaplan.thermo.ions import parse_species
from mediaplan.thermo.mixing import MixtureInput, MixtureResult, zsr_osmolality
from mediaplan.thermo.params import NeutralParams

#: volume-based amount kinds (per m^3 of medium) and water-based ones (per kg of water)
VOLUME_KINDS = ("mass_conc", "molar", "vol_frac")
WATER_KINDS = ("molal", "mass_per_water")

#: apparent molar volume used when the catalog has none: anhydrous molar mass / 1.5 g cm^-3
#: (common practice for a crystalline solute; affects only the water content of the medium)
DEFAULT_SOLUTE_DENSITY = 1.5e3  # kg/m^3
#: partial specific volume of PEG in water [m^3/kg] (about 0.83 cm^3/g; from memory)
PEG_SPECIFIC_VOLUME = 0.83e-3

_PEG_GRADES = {"peg6000": 6000, "peg8000": 8000}


@dataclass
class ModelState:
    """Batch result of :meth:`MediumModel.solve` (leading axis B)."""

    water_kg_per_m3: np.ndarray  # kg of water per m^3 of medium (hydrate water included)
    n_per_m3: np.ndarray  # (B, n_comp) mol of each component per m^3 of medium
    molality: np.ndarray  # (B, n_comp) mol of each component per kg water
    species_m: np.ndarray  # (B, n_species) molality of each species
    mix: MixtureResult


class MediumModel:
    """Compiled components of a medium at one temperature [K]."""

    def __init__(self, catalog: Catalog, components: Sequence[Component], T: float) -> None:
        self.catalog = catalog
        self.components = list(components)
        self.T = float(T)
        species: list[str] = []
        for c in self.components:
            for sp, _ in c.species:
                if sp not in species:
                    species.append(sp)
        self.species = species
        nc, ns = len(self.components), len(species)
        S = np.zeros((nc, ns))
        for i, c in enumerate(self.components):
            for sp, n in c.species:
                S[i, species.index(sp)] += n
        self.S = S
        self.M = np.array([(c.molar_mass or 0.0) / 1000.0 for c in self.components])  # kg/mol as sold
        self.M_anh = np.array([(c.anhydrous_molar_mass or 0.0) / 1000.0 for c in self.components])
        self.hydrate = np.array([c.hydrate_water for c in self.components])
        self.rho_liquid = np.array([(c.density or 0.0) * 1000.0 for c in self.components])
        v = []
        self.default_volume: list[str] = []
        for c in self.components:
            if c.apparent_molar_volume is not None:
                v.append(c.apparent_molar_volume * 1e-6)
            elif any(sp in _PEG_GRADES for sp, _ in c.species):
                v.append(PEG_SPECIFIC_VOLUME * (c.anhydrous_molar_mass or 0.0) / 1000.0)
            elif c.species:
                v.append((c.anhydrous_molar_mass or 0.0) / 1000.0 / DEFAULT_SOLUTE_DENSITY)
                self.default_volume.append(c.id)
            else:
                v.append(0.0)
        self.v = np.array(v)
        self.ion_idx = [k for k, sp in enumerate(species) if parse_species(sp).is_ion]
        self.peg_idx = [k for k, sp in enumerate(species) if sp in _PEG_GRADES]
        self.neutral_idx = [k for k, sp in enumerate(species)
                            if not parse_species(sp).is_ion and sp not in _PEG_GRADES]
        self.peg_grades = [_PEG_GRADES[species[k]] for k in self.peg_idx]
        self.ideal_neutral: list[str] = []
        nparams: list[NeutralParams] = []
        for k in self.neutral_idx:
            sp = species[k]
            p = catalog.neutral.get(sp)
            if p is None:
                p = NeutralParams(sp, "ideal", 0.0, float("inf"), "no published model: ideal solution assumed")
                self.ideal_neutral.append(sp)
            nparams.append(p)
        self.neutral_params = nparams
        self.pitzer = None
        if self.ion_idx:
            if catalog.pitzer is None:
                raise MediaplanError("the catalog has no Pitzer parameters (catalog/pitzer.yaml)",
                                     hint="reinstall mediaplan or restore catalog/pitzer.yaml")
            from mediaplan.thermo.pitzer import PitzerSystem

            self.pitzer = PitzerSystem([species[k] for k in self.ion_idx], catalog.pitzer)
        self.rho_w = float(water.density(self.T))

    # ---- amounts -> moles -------------------------------------------------------------------
    def amounts_to_arrays(self, amounts: Sequence) -> tuple[np.ndarray, np.ndarray]:
        """Per component: (n [mol per m^3 medium], b [mol per kg water]) from Amount objects."""
        n = np.zeros(len(self.components))
        b = np.zeros(len(self.components))
        for i, (c, a) in enumerate(zip(self.components, amounts, strict=True)):
            M = self.M[i]
            if a.kind in ("mass_conc", "mass_per_water", "vol_frac") and M <= 0:
                if not c.species:
                    continue  # agar, charcoal: no solutes
                raise MediaplanError(f"{c.id} has no molar mass in the catalog", hint="add molar_mass to its entry")
            if a.kind == "mass_conc":
                n[i] = a.value / M
            elif a.kind == "molar":
                n[i] = a.value
            elif a.kind == "vol_frac":
                if self.rho_liquid[i] <= 0:
                    raise MediaplanError(f"{c.id}: a volume fraction needs the liquid's density",
                                         hint="give a mass or molar amount, or add density to its catalog entry")
                n[i] = a.value * self.rho_liquid[i] / M
            elif a.kind == "molal":
                b[i] = a.value
            elif a.kind == "mass_per_water":
                b[i] = a.value / M
        return n, b

    def solve(self, n: np.ndarray, b: np.ndarray, *, T: float | None = None) -> ModelState:
        """Molalities and the ZSR solution for batches of amounts.

        n : (B, n_comp) [mol per m^3 of medium]; b : (B, n_comp) [mol per kg water].
        Water per m^3: W = (1 - Σ n_i v_i) / (1/ρ_w + Σ b_j v_j), from the volume balance
        V = W/ρ_w + Σ n_i v_i + W Σ b_j v_j with apparent molar volumes v.
        """
        n = np.atleast_2d(np.asarray(n, dtype=float))
        b = np.atleast_2d(np.asarray(b, dtype=float))
        T = self.T if T is None else float(T)
        rho_w = self.rho_w if T == self.T else float(water.density(T))
        free = 1.0 - n @ self.v
        if np.any(free <= 0.05):
            raise MediaplanError("the solutes would fill the whole volume: no water left",
                                 hint="check the amounts and their units")
        W = free / (1.0 / rho_w + b @ self.v)
        molality = n / W[:, None] + b
        n_all = molality * W[:, None]
        species_m = molality @ self.S
        mix = self.mixture(species_m, T)
        return ModelState(W, n_all, molality, species_m, mix)

    def mixture(self, species_m: np.ndarray, T: float, *, start: tuple | None = None) -> MixtureResult:
        """ZSR solution for species molalities (B, n_species) [mol/kg] at temperature T [K];
        ``start``: ``MixtureResult.state`` of the same composition (warm start)."""
        species_m = np.atleast_2d(species_m)
        ion_m = species_m[:, self.ion_idx] if self.ion_idx else None
        neutral_m = species_m[:, self.neutral_idx]
        # PEG: g PEG per g water = molality [mol/kg] * molar mass [g/mol] / 1000
        peg_c = np.zeros((species_m.shape[0], len(self.peg_idx)))
        for j, k in enumerate(self.peg_idx):
            peg_c[:, j] = species_m[:, k] * self.peg_grades[j] / 1000.0
        return zsr_osmolality(MixtureInput(self.pitzer, ion_m, self.neutral_params, neutral_m,
                                           self.peg_grades, peg_c, T), start=start)


_MODEL_CACHE: OrderedDict[tuple, MediumModel] = OrderedDict()


def compiled(catalog: Catalog, components: Sequence[Component], T: float) -> MediumModel:
    """A cached MediumModel for this catalog, component list and temperature."""
    key = (id(catalog), tuple(c.id for c in components), tuple(c.digest for c in components), round(T, 6))
    model = _MODEL_CACHE.get(key)
    if model is None:
        model = MediumModel(catalog, components, T)
        _MODEL_CACHE[key] = model
        if len(_MODEL_CACHE) > 64:
            _MODEL_CACHE.popitem(last=False)
    else:
        _MODEL_CACHE.move_to_end(key)
    return model
