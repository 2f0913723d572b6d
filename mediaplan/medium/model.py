"""A recipe's components compiled for fast, vectorised evaluation.

``MediumModel`` fixes a list of components (and so the species, stoichiometry, molar masses and
apparent molar volumes) and the temperature. Everything else asks it, never its arrays:

- :meth:`MediumModel.water` — the one volume balance (water per m^3 of medium), and the one limit
  where the model refuses (:data:`MIN_FREE_VOLUME`);
- :meth:`MediumModel.solve` — molalities and the ZSR solution for batches of amounts;
- :meth:`MediumModel.shares`, :meth:`MediumModel.ionic_strength` — per-component osmolal shares and the
  ionic strength of a solved state;
- :meth:`MediumModel.along` — a :class:`Sweep`: the medium plus a varying amount of one or more
  osmotica, with its osmolality and potential for a batch of amounts, the ZSR residual at a known
  osmolality, and how far the amount may go (:meth:`Sweep.limit`);
- the species by kind for the validity checks (:meth:`MediumModel.neutral_solutes`,
  :meth:`MediumModel.peg_solutes`, :meth:`MediumModel.ion_molalities`, :meth:`MediumModel.ion_pairs`...).

``evaluate()`` uses it for one recipe; the solver and the plasmolysis designer use it for many.
"""

from __future__ import annotations

import math
from collections import OrderedDict
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from operator import itemgetter

import numpy as np

from mediaplan.medium import roots
from mediaplan.medium.catalog import Catalog, Component
from mediaplan.medium.errors import InfeasibleError, MediaplanError
from mediaplan.thermo import neutral as _neutral
from mediaplan.thermo import peg as _peg
from mediaplan.thermo import water
from mediaplan.thermo.ions import parse_species
from mediaplan.thermo.mixing import (
    MixingSpan,
    MixtureInput,
    MixtureResult,
    mixing_span,
    pairwise_sum,
    zsr_at,
    zsr_osmolality,
)
from mediaplan.thermo.params import NeutralParams
from mediaplan.thermo.potential import potential_from_osmolality

#: volume-based amount kinds (per m^3 of medium) and water-based ones (per kg of water)
VOLUME_KINDS = ("mass_conc", "molar", "vol_frac")
WATER_KINDS = ("molal", "mass_per_water")

#: apparent molar volume used when the catalog has none: anhydrous molar mass / 1.5 g cm^-3
#: (common practice for a crystalline solute; affects only the water content of the medium)
DEFAULT_SOLUTE_DENSITY = 1.5e3  # kg/m^3
#: partial specific volume of PEG in water [m^3/kg] (about 0.83 cm^3/g; from memory)
PEG_SPECIFIC_VOLUME = 0.83e-3

#: the fraction of the medium's volume [-] that the solutes given per volume of medium must leave free;
#: below it the model refuses ("no water left"). By then the medium is 95 % solute by volume: the volume
#: balance rests on apparent molar volumes measured in solutions of moderate strength, and every activity
#: model here is far past its range, so such an input is a slip of amount or unit, not a medium. The
#: solver and the series designer search up to this same limit (:meth:`Sweep.limit`). (common practice)
MIN_FREE_VOLUME = 0.05
#: the largest molality [mol/kg] a search gives an amount stated per kg of water: nothing in the catalog
#: dissolves that far (sucrose saturates near 6 mol/kg). (common practice)
MAX_MOLALITY = 50.0

_PEG_GRADES = {"peg6000": 6000, "peg8000": 8000}
#: rows of a batch solved at once by :meth:`MediumModel.solve` (larger batches go in chunks of this size):
#: 10^4 rows keep the ZSR solver's temporaries to tens of MB and its numpy calls few (measured: a 10^6-row
#: sweep unchunked takes 3.2 GB; in chunks of 10^4, 0.4 GB and no more time)
SOLVE_CHUNK = 10_000
_MISSING = object()


def _gather(idx: list[int]) -> Callable[[Sequence], list]:
    """A function that takes the items at ``idx`` of a sequence, as a list (by itemgetter, in C)."""
    if not idx:
        return lambda seq: []
    if len(idx) == 1:
        k = idx[0]
        return lambda seq: [seq[k]]
    get = itemgetter(*idx)
    return lambda seq: list(get(seq))
_STATE_FIELDS = ("water_kg_per_m3", "n_per_m3", "molality", "species_m")
_MIX_FIELDS = ("osmolality", "ideal", "electrolyte_phi", "electrolyte_phi_own", "fraction_electrolyte",
               "fraction_neutral", "fraction_peg")


@dataclass
class ModelState:
    """Batch result of :meth:`MediumModel.solve` (leading axis B)."""

    water_kg_per_m3: np.ndarray  # kg of water per m^3 of medium (hydrate water included)
    n_per_m3: np.ndarray  # (B, n_comp) mol of each component per m^3 of medium
    molality: np.ndarray  # (B, n_comp) mol of each component per kg water
    species_m: np.ndarray  # (B, n_species) molality of each species
    mix: MixtureResult


class MediumModel:
    """Compiled components of a medium at one temperature [K].

    Public data: ``components``, ``species`` (ids), ``T`` [K], ``rho_w`` (water density at T [kg/m^3]),
    per component ``M`` (molar mass as sold [kg/mol]), ``M_anh`` (anhydrous [kg/mol]), ``v`` (apparent
    molar volume [m^3/mol]), ``particles`` (dissolved particles per formula unit, the van't Hoff count
    [osmol/mol]); ``default_volume`` (ids whose volume is estimated), ``ideal_neutral`` (neutral species
    without a published model), ``ideal_components`` (indices of the components that bring one),
    ``neutral_models`` (species -> its binary model) and ``ion_charges`` (ion -> charge). The stoichiometry
    and the split of the species among the ZSR groups are private: ask the methods.
    """

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
        self._S = S
        self.M = np.array([(c.molar_mass or 0.0) / 1000.0 for c in self.components])  # kg/mol as sold
        self._M_list = self.M.tolist()
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
        self._ion_idx = [k for k, sp in enumerate(species) if parse_species(sp).is_ion]
        # the ions' columns as a slice when they follow one another (a view, not a copy), else an index array
        self._ion_sel = (slice(self._ion_idx[0], self._ion_idx[-1] + 1) if self._ion_idx and
                         self._ion_idx == list(range(self._ion_idx[0], self._ion_idx[-1] + 1))
                         else np.array(self._ion_idx, dtype=np.intp))
        self._peg_idx = [k for k, sp in enumerate(species) if sp in _PEG_GRADES]
        self._neutral_idx = [k for k, sp in enumerate(species)
                            if not parse_species(sp).is_ion and sp not in _PEG_GRADES]
        self._peg_grades = tuple(_PEG_GRADES[species[k]] for k in self._peg_idx)  # immutable: see _one_row
        self.ideal_neutral: list[str] = []
        nparams: list[NeutralParams] = []
        for k in self._neutral_idx:
            sp = species[k]
            p = catalog.neutral.get(sp)
            if p is None:
                p = NeutralParams(sp, "ideal", 0.0, float("inf"), "no published model: ideal solution assumed")
                self.ideal_neutral.append(sp)
            nparams.append(p)
        self._neutral_params = tuple(nparams)  # immutable (of frozen params): mixing._one_row keeps its groups
        # one row's ion and neutral molalities taken from its species' (in C, as tuples)
        self._ions_of = _gather(self._ion_idx)
        self._neutrals_of = _gather(self._neutral_idx)
        self._pitzer = None
        if self._ion_idx:
            if catalog.pitzer is None:
                raise MediaplanError("the catalog has no Pitzer parameters (catalog/pitzer.yaml)",
                                     hint="reinstall mediaplan or restore catalog/pitzer.yaml")
            from mediaplan.thermo.pitzer import PitzerSystem

            self._pitzer = PitzerSystem([species[k] for k in self._ion_idx], catalog.pitzer)
        self.rho_w = float(water.density(self.T))
        self.particles = S.sum(axis=1)
        # stoichiometry of each ZSR group's species, per component (for the osmolal shares)
        self._S_ion = S[:, self._ion_idx]
        self._S_neutral = [S[:, k] for k in self._neutral_idx]
        self._S_peg = [S[:, k] for k in self._peg_idx]
        self.neutral_models = {species[k]: p for k, p in zip(self._neutral_idx, nparams, strict=True)}
        #: charge of each ion of the model
        self.ion_charges = {species[k]: parse_species(species[k]).charge for k in self._ion_idx}
        self._charge2 = np.array([z * z for z in self.ion_charges.values()], dtype=float)
        #: indices of the components that bring a neutral solute without a published model
        self.ideal_components = [i for i, c in enumerate(self.components)
                                 if any(sp in self.ideal_neutral for sp, _ in c.species)]
        self._memo: dict = {}
        # per neutral and PEG species: (component, stoichiometry) of the one component that brings it, or None
        self._neutral_owner = [_owner(col) for col in self._S_neutral]
        # per component: its ions' stoichiometry, the nonzero entries and the whole row (see shares_row)
        self._S_ion_rows = self._S_ion.tolist()
        self._ion_terms = [[v for v in row if v != 0.0] for row in self._S_ion_rows]
        self._peg_owner = [_owner(col) for col in self._S_peg]

    def memo(self, key: tuple, make: Callable[[], object]) -> object:
        """What ``make()`` returns, made once per key for this model: figures that depend on the components
        and temperatures alone (solubility limits, parameter lists), never on the amounts. A few keys per
        model; bounded."""
        got = self._memo.get(key, _MISSING)
        if got is _MISSING:
            got = make()
            if len(self._memo) >= 64:
                self._memo = {}
            self._memo[key] = got  # one dict item set: safe across worker threads
        return got

    # ---- amounts -> moles -------------------------------------------------------------------
    def amounts_to_arrays(self, amounts: Sequence, factors: Sequence[float] | None = None) -> tuple[np.ndarray, np.ndarray]:
        """Per component: (n [mol per m^3 medium], b [mol per kg water]) from Amount objects, each taken
        ``factors[i]`` times when factors are given (a base line at a strength: its value times the
        strength, as :class:`~mediaplan.medium.recipe.ScaledAmount` holds it)."""
        n = [0.0] * len(self.components)
        b = [0.0] * len(self.components)
        for i, (c, a) in enumerate(zip(self.components, amounts, strict=True)):
            kind, value = a.kind, a.value
            if factors is not None:
                value = value * factors[i]
            M = self._M_list[i]
            if kind in ("mass_conc", "mass_per_water", "vol_frac") and M <= 0:
                if not c.species:
                    continue  # agar, charcoal: no solutes
                raise MediaplanError(f"{c.id} has no molar mass in the catalog", hint="add molar_mass to its entry")
            if kind == "mass_conc":
                n[i] = value / M
            elif kind == "molar":
                n[i] = value
            elif kind == "vol_frac":
                if self.rho_liquid[i] <= 0:
                    raise MediaplanError(f"{c.id}: a volume fraction needs the liquid's density",
                                         hint="give a mass or molar amount, or add density to its catalog entry")
                n[i] = value * float(self.rho_liquid[i]) / M
            elif kind == "molal":
                b[i] = value
            elif kind == "mass_per_water":
                b[i] = value / M
        return np.array(n), np.array(b)

    # ---- the volume balance -----------------------------------------------------------------
    def free_volume(self, n: np.ndarray) -> np.ndarray:
        """Fraction of the medium's volume not taken by the solutes given per volume [-] (n: mol per m^3
        of medium, (n_comp,) or (B, n_comp))."""
        return 1.0 - np.asarray(n, dtype=float) @ self.v

    def water(self, n: np.ndarray, b: np.ndarray, *, T: float | None = None) -> np.ndarray:
        """Water [kg per m^3 of medium] for amounts n [mol per m^3 of medium] and b [mol per kg water],
        each (n_comp,) or (B, n_comp), at temperature T [K] (the model's own by default).

        The volume balance V = W/ρ_w + Σ n_i v_i + W Σ b_j v_j (apparent molar volumes v) per m^3 gives
        W = (1 − Σ n_i v_i) / (1/ρ_w + Σ b_j v_j).

        Raises MediaplanError when the solutes leave less than :data:`MIN_FREE_VOLUME` of the volume.
        """
        n, b = np.asarray(n, dtype=float), np.asarray(b, dtype=float)
        free = 1.0 - n @ self.v
        if (free < MIN_FREE_VOLUME) if n.ndim == 1 else np.any(free < MIN_FREE_VOLUME):
            raise MediaplanError("the solutes would fill the whole volume: no water left",
                                 hint="check the amounts and their units")
        rho_w = self.rho_w if T is None or float(T) == self.T else float(water.density(float(T)))
        return free / (1.0 / rho_w + b @ self.v)

    def molality(self, n: np.ndarray, b: np.ndarray) -> np.ndarray:
        """Molality of each component [mol/kg water], same shape as n (see :meth:`water`)."""
        W = self.water(n, b)
        return n / (W[:, None] if np.ndim(W) else W) + b

    # ---- the ZSR solution --------------------------------------------------------------------
    def solve(self, n: np.ndarray, b: np.ndarray, *, T: float | None = None) -> ModelState:
        """Molalities and the ZSR solution for batches of amounts.

        n : (B, n_comp) [mol per m^3 of medium]; b : (B, n_comp) [mol per kg water]; T [K], the model's
        own by default. Water per m^3 from :meth:`water`.
        """
        n = np.atleast_2d(np.asarray(n, dtype=float))
        b = np.atleast_2d(np.asarray(b, dtype=float))
        T = self.T if T is None else float(T)
        if n.shape[0] > SOLVE_CHUNK:
            # a large sweep in chunks: the solver's temporaries stay the size of one chunk (rows are
            # independent; each row's answer is the one it gets alone, to rounding)
            out: ModelState | None = None
            for i in range(0, n.shape[0], SOLVE_CHUNK):
                part = self.solve(n[i:i + SOLVE_CHUNK], b[i:i + SOLVE_CHUNK], T=T)
                if out is None:  # the whole answer, allocated once and filled chunk by chunk
                    def whole(a):
                        return np.empty((n.shape[0], *np.shape(a)[1:]), dtype=float)
                    out = ModelState(*(whole(getattr(part, f)) for f in _STATE_FIELDS),
                                     MixtureResult(*(whole(getattr(part.mix, f)) for f in _MIX_FIELDS)))
                for f in _STATE_FIELDS:
                    getattr(out, f)[i:i + SOLVE_CHUNK] = getattr(part, f)
                for f in _MIX_FIELDS:
                    getattr(out.mix, f)[i:i + SOLVE_CHUNK] = getattr(part.mix, f)
            return out
        W = self.water(n, b, T=T)
        molality = n / W[:, None] + b
        n_all = molality * W[:, None]
        species_m = molality @ self._S
        mix = self.mixture(species_m, T)
        return ModelState(W, n_all, molality, species_m, mix)

    def solve_row(self, n: np.ndarray, b: np.ndarray, *, W: float | None = None,
                  molality: np.ndarray | None = None) -> ModelState:
        """One composition, n [mol per m^3 of medium] and b [mol per kg water] (n_comp,), solved at the model's
        temperature: the state :meth:`solve` gives for the batch of that one row (leading axis 1), with the
        bookkeeping on one row's arrays (the same elementwise arithmetic; the sums of the volume balance and
        of the species may differ from the batch's in the last bit). W [kg water per m^3] and the molalities
        [mol/kg], when the caller has them (from :meth:`water`), are not computed again."""
        if W is None or molality is None:
            W = float(self.water(n, b))
            molality = n / W + b
        species_m = molality @ self._S
        mix = self.mixture(species_m[None, :], self.T)
        return ModelState(np.array([W]), (molality * W)[None, :], molality[None, :], species_m[None, :], mix)

    def mixture(self, species_m: np.ndarray, T: float, *, start: tuple | None = None,
                osmolality_only: bool = False) -> MixtureResult:
        """ZSR solution for species molalities (B, n_species) [mol/kg] at temperature T [K];
        ``start``: ``MixtureResult.state`` of the same composition (warm start); ``osmolality_only``: of one
        row, only ``osmolality`` and ``state`` (see :func:`~mediaplan.thermo.mixing.zsr_osmolality`)."""
        species_m = np.atleast_2d(species_m)
        if species_m.shape[0] == 1:  # one composition: its amounts as Python floats (the same products)
            sp = species_m[0].tolist()
            return zsr_osmolality(MixtureInput(
                self._pitzer, self._ions_of(sp) if self._ion_idx else None, self._neutral_params,
                self._neutrals_of(sp), self._peg_grades,
                [sp[k] * g / 1000.0 for k, g in zip(self._peg_idx, self._peg_grades, strict=True)], float(T)),
                start=start, osmolality_only=osmolality_only)
        ion_m = species_m[:, self._ion_idx] if self._ion_idx else None
        neutral_m = species_m[:, self._neutral_idx]
        # PEG: g PEG per g water = molality [mol/kg] * molar mass [g/mol] / 1000
        peg_c = np.zeros((species_m.shape[0], len(self._peg_idx)))
        for j, k in enumerate(self._peg_idx):
            peg_c[:, j] = species_m[:, k] * self._peg_grades[j] / 1000.0
        return zsr_osmolality(MixtureInput(self._pitzer, ion_m, self._neutral_params, neutral_m,
                                           self._peg_grades, peg_c, T), start=start)

    def mixture_at(self, mix: MixtureResult, T: float) -> MixtureResult:
        """The one composition solved in ``mix`` (by :meth:`solve_row` or :meth:`mixture` of one row) at
        temperature T [K], warm-started from it: what ``mixture(species_m, T, start=mix.state,
        osmolality_only=True)`` gives, bit for bit, without reading the amounts again
        (:func:`~mediaplan.thermo.mixing.zsr_at`)."""
        return zsr_at(mix, T)

    def mixing_span(self, state: ModelState, T: float | None = None) -> MixingSpan:
        """Additive and ZSR osmolality [osmol/kg] of each row of a solved state at T [K] (the model's own by
        default): the span a figure for PEG with other solutes carries (:class:`mediaplan.thermo.mixing.
        MixingSpan`; ``.low`` / ``.high`` order them). Without PEG and other solutes together the two
        differ only by the smaller interactions of the other groups."""
        T = self.T if T is None else float(T)
        species_m = np.atleast_2d(state.species_m)
        peg_c = np.zeros((species_m.shape[0], len(self._peg_idx)))
        for j, k in enumerate(self._peg_idx):
            peg_c[:, j] = species_m[:, k] * self._peg_grades[j] / 1000.0
        ion_m = species_m[:, self._ion_idx] if self._ion_idx else None
        return mixing_span(MixtureInput(self._pitzer, ion_m, self._neutral_params,
                                        species_m[:, self._neutral_idx], self._peg_grades, peg_c, T))

    # ---- what a solved state means per component ---------------------------------------------
    def shares(self, state: ModelState) -> np.ndarray:
        """Each component's share of the non-ideal osmolality [osmol/kg], (B, n_comp); the shares of a
        row add up to its osmolality.

        Each ZSR group's share of the osmolality (``MixtureResult.fraction_*``) is split among the
        components in proportion to the molality of the group's species they bring (the electrolytes
        as one group: by their moles of ions).
        """
        mix = state.mix
        rows = [self._shares_row(state.molality[r], mix.osmolality[r], mix.fraction_electrolyte[r],
                                 mix.fraction_neutral[r], mix.fraction_peg[r]) for r in range(state.molality.shape[0])]
        return rows[0][None, :] if len(rows) == 1 else np.array(rows).reshape(state.molality.shape)

    def _shares_row(self, molality: np.ndarray, y: float, fe: float, fn: np.ndarray, fp: np.ndarray) -> np.ndarray:
        share = np.zeros(molality.shape[0])
        if self._ion_idx:
            ion_c = (molality[:, None] * self._S_ion).sum(axis=1)
            tot = ion_c.sum()
            if tot > 0:
                share += float(fe) * y * ion_c / tot
        for fractions, columns in ((fn, self._S_neutral), (fp, self._S_peg)):
            for j, col in enumerate(columns):
                part = molality * col
                tot = part.sum()
                if tot > 0:
                    share += float(fractions[j]) * y * part / tot
        return share

    def shares_row(self, state: ModelState, row: int = 0) -> list[float]:
        """:meth:`shares` of one row of a solved state [osmol/kg], as Python floats: the same arithmetic in
        the same order (a neutral or PEG species that one component alone brings is split on floats; any
        other on arrays, as :meth:`shares` does)."""
        mix = state.mix
        molality = state.molality[row]
        y = mix.osmolality[row]
        nc = molality.shape[0]
        m = molality.tolist()
        share = [0.0] * nc
        if self._ion_idx:
            # Σ_k m_i S_ik per component, then over the components, summed as numpy sums (pairwise_sum)
            ion_c = []
            for mi, terms in zip(m, self._ion_terms, strict=True):
                if len(terms) <= 2:  # zeros add exactly, so two terms give the same bits in any order
                    acc = 0.0
                    for s_ik in terms:
                        acc += mi * s_ik
                else:
                    acc = pairwise_sum([mi * s_ik for s_ik in self._S_ion_rows[len(ion_c)]])
                ion_c.append(acc)
            tot = pairwise_sum(ion_c)
            if tot > 0:
                fy = float(mix.fraction_electrolyte[row]) * float(y)
                share = [fy * c / tot for c in ion_c]
        for fractions, columns, owners in ((mix.fraction_neutral[row], self._S_neutral, self._neutral_owner),
                                           (mix.fraction_peg[row], self._S_peg, self._peg_owner)):
            if not columns:
                continue
            fl = fractions.tolist()
            for j, col in enumerate(columns):
                owner = owners[j]
                if owner is not None:  # one component brings this species: its share, on floats
                    i, coeff = owner
                    part = m[i] * coeff
                    if part > 0:
                        share[i] += fl[j] * float(y) * part / part
                    continue
                part = molality * col
                tot = part.sum()
                if tot > 0:
                    add = (fl[j] * y * part / tot).tolist()
                    share = [a + d for a, d in zip(share, add, strict=True)]
        return share

    def ionic_strength(self, state: ModelState) -> np.ndarray:
        """Ionic strength I = ½ Σ m_i z_i² [mol/kg] of each row, (B,)."""
        if not self._ion_idx:
            return np.zeros(state.species_m.shape[0])
        return 0.5 * (state.species_m[:, self._ion_sel] @ self._charge2)

    def substance_columns(self, c: Component) -> list[int]:
        """Columns of this model holding ``c``'s substance in any of its forms (``c`` alone without one)."""
        return [i for i, cc in enumerate(self.components) if (cc.substance == c.substance if c.substance else cc is c)]

    # ---- the species by kind (for the validity checks) ---------------------------------------
    @property
    def has_electrolytes(self) -> bool:
        """Some component dissolves into ions."""
        return bool(self._ion_idx)

    @property
    def has_neutral(self) -> bool:
        """Some component dissolves into neutral solutes other than PEG."""
        return bool(self._neutral_idx)

    @property
    def has_peg(self) -> bool:
        """Some component is PEG."""
        return bool(self._peg_idx)

    def species_present(self, state: ModelState, row: int = 0) -> dict[str, float]:
        """{species: molality [mol/kg]} of every species above zero in one row, in model order."""
        return {sp: m for sp, m in zip(self.species, state.species_m[row].tolist(), strict=True) if m > 0}

    def neutral_solutes(self, state: ModelState, row: int = 0) -> list[tuple[str, float, NeutralParams]]:
        """(species, molality [mol/kg], its binary model) of each neutral solute of the model (PEG apart)."""
        if not self._neutral_idx:
            return []
        sm = state.species_m[row].tolist()
        return [(self.species[k], sm[k], p) for k, p in zip(self._neutral_idx, self._neutral_params, strict=True)]

    def peg_solutes(self, state: ModelState, row: int = 0) -> list[tuple[int, float]]:
        """(grade [g/mol], concentration [g PEG / g water]) of each PEG grade of the model."""
        if not self._peg_idx:
            return []
        sm = state.species_m[row]
        return [(g, float(sm[k] * g / 1000.0)) for k, g in zip(self._peg_idx, self._peg_grades, strict=True)]

    def ion_molalities(self, state: ModelState, row: int = 0) -> dict[str, float]:
        """{ion: molality [mol/kg]} of every ion of the model (zero ones included), in model order."""
        sm = state.species_m[row].tolist()
        return {self.species[k]: sm[k] for k in self._ion_idx}

    def ion_pairs(self, state: ModelState, row: int = 0) -> list[tuple[str, str, object]]:
        """(cation, anion, its Pitzer binary parameters) of each pair with parameters whose ions are both
        present in the row."""
        if self._pitzer is None:
            return []
        present = [sp for sp, m in self.ion_molalities(state, row).items() if m > 0]
        cats = [i for i in present if self.ion_charges[i] > 0]
        ans = [i for i in present if self.ion_charges[i] < 0]
        binary = self.catalog.pitzer.binary
        return [(c, a, binary[(c, a)]) for c in cats for a in ans if (c, a) in binary]

    @property
    def ion_pairs_without_parameters(self) -> tuple[tuple[str, str], ...]:
        """(cation, anion) of every pair of the model's ions without Pitzer parameters (their interaction
        falls back to the Debye–Hückel term alone)."""
        return tuple(getattr(self._pitzer, "missing_pairs", ())) if self._pitzer is not None else ()

    def ion_pairs_beyond_data(self, state: ModelState, row: int = 0) -> list[tuple[str, str]]:
        """(cation, anion) of each present pair whose Pitzer parameters are used past their fitted range
        (ionic strength of the row above that of the pair's binary solution at its ``max_m``)."""
        if self._pitzer is None:
            return []
        return self._pitzer.max_molality_exceeded(state.species_m[row, self._ion_sel])

    @property
    def pitzer_range_floor(self) -> float:
        """The lowest ionic strength [mol/kg] at which some ion pair's Pitzer parameters are past their data
        (inf without ions): below it :meth:`ion_pairs_beyond_data` finds nothing."""
        return self._pitzer.min_pair_ionic_strength if self._pitzer is not None else math.inf

    # ---- a medium along a line of amounts ----------------------------------------------------
    def along(self, n0: np.ndarray, b0: np.ndarray, dn: np.ndarray, db: np.ndarray, *,
              x_max: float = math.inf) -> Sweep:
        """The medium with amounts n0 + x·dn [mol per m^3 of medium] and b0 + x·db [mol per kg water]
        for 0 <= x <= x_max (see :class:`Sweep`)."""
        return Sweep(self, n0, b0, dn, db, x_max)

    def at_osmolality(self, y: float) -> ZSRResidual:
        """The ZSR residual of this model's media at a known osmolality y [osmol/kg] (see
        :class:`ZSRResidual`)."""
        return ZSRResidual(self, y)


def _owner(col: np.ndarray) -> tuple[int, float] | None:
    """(index, coefficient) of the one nonzero entry of a stoichiometry column, or None (several or none)."""
    nz = np.flatnonzero(col)
    return (int(nz[0]), float(col[nz[0]])) if nz.size == 1 else None


@dataclass(frozen=True)
class Limit:
    """How far a :class:`Sweep` may go: x [unit of the sweep], and the component whose solubility stops
    it (None: the water left, or the largest molality a search gives, :data:`MAX_MOLALITY`)."""

    x: float
    component: Component | None = None


class Sweep:
    """A medium whose amounts move along a line: n0 + x·dn [mol per m^3 of medium], b0 + x·db [mol per kg
    water], for 0 <= x <= x_max (x in the caller's unit: mol/m^3 of an osmoticum, a dilution fraction,
    a base strength...).

    The question of the solver (one osmoticum, or two in a ratio; a dilution; a base strength) and of
    the plasmolysis designer (a background plus one osmoticum): the medium's osmolality, potential or
    ZSR residual as a function of x, and how far x may go.
    """

    def __init__(self, model: MediumModel, n0: np.ndarray, b0: np.ndarray, dn: np.ndarray, db: np.ndarray,
                 x_max: float = math.inf) -> None:
        self.model = model
        self.n0, self.b0 = np.asarray(n0, dtype=float), np.asarray(b0, dtype=float)
        self.dn, self.db = np.asarray(dn, dtype=float), np.asarray(db, dtype=float)
        self.x_max = float(x_max)

    @property
    def T(self) -> float:
        """Temperature [K]."""
        return self.model.T

    def arrays(self, x) -> tuple[np.ndarray, np.ndarray]:
        """(n [mol/m^3 of medium], b [mol/kg water]) at x: (n_comp,) for a number, (B, n_comp) for (B,)."""
        if np.ndim(x) == 0:
            return self.n0 + x * self.dn, self.b0 + x * self.db
        x = np.asarray(x, dtype=float)[:, None]
        return self.n0 + x * self.dn, self.b0 + x * self.db

    def molality(self, x) -> np.ndarray:
        """Molality of each component [mol/kg] at x, without the ZSR solution."""
        return self.model.molality(*self.arrays(x))

    def state(self, x) -> ModelState:
        """The solved medium at each x of a batch (a number counts as a batch of one)."""
        n, b = self.arrays(np.atleast_1d(np.asarray(x, dtype=float)))
        return self.model.solve(n, b)

    def osmolality(self, x) -> np.ndarray:
        """Osmolality [osmol/kg] at each x, (B,)."""
        return self.state(x).mix.osmolality

    def potential(self, x) -> np.ndarray:
        """Water potential [Pa] at each x, (B,)."""
        return potential_from_osmolality(self.osmolality(x), self.T)

    def residual_at(self, y: float) -> Callable[[float], float]:
        """f(x) = Σ_g m_g(x) / m_g°(y) − 1 (see :class:`ZSRResidual`): zero where the medium's osmolality is
        y [osmol/kg], increasing in x when x adds solutes."""
        eq = self.model.at_osmolality(y)
        return lambda x: eq(*self.arrays(x))

    def limit(self, saturating: Sequence[Component] = ()) -> Limit:
        """The largest x the search may reach, and what sets it.

        The model's own limits first: x_max, the free volume (:data:`MIN_FREE_VOLUME`) and, for amounts
        per kg of water, :data:`MAX_MOLALITY`. Then, for each component in ``saturating``, the x where its
        substance (every component of the model that is the same substance) reaches saturation
        (:attr:`Component.saturation_molality`), when that comes first.
        """
        v = self.model.v
        caps = [self.x_max]
        grow = float(self.dn @ v)
        if grow > 0:
            caps.append(((1.0 - MIN_FREE_VOLUME) - float(self.n0 @ v)) / grow)
        for b0, db in zip(self.b0, self.db, strict=True):
            if db > 0:
                caps.append((MAX_MOLALITY - b0) / db)
        x = max(min(caps), 0.0)
        if grow > 0:
            while x > 0 and float(self.model.free_volume(self.arrays(x)[0])) < MIN_FREE_VOLUME:
                x = float(np.nextafter(x, 0.0))  # rounding left the solutes a hair past the limit
        out = Limit(x)
        for c in saturating:
            m_sat = c.saturation_molality
            if m_sat is None:
                continue
            idx = self.model.substance_columns(c)

            def sub_m(x, idx=idx):
                return float(self.molality(x)[idx].sum())

            if sub_m(out.x) > m_sat:
                x_sat = 0.0 if sub_m(0.0) >= m_sat else roots.increasing_root(
                    lambda x, m_sat=m_sat: sub_m(x) - m_sat, 0.0, out.x)
                if x_sat < out.x:
                    out = Limit(x_sat, c)
        return out


class ZSRResidual:
    """The ZSR sum Σ_g m_g / m_g°(y) − 1 at a known mixture osmolality y [osmol/kg], as a function of the
    amounts (n [mol/m^3 of medium], b [mol/kg water]) of a compiled model.

    At a known water activity the Zdanovskii–Stokes–Robinson rule (Stokes & Robinson 1966, J Phys Chem
    70:2126) is one equation in the amounts: m_g°(y), the molality of the binary solution of group g
    with osmolality y, is computed once (Norrish inverse for neutral solutes, Michel equations for PEG,
    Pitzer for the electrolytes at their proportions in the medium), and the residual is zero where the
    medium's own osmolality is y.
    """

    def __init__(self, model: MediumModel, y: float) -> None:
        self.model = model
        self.y = float(y)
        self.x_neutral = np.array([float(_neutral.molality_at_osmolality(y, p)) for p in model._neutral_params])
        self.c_peg = np.array([float(_peg.peg_concentration_at_osmolality(y, model.T, g))
                               for g in model._peg_grades])
        self.peg_factor = np.array(model._peg_grades, dtype=float) / 1000.0  # mol/kg -> g/g
        self._q: np.ndarray | None = None
        self._phi = 1.0

    def _phi_star(self, ions: np.ndarray) -> float:
        """Pitzer φ of the electrolyte group alone at the target osmolality, at these ion proportions."""
        q = ions / ions.sum()
        if self._q is not None and np.allclose(q, self._q, rtol=1e-12, atol=1e-15):
            return self._phi
        pitzer, T, y = self.model._pitzer, self.model.T, self.y
        total = y
        for _ in range(80):
            phi = float(pitzer.osmotic_coefficient(total * q, T))
            new = y / phi
            if abs(new - total) <= 1e-14 * total:
                total = new
                break
            total = new
        self._q, self._phi = q, y / total
        return self._phi

    def __call__(self, n: np.ndarray, b: np.ndarray) -> float:
        """The residual [-] for one composition, n and b (n_comp,)."""
        m = self.model
        sp = m.molality(n, b) @ m._S
        r = 0.0
        if m._neutral_idx:
            r += float(sp[m._neutral_idx] @ (1.0 / self.x_neutral))
        if m._peg_idx:
            r += float((sp[m._peg_idx] * self.peg_factor) @ (1.0 / self.c_peg))
        if m._ion_idx:
            ions = sp[m._ion_idx]
            tot = float(ions.sum())
            if tot > 0:
                r += tot * self._phi_star(ions) / self.y
        return r - 1.0


_MODEL_CACHE: OrderedDict[tuple, MediumModel] = OrderedDict()


def compiled(catalog: Catalog, components: Sequence[Component], T: float) -> MediumModel:
    """A cached MediumModel for this catalog, component list and temperature."""
    key = (id(catalog), tuple([c.id for c in components]), tuple([c.digest for c in components]), round(T, 6))
    model = _MODEL_CACHE.get(key)
    if model is None:
        model = MediumModel(catalog, components, T)
        _MODEL_CACHE[key] = model
        if len(_MODEL_CACHE) > 64:
            _MODEL_CACHE.popitem(last=False)
    else:
        _MODEL_CACHE.move_to_end(key)
    return model


class ZSRTargets:
    """The ZSR residual of :class:`ZSRResidual` for many rows at once, each row at its own known osmolality:
    the batched question of the solver's range and of the series designer ("how much of the osmoticum
    brings each row to its y?").

    ``y`` (K,) [osmol/kg]. Row r's residual Σ_g m_g / m_g°(y_r) − 1 of molalities (k, n_comp) [mol/kg] is
    :meth:`__call__` (``rows``: which of the K targets each given row belongs to). The binary molalities of
    the neutral solutes and PEG at each y are computed once, in one call (:func:`mediaplan.thermo.neutral.
    stack`); the electrolyte group's φ at y and its ion proportions once per row, again only when the
    proportions change (they do not along a line that adds a neutral osmoticum). Same equation as
    :class:`ZSRResidual`; the two agree to rounding.
    """

    def __init__(self, model: MediumModel, y) -> None:
        self.model = model
        self.y = np.atleast_1d(np.asarray(y, dtype=float))
        K = self.y.size
        if model._neutral_idx:
            x = _neutral.molality_at_osmolality(self.y[:, None], _neutral.stack(model._neutral_params))
            self.inv_neutral = 1.0 / np.broadcast_to(x, (K, len(model._neutral_idx)))
        if model._peg_idx:
            c = np.column_stack([_peg.peg_concentration_at_osmolality(self.y, model.T, g)
                                 for g in model._peg_grades])
            self.inv_peg = np.array(model._peg_grades, dtype=float) / 1000.0 / c
        self._q = np.full((K, len(model._ion_idx)), np.nan)
        self._phi = np.ones(K)

    def _phi_star(self, q: np.ndarray, rows: np.ndarray) -> np.ndarray:
        """φ of the electrolyte group alone at osmolality y of each row, at ion proportions q (k, n_ions)."""
        known = self._q[rows]
        stale = ~np.all(np.abs(q - known) <= 1e-15 + 1e-12 * np.abs(known), axis=1)
        phi = self._phi[rows]
        if np.any(stale):
            r, qs = rows[stale], q[stale]
            phi[stale] = self.y[r] / self._ion_total(self.y[r], qs)
            # remembered per row (a row given twice with different proportions keeps the last)
            self._q[r], self._phi[r] = qs, phi[stale]
        return phi

    def _ion_total(self, y: np.ndarray, q: np.ndarray) -> np.ndarray:
        """Total ion molality t [mol/kg] with t·φ(t·q) = y [osmol/kg] for each row (q: proportions): secant
        steps on h(t) = t·φ(t·q) − y from t = y and the fixed-point step y/φ(y·q), to 1e-14 of t. φ of the
        scaled composition from one full Pitzer pass (:meth:`~mediaplan.thermo.pitzer.PitzerSystem.scaled`)."""
        pitzer, T = self.model._pitzer, self.model.T
        shared = bool(np.all(q == q[0]))
        if shared and y.size <= _FLOAT_ROWS:  # a few rows of one composition: plain floats
            phi = pitzer.scaled(q[0], T)
            return np.array([_secant_total(phi, yy) for yy in y.tolist()])
        # one full pass: for the one proportion every row shares (a sweep's ions), else one per row
        phi = pitzer.scaled(q[:1] if shared else q, T)
        t0 = y.copy()
        h0 = t0 * phi(t0) - y
        t1 = y * t0 / (h0 + y)  # the fixed-point step y / φ(t0)
        open_ = np.abs(t1 - t0) > 1e-14 * t1
        for _ in range(60):
            if not open_.any():
                break
            h1 = t1 * phi(t1) - y  # every row (one scaled call); the closed ones keep their t
            with np.errstate(divide="ignore", invalid="ignore"):
                step = np.where(open_, h1 * (t1 - t0) / (h1 - h0), 0.0)
            step = np.where(np.isfinite(step), step, 0.0)
            t0, h0 = np.where(open_, t1, t0), np.where(open_, h1, h0)
            t1 = t1 - step
            open_ &= np.abs(step) > 1e-14 * np.abs(t1)
        unsettled = open_ | ~np.isfinite(t1) | (t1 <= 0.0)
        if unsettled.any():  # no positive root for these rows: each on its own, which refuses if none exists
            t1 = t1.copy()
            for i in np.flatnonzero(unsettled).tolist():
                t1[i] = _secant_total(pitzer.scaled(q[0] if shared else q[i], T), float(y[i]))
        return t1

    def __call__(self, molality: np.ndarray, rows: np.ndarray | None = None) -> np.ndarray:
        """The residual [-] of each row of molalities (k, n_comp) [mol/kg]; ``rows`` (k,): the target of each
        (all K in order by default)."""
        m = self.model
        rows = np.arange(self.y.size) if rows is None else np.asarray(rows)
        sp = np.atleast_2d(molality) @ m._S
        r = np.full(rows.size, -1.0)
        if m._neutral_idx:
            r += np.einsum("ij,ij->i", sp[:, m._neutral_idx], self.inv_neutral[rows])
        if m._peg_idx:
            r += np.einsum("ij,ij->i", sp[:, m._peg_idx], self.inv_peg[rows])
        if m._ion_idx:
            ions = sp[:, m._ion_idx]
            tot = ions.sum(axis=1)
            has = tot > 0
            if np.any(has):
                r[has] += tot[has] * self._phi_star(ions[has] / tot[has, None], rows[has]) / self.y[rows[has]]
        return r


    def along(self, n0: np.ndarray, dn: np.ndarray, b0: np.ndarray, db: np.ndarray, A: float, G: float,
              C: float, D: float) -> tuple[LineResidual, bool]:
        """Each row's residual along a line of molalities (n0 + x dn)(C + x D)/(A − x G) + b0 + x db (each
        (n_comp,)), with the electrolyte group's φ held at its value at x = 0: a :class:`LineResidual`, and
        whether it is the residual itself (True: the ion proportions stay the same along the line — a
        neutral osmoticum, a dilution — so φ does not change) or only a close approximation (False)."""
        m = self.model
        K = self.y.size
        vec = np.stack([n0, dn, b0, db]) @ m._S  # (4, n_species)
        L = np.zeros((K, 4))
        if m._neutral_idx:
            L += self.inv_neutral @ vec[:, m._neutral_idx].T
        if m._peg_idx:
            L += self.inv_peg @ vec[:, m._peg_idx].T
        same = True
        if m._ion_idx:
            ions = vec[:, m._ion_idx]
            tot = ions.sum(axis=1)
            start = ions[0] * (C / A) + ions[2]  # the ions at x = 0 (molality up to a common factor)
            if not start.sum() > 0:  # none at x = 0: the proportions of the ions the line adds
                start = ions[1] * (C / A) + ions[3]
            if start.sum() > 0:
                q = start / start.sum()
                phi = self._phi_star(np.tile(q, (K, 1)), np.arange(K))
                L += (phi / self.y)[:, None] * tot[None, :]
                has = tot > 0
                d = np.abs(ions[has] / tot[has, None] - q)
                same = bool(np.all(d <= 1e-15 + 1e-12 * q))
            else:
                same = not np.any(tot > 0)
        return LineResidual(*L.T, A, G, C, D), same


class LineResidual:
    """The ZSR residual along a line with the electrolytes' φ held (:meth:`ZSRTargets.along`): with
    P, Q, R, T the ZSR sums of the line's four parts (K,) [-],

        r(x) = (P + x Q)(C + x D)/(A − x G) + R + x T − 1,

    a function of plain numbers (no model call). ``root()`` solves r = 0 in closed form (a quadratic)."""

    def __init__(self, P, Q, R, T, A: float, G: float, C: float, D: float) -> None:
        self.P, self.Q, self.R, self.T = P, Q, R, T
        self.A, self.G, self.C, self.D = A, G, C, D

    def __call__(self, x: np.ndarray, rows: np.ndarray) -> np.ndarray:
        """r at x (k,) for the given rows (k,) [-]."""
        x = np.asarray(x, dtype=float)
        return ((self.P[rows] + x * self.Q[rows]) * (self.C + x * self.D) / (self.A - x * self.G)
                + self.R[rows] + x * self.T[rows] - 1.0)

    def row(self, i: int) -> Callable[[float], float]:
        """r of row i as a function of a float x [-] (plain numbers: the same arithmetic as a call)."""
        P, Q, R, T = (float(v[i]) for v in (self.P, self.Q, self.R, self.T))
        A, G, C, D = float(self.A), float(self.G), float(self.C), float(self.D)
        return lambda x: (P + x * Q) * (C + x * D) / (A - x * G) + R + x * T - 1.0

    def root(self) -> np.ndarray:
        """x (K,) with r(x) = 0: the root of (P + xQ)(C + xD) + (R − 1 + xT)(A − xG) = 0 that the linear
        case continues (NaN where none lies at or above 0)."""
        P, Q, R, T, A, G, C, D = self.P, self.Q, self.R, self.T, self.A, self.G, self.C, self.D
        a2 = Q * D - T * G
        a1 = P * D + Q * C + T * A - (R - 1.0) * G
        a0 = P * C + (R - 1.0) * A
        disc = a1 * a1 - 4.0 * a2 * a0
        den = a1 + np.sqrt(np.maximum(disc, 0.0))
        ok = (disc >= 0) & (den > 0)
        x = np.divide(-2.0 * a0, den, out=np.full(den.shape, np.nan), where=ok)
        return np.where(x >= 0, x, np.nan)


#: up to this many rows of one ion composition, :meth:`ZSRTargets._ion_total` works in plain floats
_FLOAT_ROWS = 8


def _secant_total(phi: Callable[[float], float], y: float) -> float:
    """t [mol/kg] with t·φ(t) = y [osmol/kg] (φ of the scaled composition, a float function): the steps of
    :meth:`ZSRTargets._ion_total` for one row. Raises :class:`~mediaplan.medium.errors.InfeasibleError` where
    no positive root is found (see :func:`_unreachable`)."""
    t0 = y
    h0 = t0 * float(phi(t0)) - y
    t1 = y * t0 / (h0 + y)
    for _ in range(60):
        if not (t1 > 0.0 and math.isfinite(t1)):
            break
        if abs(t1 - t0) <= 1e-14 * abs(t1):
            return t1
        h1 = t1 * float(phi(t1)) - y
        if h1 == h0:
            if abs(h1) <= 1e-12 * y:
                return t1
            break
        t0, h0, t1 = t1, h1, t1 - h1 * (t1 - t0) / (h1 - h0)
    raise _unreachable(y)


def _unreachable(y: float) -> InfeasibleError:
    """The salts of a medium alone never reach osmolality y [osmol/kg] in the Pitzer model at these proportions
    and this temperature (their φ falls faster than their molality rises: at 0 °C a medium's salts can peak
    near 7-8 osmol/kg), so the ZSR rule has no binary solution to refer to: refused, never extrapolated."""
    return InfeasibleError(
        f"a target of {y * 1000:.0f} mOsm/kg is beyond what the model can compute with this medium's salts at "
        "this temperature: in the Pitzer model their osmolality never reaches it, far past the molalities their "
        "parameters were measured for", hint="choose a target nearer the medium's own osmolality")


def sweep_residuals(sweep: Sweep, y) -> Callable[[np.ndarray, np.ndarray], np.ndarray]:
    """f(x, rows) = the ZSR residual of the sweep at x (k,) against osmolality y[rows] [osmol/kg] (y: (K,)):
    zero where the medium at x has osmolality y, increasing in x when x adds solutes. The batched
    :meth:`Sweep.residual_at`, for :func:`mediaplan.medium.roots.bracketed_roots`."""
    eq = ZSRTargets(sweep.model, y)

    def f(x: np.ndarray, rows: np.ndarray) -> np.ndarray:
        return eq(sweep.molality(np.atleast_1d(np.asarray(x, dtype=float))), rows)

    f.targets = eq  # type: ignore[attr-defined]
    return f


def sweep_line(sweep: Sweep, f) -> tuple[LineResidual, bool]:
    """The residual ``f = sweep_residuals(sweep, y)`` as a :class:`LineResidual` (:meth:`ZSRTargets.along`
    with the sweep's volume balance, :meth:`MediumModel.water`), and whether it is exact (the ion proportions
    stay the same along the sweep) or a first approximation."""
    m, v = sweep.model, sweep.model.v
    return f.targets.along(sweep.n0, sweep.dn, sweep.b0, sweep.db, 1.0 - float(sweep.n0 @ v),
                           float(sweep.dn @ v), 1.0 / m.rho_w + float(sweep.b0 @ v), float(sweep.db @ v))
