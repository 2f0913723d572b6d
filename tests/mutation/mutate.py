"""Mutation probe of the value tests: does the suite notice a wrong number?

Each mutant changes ONE number of the tree: a parameter of the bundled catalog (Pitzer beta0, beta1, C-phi,
theta, psi, a first temperature derivative; a Norrish K), a coefficient of the PEG equations, a physical constant or a coefficient of the
water and potential modules, or one amount of a published medium. The change is +5 % by default, and a sign
slip or a decimal slip (x10) where such a slip is a plausible transcription error. For every mutant the
script runs a fast subset of the suite (the value tests of that kind of number, listed in SUBSETS) in a
temporary copy of the tree, never in the working tree, and reports the mutants that no test noticed
(survivors).

    python3 tests/mutation/mutate.py               # every mutant, one worker
    python3 tests/mutation/mutate.py -j 2          # two copies of the tree, two mutants at a time
    python3 tests/mutation/mutate.py -k pitzer     # only mutants whose name contains "pitzer"
    python3 tests/mutation/mutate.py --list        # list the mutants and their test subsets
    python3 tests/mutation/mutate.py --without test_parameter_sources.py   # the model checks alone

Exit status 0 when every mutant was killed, 1 when any survived, 2 when the unmutated copy fails its own
subsets (nothing can be learned then) or a mutant's anchor is no longer found (update MUTANTS).

This file is not collected by pytest (its name does not start with test_). It is a development tool: the
product never imports it.
"""

from __future__ import annotations

import argparse
import os
import re
import shutil
import subprocess
import sys
import tempfile
import time
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

#: folders and files copied into the temporary tree (the rest of the checkout is not needed by the tests run)
COPIED = ["mediaplan", "catalog", "tests", "plans", "docs", "pyproject.toml", "README.md", "DEVELOPERS.md"]
IGNORED = shutil.ignore_patterns("__pycache__", "*.pyc", ".hypothesis", ".pytest_cache", "__snapshots__",
                                 "snapshot_report.html")

#: value tests per kind of number (paths relative to the tree); run with -x, so a killed mutant stops early
SUBSETS = {
    "pitzer": ["tests/thermo/test_parameter_sources.py", "tests/thermo/test_pitzer.py",
               "tests/medium/test_zsr_independent.py", "tests/medium/test_engine_published.py"],
    "neutral": ["tests/thermo/test_parameter_sources.py", "tests/medium/test_zsr_independent.py",
                "tests/thermo/test_neutral.py", "tests/medium/test_engine_published.py"],
    "pitzer_temperature": ["tests/thermo/test_parameter_sources_temperature.py",
                           "tests/thermo/test_pitzer_temperature_ammonium.py", "tests/thermo/test_pitzer_temperature.py"],
    "peg": ["tests/thermo/test_peg.py"],
    "constants": ["tests/medium/test_figures.py", "tests/thermo/test_water.py", "tests/thermo/test_neutral.py",
                  "tests/thermo/test_pitzer.py"],
    "media": ["tests/files/test_published_media.py", "tests/tasks/test_prep.py"],
}


@dataclass(frozen=True)
class Mutant:
    """One changed number: in ``path``, the first line at or after the line holding ``block`` (if given)
    that holds ``line``; in that line the first ``number`` (as written) is replaced by ``how`` of it."""

    name: str
    path: str
    line: str
    number: str
    how: str  # "+5%", "sign", "x10"
    subset: str
    block: str | None = None
    key: str | None = None  # the text right before the number in the line

    def new_number(self) -> str:
        v = float(self.number)
        new = {"+5%": v * 1.05, "sign": -v, "x10": v * 10.0}[self.how]
        return f"{new:.10g}" if "e" not in self.number.lower() else f"{new:.6e}"

    def apply(self, text: str) -> str:
        lines = text.split("\n")
        start = 0
        if self.block is not None:
            hits = [i for i, ln in enumerate(lines) if self.block in ln]
            if len(hits) != 1:
                raise LookupError(f"{self.name}: block anchor {self.block!r} found {len(hits)} times")
            start = hits[0]
        cands = [i for i in range(start, len(lines)) if self.line in lines[i]]
        if not cands or (self.block is None and len(cands) != 1):
            raise LookupError(f"{self.name}: line anchor {self.line!r} found {len(cands)} times")
        i = cands[0]
        prefix = re.escape(self.key) if self.key else r"(?<![\w.])"
        pattern = "(" + prefix + ")" + re.escape(self.number) + r"(?![\w.])"
        new, n = re.subn(pattern, lambda mo: mo.group(1) + self.new_number(), lines[i], count=1)
        if n != 1:
            raise LookupError(f"{self.name}: number {self.number} not in line {lines[i]!r}")
        lines[i] = new
        return "\n".join(lines)


def _pitzer_row(pair: str, cation: str, anion: str, values: dict[str, str]) -> list[Mutant]:
    anchor = f'cation: "{cation}", anion: "{anion}"'
    return [Mutant(f"pitzer {pair} {key} {how}", "catalog/pitzer.yaml", anchor, num, how, "pitzer", key=f"{key}: ")
            for key, (num, hows) in values.items() for how in hows]


def _mixing(kind: str, ions: str, value: str, hows=("+5%",)) -> list[Mutant]:
    return [Mutant(f"pitzer {kind} {ions} {how}", "catalog/pitzer.yaml", f"{{ions: [{ions}], value: {value}",
                   value, how, "pitzer", key="value: ") for how in hows]


def _media(medium: str, component: str, amount: str, hows=("+5%",)) -> list[Mutant]:
    return [Mutant(f"media {medium} {component} {how}", f"catalog/media/{medium}.yaml", "amount:", amount, how,
                   "media", block=f"component: {component}", key='amount: "') for how in hows]


P5, PS = ("+5%",), ("+5%", "sign")


def mutants() -> list[Mutant]:
    out: list[Mutant] = []
    # --- Pitzer binary parameters of the macro salts of the media, and a few others (May et al. 2011, PM73) ---
    rows = {
        "NH4NO3": ("NH4[+]", "NO3[-]", {"beta0": ("-0.01709", PS), "beta1": ("0.09198", P5), "cphi": ("0.000419", P5)}),
        "KNO3": ("K[+]", "NO3[-]", {"beta0": ("-0.07733", PS), "beta1": ("0.04925", P5), "cphi": ("0.005547", P5)}),
        "CaCl2": ("Ca[2+]", "Cl[-]", {"beta0": ("0.31", P5), "beta1": ("1.618", P5), "cphi": ("-0.00125", P5)}),
        "MgSO4": ("Mg[2+]", "SO4[2-]", {"beta0": ("0.2153", P5), "beta1": ("3.29", P5), "beta2": ("-40.15", P5),
                                        "cphi": ("0.02794", P5)}),
        "KH2PO4": ("K[+]", "H2PO4[-]", {"beta0": ("-0.1231", PS), "beta1": ("0.09124", P5), "cphi": ("0.02453", P5)}),
        "KCl": ("K[+]", "Cl[-]", {"beta0": ("0.04874", P5), "beta1": ("0.2215", P5), "cphi": ("-0.00098", P5)}),
        "NaCl": ("Na[+]", "Cl[-]", {"beta0": ("0.0765", P5), "beta1": ("0.2664", P5), "cphi": ("0.00127", P5)}),
        "NaH2PO4": ("Na[+]", "H2PO4[-]", {"beta0": ("-0.05135", P5), "beta1": ("0.05496", P5)}),
        "Na2SO4": ("Na[+]", "SO4[2-]", {"beta0": ("0.01959", P5), "beta1": ("1.049", P5)}),
        "K2SO4": ("K[+]", "SO4[2-]", {"beta0": ("0.07424", P5), "beta1": ("0.5188", P5)}),
        "Ca(NO3)2": ("Ca[2+]", "NO3[-]", {"beta0": ("0.1683", P5), "beta1": ("1.65", P5)}),
        "(NH4)2SO4": ("NH4[+]", "SO4[2-]", {"beta0": ("0.04211", P5), "beta1": ("0.582", P5)}),
        "CaSO4": ("Ca[2+]", "SO4[2-]", {"beta1": ("3.1973", P5), "beta2": ("-54.24", P5)}),
        "MnSO4": ("Mn[2+]", "SO4[2-]", {"beta0": ("0.2139", P5)}),
    }
    for pair, (c, a, vals) in rows.items():
        out += _pitzer_row(pair, c, a, vals)
    # --- first temperature derivatives (Pitzer 1991 Tables 12-13; Silvester & Pitzer 1978 Table I), stored as A3 ---
    for pair, (c, a, vals) in {
        "NH4Cl": ("NH4[+]", "Cl[-]", {"beta0": "0.779e-04", "beta1": "12.58e-04", "cphi": "2.1e-05"}),
        "KNO3": ("K[+]", "NO3[-]", {"beta1": "6.45e-03", "cphi": "3.97e-04"}),
        "KH2PO4": ("K[+]", "H2PO4[-]", {"beta0": "6.045e-04"}),
    }.items():
        for key, num in vals.items():
            for how in PS:
                out.append(Mutant(f"pitzer temperature {pair} d{key}/dT {how}", "catalog/pitzer.yaml",
                                  f'cation: "{c}", anion: "{a}"', num, how, "pitzer_temperature",
                                  key=f"{key}: [0, 0, "))
    # --- Debye-Hueckel: A_phi's leading coefficient (Moller 1988) and b (Pitzer 1991) ---
    out.append(Mutant("pitzer A_phi a0 +5%", "catalog/pitzer.yaml", "coefficients: [0.336901532", "0.336901532",
                      "+5%", "pitzer"))
    out.append(Mutant("pitzer b +5%", "catalog/pitzer.yaml", "b: 1.2  #", "1.2", "+5%", "pitzer", key="b: "))
    # --- mixing parameters (HMW84, PK74, PS76, HFM89) ---
    out += _mixing("theta", '"Ca[2+]", "K[+]"', "0.032")
    out += _mixing("theta", '"K[+]", "Na[+]"', "-0.012")
    out += _mixing("theta", '"Ca[2+]", "Mg[2+]"', "0.007")
    out += _mixing("theta", '"Cl[-]", "SO4[2-]"', "0.02")
    out += _mixing("theta", '"Cl[-]", "NO3[-]"', "0.016")
    out += _mixing("theta", '"Cl[-]", "H2PO4[-]"', "0.1")
    out += _mixing("psi", '"Ca[2+]", "K[+]", "Cl[-]"', "-0.025")
    out += _mixing("psi", '"K[+]", "Mg[2+]", "SO4[2-]"', "-0.048")
    out += _mixing("psi", '"Cl[-]", "NO3[-]", "Ca[2+]"', "-0.017")
    out += _mixing("psi", '"K[+]", "Na[+]", "NO3[-]"', "-0.0012")
    out += _mixing("psi", '"Cl[-]", "H2PO4[-]", "K[+]"', "-0.0105")
    # --- Norrish K of the neutral solutes ---
    for solute, k in [("sucrose", "6.47"), ("glucose", "2.25"), ("fructose", "2.25"), ("mannitol", "0.906"),
                      ("sorbitol", "1.65"), ("glycerol", "1.16")]:
        out.append(Mutant(f"neutral {solute} K +5%", "catalog/neutral.yaml", "K:", k, "+5%", "neutral",
                          block=f"  {solute}:", key="K: "))
    # --- PEG equations (Michel & Kaufmann 1973; Michel 1983) ---
    for num in ("1.29", "140.0", "4.0"):
        out.append(Mutant(f"peg 8000 {num} +5%", "mediaplan/thermo/peg.py", "return 1.29 * t - 140.0", num,
                          "+5%", "peg"))
    for num in ("1.18e-4", "8.39e-7"):
        out.append(Mutant(f"peg 6000 {num} +5%", "mediaplan/thermo/peg.py", "return (-1.18e-4 + 8.39e-7 * t)",
                          num, "+5%", "peg"))
    for num in ("1.18e-2", "2.67e-4"):
        out.append(Mutant(f"peg 6000 {num} +5%", "mediaplan/thermo/peg.py", "(-1.18e-2 + 2.67e-4 * t) * 1.0e3",
                          num, "+5%", "peg"))
    # --- physical constants and the coefficients of water and potential ---
    out += [
        Mutant("constant R +5%", "mediaplan/thermo/constants.py", "R = 8.314462618", "8.314462618", "+5%", "constants"),
        Mutant("constant M_w +5%", "mediaplan/thermo/constants.py", "M_WATER = 0.018015268", "0.018015268", "+5%",
               "constants"),
        Mutant("constant osmometer K_f +5%", "mediaplan/thermo/constants.py", "K_F_OSMOMETER = 1.858", "1.858", "+5%",
               "constants"),
        Mutant("water density a5 +5%", "mediaplan/thermo/water.py", "_TANAKA_A5 = 999.974950", "999.974950", "+5%",
               "constants"),
        Mutant("water density a3 +5%", "mediaplan/thermo/water.py", "_TANAKA_A3 = 522528.9", "522528.9", "+5%",
               "constants"),
        Mutant("freezing point coefficient A +5%", "mediaplan/thermo/potential.py", "_FP_A = 0.009687", "0.009687",
               "+5%", "constants"),
        Mutant("freezing point coefficient B x10", "mediaplan/thermo/potential.py", "_FP_B = 4.8e-6", "4.8e-6",
               "x10", "constants"),
    ]
    # --- published media: one line of each class in each medium (+5 %), and decimal slips ---
    media = {
        "ms1962": [("ammonium_nitrate", "1650"), ("potassium_dihydrogen_phosphate", "170"), ("boric_acid", "6.2"),
                   ("iron_ii_sulfate_heptahydrate", None), ("thiamine_hydrochloride", None), ("myo_inositol", None),
                   ("sucrose", None)],
        "b5_1968": [("potassium_nitrate", None), ("iron_ii_sulfate_heptahydrate", None), ("myo_inositol", None)],
        "dkw1984": [("ammonium_nitrate", None), ("glycine", None), ("sucrose", None)],
        "ls1965": [("ammonium_nitrate", None), ("thiamine_hydrochloride", None)],
        "n6_1975": [("glycine", None), ("iron_ii_sulfate_heptahydrate", None)],
        "nn1969": [("boric_acid", None)],
        "sh1972": [("potassium_nitrate", None)],
        "wpm1980": [("ammonium_nitrate", None)],
    }
    for medium, lines in media.items():
        text = (ROOT / "catalog" / "media" / f"{medium}.yaml").read_text(encoding="utf-8")
        for component, amount in lines:
            if amount is None:
                amount = _first_amount(text, component)
                if amount is None:
                    continue
            out += _media(medium, component, amount)
    out += _media("ms1962", "potassium_nitrate", "1900", ("x10",))
    out += _media("ms1962", "boric_acid", "6.2", ("x10",))
    return out


def _first_amount(text: str, component: str) -> str | None:
    m = re.search(r"component: " + re.escape(component) + r"\s*\n\s*amount: \"([0-9.]+)", text)
    return m.group(1) if m else None


# ---------------------------------------------------------------------------------------------------------
def _copy_tree(dest: Path) -> None:
    for name in COPIED:
        src = ROOT / name
        if src.is_dir():
            shutil.copytree(src, dest / name, ignore=IGNORED, symlinks=True)
        elif src.is_file():
            shutil.copy2(src, dest / name)
    # the bundled catalog is the package data mediaplan._catalog: an editable install maps that name onto the
    # checkout's catalog/, so the copy gets its own mediaplan/_catalog pointing at the copied (mutated) folder
    (dest / "mediaplan" / "_catalog").symlink_to(Path("..") / "catalog", target_is_directory=True)


def _check_tree(tree: Path) -> None:
    """The copy imports its own package and reads its own catalog (else no mutant could be seen)."""
    code = ("import mediaplan, pathlib; from mediaplan.files.catalog import bundled_folder; "
            "print(pathlib.Path(mediaplan.__file__).resolve().parent.parent); print(bundled_folder().resolve())")
    env = dict(os.environ, PYTHONPATH=str(tree))
    out = subprocess.run([sys.executable, "-c", code], cwd=tree, env=env, capture_output=True, text=True).stdout.split()
    want = [str(tree.resolve()), str((tree / "catalog").resolve())]
    if out != want:
        raise SystemExit(f"the copy in {tree} does not use its own package and catalog: {out} (expected {want})")


def _run_subset(tree: Path, subset: str, timeout: float) -> tuple[int, str]:
    """Run the subset's files one after the other (the likeliest killer first), stopping at the first failure:
    a killed mutant costs one short run, a survivor all of them. Returns pytest's status and what failed."""
    env = dict(os.environ, PYTHONPATH=str(tree), PYTHONDONTWRITEBYTECODE="1")
    env.pop("PYTEST_XDIST_WORKER", None)
    code, info = 5, "no test file of the subset exists"
    for f in SUBSETS[subset]:
        if not (tree / f).is_file():
            continue
        cmd = [sys.executable, "-m", "pytest", "-x", "-q", "-p", "no:randomly", "-p", "no:cacheprovider",
               "--no-header", "-o", "addopts=", f]
        try:
            r = subprocess.run(cmd, cwd=tree, env=env, capture_output=True, text=True, timeout=timeout)
        except subprocess.TimeoutExpired:
            return -1, f"timeout in {f}"
        last = [ln for ln in r.stdout.splitlines() if ln.strip()]
        failed = next((ln.split(" ", 1)[1].split(" - ")[0] for ln in last if ln.startswith("FAILED ")), "")
        code, info = r.returncode, failed or (last[-1] if last else r.stderr.strip()[-200:])
        if code != 0:
            break
    return code, info


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("-j", "--jobs", type=int, default=1, help="copies of the tree run at once")
    ap.add_argument("-k", dest="select", default="", help="only mutants whose name contains this text")
    ap.add_argument("--list", action="store_true", help="list the mutants and exit")
    ap.add_argument("--timeout", type=float, default=600.0, help="seconds per subset run")
    ap.add_argument("--without", action="append", default=[], metavar="TEST_FILE",
                    help="leave this test file out of every subset (e.g. to see what the model checks catch "
                         "without the transcription checks)")
    args = ap.parse_args(argv)
    for files in SUBSETS.values():
        files[:] = [f for f in files if f not in args.without and Path(f).name not in args.without]

    todo = [m for m in mutants() if args.select in m.name]
    if args.list:
        for m in todo:
            print(f"{m.name:55s} {m.path}  -> {', '.join(SUBSETS[m.subset])}")
        print(f"{len(todo)} mutants")
        return 0
    sources = {m.path: (ROOT / m.path).read_text(encoding="utf-8") for m in todo}
    try:
        texts = [(m, m.apply(sources[m.path])) for m in todo]
    except LookupError as exc:
        print(f"mutant anchor lost: {exc}", file=sys.stderr)
        return 2

    t0 = time.perf_counter()
    work = Path(tempfile.mkdtemp(prefix="mediaplan-mutants-"))
    try:
        trees = []
        for j in range(max(1, args.jobs)):
            tree = work / f"tree{j}"
            tree.mkdir()
            _copy_tree(tree)
            _check_tree(tree)
            trees.append(tree)
        # the unmutated copy must pass every subset used, else a failure says nothing about a mutant
        for subset in sorted({m.subset for m in todo}):
            code, info = _run_subset(trees[0], subset, args.timeout)
            if code != 0:
                print(f"the unmutated tree fails the {subset} subset: {info}", file=sys.stderr)
                return 2
        free = list(trees)
        results: list[tuple[Mutant, int, str, float]] = []

        def one(item: tuple[Mutant, str]) -> tuple[Mutant, int, str, float]:
            m, text = item
            tree = free.pop()
            try:
                target = tree / m.path
                target.write_text(text, encoding="utf-8")
                s = time.perf_counter()
                code, info = _run_subset(tree, m.subset, args.timeout)
                return m, code, info, time.perf_counter() - s
            finally:
                (tree / m.path).write_text(sources[m.path], encoding="utf-8")
                free.append(tree)

        with ThreadPoolExecutor(max_workers=len(trees)) as pool:
            for m, code, info, secs in pool.map(one, texts):
                verdict = "killed" if code == 1 else "SURVIVED" if code == 0 else f"error {code}"
                print(f"{verdict:9s} {m.name:55s} {secs:5.1f} s  {info}", flush=True)
                results.append((m, code, info, secs))
    finally:
        shutil.rmtree(work, ignore_errors=True)

    survivors = [m for m, code, _, _ in results if code == 0]
    errors = [m for m, code, _, _ in results if code not in (0, 1)]
    for m in survivors:
        print(f"survivor: {m.name} ({m.path}: {m.number} -> {m.new_number()})")
    print(f"{len(results)} mutants: {len(results) - len(survivors) - len(errors)} killed, {len(survivors)} survived, "
          f"{len(errors)} errors, {time.perf_counter() - t0:.0f} s")
    return 1 if survivors or errors else 0


if __name__ == "__main__":
    sys.exit(main())
