"""Write the README's pictures of the seeded sample plant: its network, the T–Q diagram of its heat
exchanger HX1 and its exergy flow diagram, as small PNGs in docs/pictures/.

The pictures are drawn as SVG by the audit's own report code and turned into PNG by a headless
Chromium screenshot (the Debian package ``chromium``). Run from the repository's root::

    python docs/make_pictures.py
"""

from __future__ import annotations

import re
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

import audit  # noqa: E402  (the repository's own package, above)
from audit.report.pictures.exergy_flow import exergy_flow_svg  # noqa: E402
from audit.report.pictures.network import network_svg  # noqa: E402
from audit.report.pictures.svg import step_marks  # noqa: E402
from audit.report.pictures.tq import tq_svg  # noqa: E402

SAMPLE = ROOT / "sample_plant" / "quillon-bay-seeded.yaml"
OUT = ROOT / "docs" / "pictures"
FLAGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--hide-scrollbars",
    "--force-device-scale-factor=1",
]


def png(svg: str, target: Path, browser: str) -> None:
    """Screenshot ``svg`` at its own size into ``target``."""
    width, height = (
        int(float(v)) for v in re.search(r'width="([\d.]+)" height="([\d.]+)"', svg).groups()
    )
    with tempfile.TemporaryDirectory() as folder:
        page = Path(folder) / "picture.html"
        page.write_text(
            f'<!DOCTYPE html><html><head><meta charset="utf-8"><link rel="icon" href="data:,">'
            f"<style>body{{margin:0}}svg{{display:block}}</style></head><body>{svg}</body></html>",
            encoding="utf-8",
        )
        subprocess.run(
            [
                browser,
                *FLAGS,
                f"--user-data-dir={folder}/profile",
                f"--screenshot={target}",
                f"--window-size={width},{height}",
                page.as_uri(),
            ],
            check=True,
            capture_output=True,
            timeout=120,
        )


def main() -> int:
    browser = shutil.which("chromium") or shutil.which("chromium-browser")
    if browser is None:
        print("Chromium is needed to turn the SVG pictures into PNG (apt-get install chromium)")
        return 1
    result = audit.run(SAMPLE)
    OUT.mkdir(parents=True, exist_ok=True)
    pictures = {
        "network.png": network_svg(result),
        "tq-HX1.png": tq_svg(result.step("HX1"), step_marks(result)["HX1"]),
        "exergy-flow.png": exergy_flow_svg(result),
    }
    for name, svg in pictures.items():
        assert svg is not None
        png(svg, OUT / name, browser)
        print(f"wrote {(OUT / name).relative_to(ROOT)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
