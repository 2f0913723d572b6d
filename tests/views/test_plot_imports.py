"""The fitted curve's band needs no scipy unless the fit was widened for overdispersion.

The terminal app draws the curve right after its first fit; scipy.stats took about a second to import there.
The normal critical value is the constant the fit itself uses, equal to scipy's quantile as a float.
"""

from __future__ import annotations

import subprocess
import sys
import textwrap
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def test_the_critical_value_is_scipys_normal_quantile():
    from scipy.stats import norm  # scipy is a test oracle here

    from mediaplan.tasks.plasmolysis.fit import Z_95

    assert float(norm.ppf(0.975)) == Z_95  # the same float, so the band is unchanged bit for bit


def test_curve_of_an_ordinary_fit_imports_no_scipy():
    code = textwrap.dedent(f"""
        import sys
        from mediaplan.tasks.plasmolysis import fit_counts
        from mediaplan.files.counts import read_counts_csv
        from mediaplan.views.plot import curve_points
        fit = fit_counts(read_counts_csv({str(ROOT / 'plans' / 'demo_plasmolysis_counts.csv')!r}), "logit")
        assert not fit.widened
        pts = curve_points(fit)
        assert pts.band_low[60] < pts.fitted[60] < pts.band_high[60]
        print(sorted(m for m in sys.modules if m == "scipy" or m.startswith("scipy.")))
    """)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr[-2000:]
    assert out.stdout.strip() == "[]"
