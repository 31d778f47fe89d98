"""Take the README's screens from a built site with headless Chromium.

    make screens        (builds the site first, then runs this)

Writes docs/screens/register.png and docs/screens/dossier.png: the top of
the register and of one dossier page, as a reviewer sees them.  Needs
Debian's chromium; exits 1 with a message when it is missing.
"""
from __future__ import annotations

import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SITE = ROOT / "site"
OUT = ROOT / "docs" / "screens"
PAGES = {"register": "index.html", "dossier": "cases/nitro-hydrogenation.html"}
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
         "--disable-component-update", "--disable-sync", "--no-first-run", "--hide-scrollbars"]


def main() -> int:
    chromium = shutil.which("chromium") or shutil.which("chromium-browser")
    if not chromium:
        print("screens: chromium is not installed (Debian package 'chromium')", file=sys.stderr)
        return 1
    OUT.mkdir(parents=True, exist_ok=True)
    for name, page in PAGES.items():
        target = SITE / page
        if not target.exists():
            print(f"screens: {target} is missing; run 'make site' first", file=sys.stderr)
            return 1
        with tempfile.TemporaryDirectory() as profile:
            png = OUT / f"{name}.png"
            subprocess.run([chromium, *FLAGS, f"--user-data-dir={profile}",
                            "--window-size=1200,1500", f"--screenshot={png}", target.as_uri()],
                           check=True, capture_output=True, timeout=120)
        print(f"wrote {png.relative_to(ROOT)}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
