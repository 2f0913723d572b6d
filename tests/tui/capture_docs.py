"""Write the text captures in docs/ from the snapshot tests' scenarios (run after updating the snapshots).

    python tests/tui/capture_docs.py

docs/tui_<scenario>.txt is the 80x24 screen, docs/tui_<scenario>_140x45.txt the large one (main and
plasmolysis screens). Each file is the screen as a user reads it, one terminal line per line.
"""

from __future__ import annotations

import asyncio
import os
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from test_tui_snapshots import SCENARIOS  # noqa: E402
from tui_helpers import SIZES, screen_lines  # noqa: E402

DOCS = HERE.parents[1] / "docs"


async def capture(make, before, size) -> str:
    app = make()
    async with app.run_test(size=size) as pilot:
        await before(pilot)
        await pilot.pause()
        lines = [ln.rstrip() for ln in screen_lines(app)]
        await app.workers.wait_for_complete()
    return "\n".join(lines) + "\n"


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:  # no recovery files or settings of the user's own
        os.environ["MEDIAPLAN_STATE_DIR"] = str(Path(tmp) / "state")
        os.environ["MEDIAPLAN_CONFIG_DIR"] = str(Path(tmp) / "config")
        os.environ["TEXTUAL_ANIMATIONS"] = "none"
        for name, (make, before) in SCENARIOS.items():
            for size in SIZES:
                if name == "amount" and size != SIZES[0]:
                    continue
                suffix = "" if size == SIZES[0] else f"_{size[0]}x{size[1]}"
                target = DOCS / f"tui_{name}{suffix}.txt"
                target.write_text(asyncio.run(capture(make, before, size)), encoding="utf-8")
                print(f"wrote {target}")


if __name__ == "__main__":
    main()
