"""Make docs/report.png: real parts of the demo's report.html stacked in one picture.

The picture is the top of the page (headline figures), the legend and one component's charts,
cut from a
headless-Chromium screenshot of the report that ``schedcheck demo`` writes. Usage::

    schedcheck demo /tmp/demo          # writes /tmp/demo/audit/report.html
    python docs/make_report_png.py /tmp/demo/audit/report.html [AHU-2/supply]
"""

from __future__ import annotations

import base64
import io
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "tests"))

from chromium_cdp import Browser  # noqa: E402
from PIL import Image  # noqa: E402

WIDTH = 1100


def _clip(browser: Browser, top: float, height: float) -> Image.Image:
    res = browser.call("Page.captureScreenshot", {
        "format": "png", "captureBeyondViewport": True,
        "clip": {"x": 0, "y": top, "width": WIDTH, "height": height, "scale": 1}})
    return Image.open(io.BytesIO(base64.b64decode(res["data"]))).convert("RGB")


def _box(browser: Browser, js_element: str) -> tuple[float, float]:
    res = browser.call("Runtime.evaluate", {"expression": (
        f"(() => {{ const r = ({js_element}).getBoundingClientRect();"
        " return [r.top + window.scrollY, r.height]; })()"), "returnByValue": True})
    top, height = res["result"]["value"]
    return float(top), float(height)


def main(report: Path, component: str = "AHU-2/supply", out: Path = HERE / "report.png") -> Path:
    with tempfile.TemporaryDirectory() as tmp, Browser(Path(tmp)) as browser:
        browser.call("Emulation.setDeviceMetricsOverride", {
            "width": WIDTH, "height": 900, "deviceScaleFactor": 1, "mobile": False})
        browser.open(report.resolve().as_uri())
        asks_top, _ = _box(browser, "document.getElementById('asks')")
        head = _clip(browser, 0, asks_top - 4)
        top, height = _box(browser, (
            "[...document.querySelectorAll('section.comp')].find(s => "
            f"s.querySelector('h3').textContent.startsWith({component!r}))"))
        charts = _clip(browser, top - 8, height + 16)
        ltop, lheight = _box(browser, "document.querySelector('svg.legend')")
        legend = _clip(browser, ltop - 4, lheight + 8)
    parts = [head, legend, charts]
    picture = Image.new("RGB", (WIDTH, sum(p.height for p in parts)), "white")
    y = 0
    for part in parts:
        picture.paste(part, (0, y))
        y += part.height
    picture = picture.quantize(colors=128, method=Image.Quantize.MEDIANCUT)
    picture.save(out, optimize=True)
    return out


if __name__ == "__main__":
    args = sys.argv[1:]
    if not args:
        sys.exit(__doc__)
    print(main(Path(args[0]), *args[1:2]))
