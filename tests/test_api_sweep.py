"""mediaplan.api.sweep: a medium with some components varied, each variant as evaluate() gives it."""

from __future__ import annotations

import numpy as np
import pytest

from mediaplan import api


def test_api_sweep_matches_evaluate():
    medium = api.Recipe(base="ms1962")
    mann, sucr = ["0 g/L", "20 g/L"], ["10 g/L", "30 g/L", "60 g/L"]  # common practice
    seen = []
    got = api.sweep(medium, {"mannitol": mann, "sucrose": sucr}, progress=lambda d, t: seen.append((d, t)))
    assert seen == [(6, 6)]
    assert all(v.shape == (6,) for v in got.values())
    for r, (a, b) in enumerate((a, b) for a in mann for b in sucr):
        ev = api.evaluate(medium.with_amount("mannitol", a).with_amount("sucrose", b))
        assert got["osmolality_mosmol_per_kg"][r] == pytest.approx(ev.osmolality_mosmol_per_kg, rel=1e-12)
        assert got["osmotic_potential_mpa"][r] == pytest.approx(ev.osmotic_potential_mpa, rel=1e-12)
    rows = api.sweep(medium, {"mannitol": mann, "sucrose": sucr[:2]}, grid=False, figures=["water_activity"])
    np.testing.assert_allclose(rows["water_activity"], got["water_activity"][[0, 4]], rtol=1e-12)
    with pytest.raises(TypeError):
        api.sweep("ms1962", {"mannitol": mann})
