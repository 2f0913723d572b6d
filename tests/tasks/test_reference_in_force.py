"""One source of truth for the cell reference: typed value, else [cells] osmolality, else [cells] potential."""

from __future__ import annotations

import pytest

from mediaplan.tasks.cells import CellReference, cell_reference, reference_in_force
from mediaplan.thermo.potential import osmolality_from_potential

T22 = 295.15


def _osm(mpa: float, T: float) -> float:
    return float(osmolality_from_potential(mpa * 1e6, T)) * 1000.0


def test_the_osmolality_wins_over_the_potential_and_the_other_is_named():
    # both written by a fit into a 22 °C plan (issue 12): 428.8 mOsm/kg and -1.06 MPa
    cells = CellReference(osmolality="428.8 mOsm/kg", potential="-1.06 MPa")
    r = reference_in_force(None, cells, T22)
    assert r.mosmol == pytest.approx(428.8, rel=1e-12)
    assert "osmolality 428.8 mOsm/kg" in r.source
    assert "-1.06 MPa not used" in r.ignored and f"{_osm(-1.06, T22):.1f} mOsm/kg" in r.ignored
    assert cell_reference(None, cells, T22) == r.mosmol


def test_a_typed_value_wins_and_the_plans_is_named():
    cells = CellReference(potential="-1.2 MPa")
    r = reference_in_force("-1 MPa", cells, T22)
    assert r.mosmol == pytest.approx(_osm(-1.0, T22), rel=1e-12)
    assert "typed" in r.source and "-1.2 MPa not used" in r.ignored


def test_a_potential_alone_is_converted_at_the_medium_temperature():
    cells = CellReference(potential="-1.2 MPa")
    at22, at4 = reference_in_force(None, cells, T22), reference_in_force(None, cells, 277.15)
    assert at22.mosmol == pytest.approx(_osm(-1.2, T22), rel=1e-12) and "at 22 °C" in at22.source
    assert at4.mosmol > at22.mosmol  # the same potential is more osmoles in the cold (ψ = −RT·c)


def test_nothing_given_and_an_empty_typed_value_mean_no_reference():
    assert reference_in_force(None, None, T22).mosmol is None
    assert reference_in_force("", CellReference(osmolality="400 mOsm/kg"), T22).mosmol is None
