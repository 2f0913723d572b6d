"""Random key presses into the terminal app, for exceptions a user must never meet.

    python3 tests/fuzz/keys.py --seconds 300 [--seed 1] [--warm]

Each run opens a demo plan (an invented scenario) in a headless app of a random size (80x24 to 140x45), in
a temporary folder with its own config and state folders, and presses keys in episodes: open a screen or
dialog by its key, act in it (its own keys, moves, Enter, Tab, and text that a tired user types into a
field: wrong units, signs, commas, non-ASCII minus and degree signs, empty fields), close it or not. An
exception the app did not handle (the pilot re-raises it when the app closes) is a finding: the seed, the
size and the keys are printed so that the run can be replayed, and the exit status is 1. ``--warm`` runs
the warm start and the priming of the screens as a user's app does (slower; the timing varies). A bug
planted in the series screen's design action is found within a minute and a half.

When a search finds something: fix the class, then add the key sequence to a pilot test of the screen it
broke (tests/tui/), so the suite keeps it. This file is not collected by pytest (a development tool, like
tests/fuzz/search.py); the plans it opens are invented demo data.
"""

from __future__ import annotations

import argparse
import asyncio
import os
import random
import sys
import tempfile
import time
import traceback
from pathlib import Path

#: keys a user presses on their own: the app's bindings (letters and controls), moves and field keys
KEYS = ("a", "e", "x", "b", "c", "t", "p", "w", "i", "v", "m", "u", "r", "o", "n", "s", "d", "f", "g", "h",
        "l", "k", "j", "y", "z", "q", "question_mark", "ctrl+p", "ctrl+s", "ctrl+o", "ctrl+z", "ctrl+y", "f1",
        "S", "R", "U", "escape", "escape",
        "enter", "enter", "tab", "tab", "shift+tab", "up", "down", "down", "left", "right", "pageup",
        "pagedown", "home", "end", "backspace", "delete", "space", "1", "0", "minus", "full_stop")
#: what a user types into a field, character by character
TEXTS = ("-0.5 MPa", "30 g/L", "abc", "1e9 g/L", "−5 °C", "450 mOsm/kg", "sucrose", "mannitol", "0",
         "-1 mol/kg", "1,5 g/L", "2 L", "250 mL", "-0.4 MPa", "-1.8 MPa", "8", "60", "0.5", "KNO3", "NaCl",
         "1 mol/kg", "ms1962", "25 degC", "4 °C", "nan", "inf", "1e400 g/L", " ", "%", "100 % w/v")

_CHAR_KEYS = {" ": "space", "-": "minus", ".": "full_stop", "/": "slash", ",": "comma", "%": "percent_sign",
              "+": "plus"}


def text_keys(text: str) -> list[str]:
    """The key presses that type ``text``."""
    return [_CHAR_KEYS.get(ch, ch) for ch in text]


#: keys that open a screen or dialog from the recipe, and keys that act inside the screens
OPENERS = ("a", "e", "x", "b", "c", "t", "p", "w", "i", "v", "m", "o", "n", "question_mark", "ctrl+p", "f1", "S")
INSIDE = ("d", "f", "l", "k", "u", "s", "v", "w", "enter", "tab", "shift+tab", "down", "up", "delete", "space")


def random_keys(rng: random.Random) -> list[str]:
    """Episodes: most open a screen or dialog and act in it (keys of its own, text into its fields), then
    close it or not; some are any keys at all."""
    keys: list[str] = []
    for _ in range(rng.randint(3, 12)):
        if rng.random() < 0.7:
            keys.append(rng.choice(OPENERS))
            for _ in range(rng.randint(1, 10)):
                r = rng.random()
                if r < 0.3:
                    keys += ["ctrl+a", "backspace"] * rng.randint(0, 1) + text_keys(rng.choice(TEXTS))
                elif r < 0.8:
                    keys.append(rng.choice(INSIDE))
                else:
                    keys.append(rng.choice(KEYS))
            if rng.random() < 0.6:
                keys.append("escape")
        else:
            keys += [rng.choice(KEYS) for _ in range(rng.randint(1, 8))]
    return keys


async def run_keys(keys: list[str], size: tuple[int, int], plan_kind: str, warm: bool) -> None:
    """Open a demo plan in a headless app of ``size`` and press ``keys``; raises what the app raised."""
    sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tui"))
    from tui_helpers import app_for, half_ms_plan, shoot_plan

    from mediaplan.files.catalog import get_catalog
    from mediaplan.tui.app import MediaplanApp
    from mediaplan.tui.session import Session

    MediaplanApp.WARM_START = warm
    MediaplanApp.PRIME_SCREENS = warm
    plan = shoot_plan() if plan_kind == "shoot" else half_ms_plan()
    app = app_for(Session(plan, get_catalog()))
    async with app.run_test(size=size) as pilot:
        for k in keys:
            if not app.is_running:
                break
            await pilot.press(k)
        if app.is_running:
            await pilot.pause()


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--seconds", type=float, default=120.0)
    ap.add_argument("--warm", action="store_true", help="with the warm start and the priming on")
    args = ap.parse_args(argv)
    rng = random.Random(args.seed)
    t_end = time.monotonic() + args.seconds
    runs = found = 0
    seen: set[str] = set()
    with tempfile.TemporaryDirectory() as tmp:
        os.environ["MEDIAPLAN_CONFIG_DIR"] = str(Path(tmp) / "config")
        os.environ["MEDIAPLAN_STATE_DIR"] = str(Path(tmp) / "state")
        os.environ.pop("MEDIAPLAN_CATALOG", None)
        os.chdir(tmp)
        while time.monotonic() < t_end:
            keys = random_keys(rng)
            size = rng.choice([(80, 24), (100, 32), (140, 45)])
            kind = rng.choice(["shoot", "half"])
            runs += 1
            try:
                asyncio.run(run_keys(keys, size, kind, args.warm))
            except Exception as exc:  # noqa: BLE001 - every exception is a finding
                key = f"{type(exc).__name__}: {str(exc)[:120]}"
                found += 1
                if key not in seen:
                    seen.add(key)
                    print(f"FOUND {key}\n  size {size}, plan {kind}, keys {keys}")
                    traceback.print_exception(exc, limit=-6)
    print(f"{runs} runs, {len(seen)} kinds of finding ({found} runs in all)")
    return 1 if seen else 0


if __name__ == "__main__":
    sys.exit(main())
