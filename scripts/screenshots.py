"""Regenerate the README screenshots of the terminal UI in screenshots/.

Each shot drives the app headless with Textual's Pilot on the built-in demo patient
(invented), saves an SVG, and converts it to PNG when ``rsvg-convert`` is installed
(Debian package librsvg2-bin; fonts-firacode gives the intended font).

Usage: ``python scripts/screenshots.py [--out screenshots] [--no-png]``.
"""

from __future__ import annotations

import argparse
import os
import asyncio
import shutil
import subprocess
import tempfile
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

SHOTS: tuple[tuple[str, tuple[int, int], tuple[str, ...], str], ...] = (
    ("plan", (110, 34), (), "the live plan for the demo patient"),
    ("findings", (100, 30), ("f3",), "findings, most severe first"),
    ("explain", (100, 32), ("f3", "enter"), "the explanation of a finding"),
    ("depth-profile", (100, 30), ("f5",), "round-trip loss against depth"),
    ("safety", (100, 30), ("f4",), "the safety panel"),
    ("doppler", (110, 34), ("ctrl+u", "4", "5", "ctrl+t", *"renal artery", "enter",
                            "focus:mode-pulsed_doppler", "space", "f6"),
     "Doppler planning for a deep renal artery at BMI 45: aliasing and its remedies"),
    ("invalid-input", (80, 24), ("ctrl+u", "7"), "an impossible BMI marked on its field"),
    ("draft-80x24", (80, 24), ("ctrl+g", *"A. Learner", "tab", *"curved", "tab", "3", "tab",
                               *"right-intercostal", "tab"),
     "a supervised draft: the student's own decisions and the sign-off, at 80 x 24"),
)
"""File stem, terminal size, keys pressed after the first plan (``focus:<id>`` focuses a
field), what it shows."""


async def _shoot(stem: str, size: tuple[int, int], keys: tuple[str, ...], out: Path) -> Path:
    from textual.widgets import Input

    from planner.tui.app import ScanplanApp
    app = ScanplanApp()
    async with app.run_test(size=size) as pilot:
        for _ in range(600):
            await pilot.pause(0.02)
            if app.planning.plan is not None:
                break
        else:
            raise RuntimeError("no plan within 12 s")
        for box in app.planning.query(Input):
            box.cursor_blink = False
        bmi = app.planning.query_one("#bmi", Input)
        bmi.cursor_position = len(bmi.value)
        for key in keys:
            if key.startswith("focus:"):
                widget = app.planning.query_one(f"#{key[6:]}")
                widget.focus()
                widget.scroll_visible(animate=False)
            else:
                await pilot.press(key)
        await pilot.pause(0.2)
        return Path(app.save_screenshot(filename=f"{stem}.svg", path=str(out)))


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default=str(ROOT / "screenshots"), help="output folder")
    parser.add_argument("--no-png", action="store_true", help="write the SVGs only")
    args = parser.parse_args(argv)
    sys.path.insert(0, str(ROOT))
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    converter = None if args.no_png else shutil.which("rsvg-convert")
    for stem, size, keys, what in SHOTS:
        svg = asyncio.run(_shoot(stem, size, keys, out))
        line = f"{svg.relative_to(out.parent) if out.parent in svg.parents else svg}  ({what})"
        if converter:
            png = svg.with_suffix(".png")
            # rsvg drops a space that starts a text run unless whitespace is preserved
            # (terminals and browsers keep it); convert from a preserving copy.
            text = svg.read_text(encoding="utf-8").replace("<svg ", '<svg xml:space="preserve" ', 1)
            with tempfile.NamedTemporaryFile("w", suffix=".svg", delete=False) as tmp:
                tmp.write(text)
            try:
                subprocess.run([converter, "-o", str(png), tmp.name], check=True)
            finally:
                os.unlink(tmp.name)
            line += f" + {png.name}"
        print(line)
    if not converter and not args.no_png:
        print("rsvg-convert not found: SVG only (install librsvg2-bin for PNG)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
