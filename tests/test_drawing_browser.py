"""The curve editor in a real browser: JupyterLab on localhost, driven by
Playwright in Debian's Chromium. A point is dragged with the mouse and the
curve is read back from the kernel.

Needs Chromium (``apt-get install chromium``) and the ``browser`` extra
(JupyterLab, Playwright); skipped with the reason when either is missing.
``make test-browser`` installs both and runs this file, saving the
screenshot to ``build/screenshots/`` (``GAINSHAPE_SCREENSHOTS``), never over a
tracked file. Bursts of 5 and 30 key presses, sent faster than the kernel
answers, must each move the point by exactly that many steps.
"""

import json
import os
import shutil
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import nbformat
import pytest

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
pytestmark = pytest.mark.skipif(CHROMIUM is None, reason="no Chromium on this machine "
                                "(apt-get install chromium, or run `make test-browser`)")
sync_api = pytest.importorskip("playwright.sync_api", reason="Playwright is not installed "
                               "(pip install -e '.[browser]', or run `make test-browser`)")
pytest.importorskip("jupyterlab", reason="JupyterLab is not installed "
                    "(pip install -e '.[browser]', or run `make test-browser`)")

TOKEN = "gainshape-browser-test"
CELLS = [
    "import json\nimport gainshape as gs\n"
    "editor = gs.draw(gs.GainCurve.from_points([0.01, 0.5, 2.0, 120.0], [0.0, 0.0, 1.0, 1.0],"
    " freq_scale='log'), sfreq=250.0)\neditor",
    "print('POINTS=' + json.dumps(editor.points))",
]


@pytest.fixture
def lab(tmp_path, free_port):
    """A JupyterLab server on localhost with its own settings, in tmp_path."""
    nb = nbformat.v4.new_notebook(cells=[nbformat.v4.new_code_cell(c) for c in CELLS])
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3",
                                 "language": "python"}
    nbformat.write(nb, tmp_path / "draw.ipynb")
    # user settings: widget state saved with the notebook, no news pop-up
    settings = tmp_path / "settings"
    for plugin, values in (("@jupyter-widgets/jupyterlab-manager/plugin", {"saveState": True}),
                           ("@jupyterlab/apputils-extension/notification", {"fetchNews": "false"})):
        (settings / plugin).parent.mkdir(parents=True, exist_ok=True)
        (settings / f"{plugin}.jupyterlab-settings").write_text(json.dumps(values))
    port = free_port()
    env = {**os.environ, "JUPYTER_CONFIG_DIR": str(tmp_path / "config"),
           "JUPYTERLAB_SETTINGS_DIR": str(settings),
           "JUPYTER_RUNTIME_DIR": str(tmp_path / "runtime"), "MPLBACKEND": "Agg"}
    server = subprocess.Popen(
        [sys.executable, "-m", "jupyterlab", "--no-browser", f"--port={port}",
         "--ServerApp.ip=127.0.0.1", "--allow-root", f"--IdentityProvider.token={TOKEN}",
         f"--ServerApp.root_dir={tmp_path}",
         "--LabApp.check_for_updates_class=jupyterlab.NeverCheckForUpdate"],
        env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    url = f"http://127.0.0.1:{port}"
    try:
        for _ in range(120):
            try:
                urllib.request.urlopen(f"{url}/api/status?token={TOKEN}", timeout=1)
                break
            except OSError:
                time.sleep(0.5)
        else:
            pytest.fail("JupyterLab did not start within 60 s")
        yield url
    finally:
        server.terminate()
        server.wait(timeout=20)


def _keep(picture: Path) -> None:
    """Copy a screenshot to $GAINSHAPE_SCREENSHOTS, when set."""
    folder = os.environ.get("GAINSHAPE_SCREENSHOTS")
    if folder:
        shutil.copyfile(picture, Path(folder) / picture.name)


def _wait_for_answers(page):
    """Until the kernel has answered the page's last edit and nothing waits."""
    page.wait_for_function(
        "() => { const e = document.querySelector('.gs-editor');"
        " return e && e.dataset.answered && !e.dataset.busy; }", timeout=60_000)
    page.wait_for_timeout(300)


def _kernel_points(page) -> list:
    """The editor's points as the kernel holds them (the second cell prints them)."""
    _run_cell(page, 1)
    output = page.locator(".jp-OutputArea-output", has_text="POINTS=").last
    output.wait_for(timeout=30_000)
    page.wait_for_timeout(300)
    return json.loads(output.inner_text().split("POINTS=", 1)[1].strip())


def _run_cell(page, index):
    cell = page.locator(".jp-Notebook .jp-Cell").nth(index)
    cell.locator(".jp-InputArea-editor").click()
    page.keyboard.press("Shift+Enter")


def test_a_point_dragged_with_the_mouse_changes_the_curve_in_the_kernel(lab, tmp_path):
    with sync_api.sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=[
            "--no-sandbox", "--disable-gpu", "--disable-background-networking",
            "--disable-component-update", "--disable-sync", "--no-first-run"])
        page = browser.new_page(viewport={"width": 1400, "height": 1400})
        try:
            page.goto(f"{lab}/lab/tree/draw.ipynb?token={TOKEN}")
            page.locator(".jp-Notebook .jp-Cell").first.wait_for(timeout=60_000)
            page.get_by_text("Python 3 (ipykernel) | Idle").wait_for(timeout=60_000)
            _run_cell(page, 0)
            page.locator(".jp-Notebook .jp-Cell .jp-InputPrompt").first.get_by_text("[1]:").wait_for(
                timeout=60_000)
            handle = page.locator(".gs-editor circle.gs-handle[data-index='1']")
            handle.wait_for(timeout=30_000)
            box = handle.bounding_box()
            x, y = box["x"] + box["width"] / 2, box["y"] + box["height"] / 2
            page.mouse.move(x, y)
            page.mouse.down()
            for step in range(1, 11):  # to the right (higher frequency) and up (more gain)
                page.mouse.move(x + 6 * step, y - 12 * step)
                page.wait_for_timeout(30)
            page.mouse.up()
            _wait_for_answers(page)  # the page's last edit answered by the kernel
            round_trip = page.locator(".gs-editor").get_attribute("data-round-trip-ms")
            points = _kernel_points(page)
            # bursts of key presses, faster than the round trip: every press counts
            bursts = []
            for presses in (5, 30):
                before = _kernel_points(page)[1][0]
                page.focus(".gs-editor svg.gs-curve")
                for _ in range(presses):  # towards the far neighbour at 0.01 Hz
                    page.keyboard.press("ArrowLeft", delay=0)
                _wait_for_answers(page)
                points = _kernel_points(page)
                bursts.append((presses, before, points[1][0]))
            # the gain field in dB, applied with Enter inside JupyterLab
            page.locator(".gs-editor button[data-scale='dB']").click()
            gain_field = page.locator(".gs-editor .gs-point input").nth(1)
            gain_field.fill("-6")
            gain_field.press("Enter")
            _wait_for_answers(page)
            points = _kernel_points(page)
            typed = points[1][1]
            shape_shown = page.locator(".gs-editor select").first.input_value()
            # a zoomed view: only the points inside it get handles; the whole range again after
            zoom_fields = page.locator(".gs-editor .gs-zoom input")
            zoom_fields.nth(0).fill("0.3")
            zoom_fields.nth(1).fill("3")
            zoom_fields.nth(1).press("Enter")
            _wait_for_answers(page)
            zoomed_handles = page.locator(".gs-editor circle.gs-handle").count()
            code_breaks = page.evaluate("() => getComputedStyle(document.querySelector("
                                        "'.gs-editor .gs-code')).wordBreak")
            page.get_by_role("button", name="Whole range").click()
            _wait_for_answers(page)
            # the legend above the plot's frame; no handle inside a clipped group (drawn whole)
            geometry = page.evaluate(
                "() => { const svg = document.querySelector('.gs-editor svg.gs-curve');"
                " const frame = svg.querySelector('.gs-frame').getBBox();"
                " const legend = svg.querySelector('.gs-legend').getBBox();"
                " const handles = [...svg.querySelectorAll('circle.gs-handle')];"
                " return {legendBottom: legend.y + legend.height, frameTop: frame.y,"
                " handles: handles.length,"
                " clipped: handles.filter(c => c.closest('[clip-path]')).length}; }")
            # the editor at the widths it gets: JupyterLab's output area with the file browser
            # open (528 px) and closed (780 px), and a wide page (1,280 px)
            widths = {}
            for width in (528, 780, 1280):
                page.evaluate("(w) => { const o = document.querySelector('.gs-editor')"
                              ".closest('.jp-OutputArea-output'); o.style.width = w + 'px';"
                              " o.style.maxWidth = w + 'px'; }", width)
                page.wait_for_timeout(400)
                widths[width] = page.evaluate(
                    "() => { const e = document.querySelector('.gs-editor');"
                    " const tops = [...e.querySelector('.gs-bar').children].map(c => {"
                    " const b = c.getBoundingClientRect(); return Math.round((b.top + b.height / 2) / 8); });"
                    " const r = e.getBoundingClientRect();"
                    " return {height: r.height, width: r.width, rows: new Set(tops).size,"
                    " summary: e.querySelector('.gs-summary').textContent}; }")
                page.locator(".gs-editor").screenshot(path=str(tmp_path / f"draw_editor_{width}.png"))
            page.evaluate("() => { const o = document.querySelector('.gs-editor')"
                          ".closest('.jp-OutputArea-output'); o.style.width = ''; o.style.maxWidth = ''; }")
            page.wait_for_timeout(400)
            shot = tmp_path / "draw_editor.png"
            page.locator(".gs-editor").screenshot(path=str(shot))
            page.keyboard.press("Control+s")  # saved with the widget's state
            page.wait_for_timeout(1500)
        except Exception:
            page.screenshot(path=str(tmp_path / "failure.png"), full_page=True)
            _keep(tmp_path / "failure.png")
            raise
        browser.close()
    _keep(shot)
    for width, measured in widths.items():
        _keep(tmp_path / f"draw_editor_{width}.png")
        print(f"editor at {width} px: {measured['width']:.0f} x {measured['height']:.0f} px, "
              f"toolbar in {measured['rows']} row(s)")
    assert widths[780]["rows"] == 1 and widths[780]["height"] <= 1000, widths[780]
    assert widths[528]["height"] <= 1100, widths[528]
    assert "largest deviation" in widths[780]["summary"]
    print(f"last drag's round trip in the browser: {round_trip} ms")
    assert len(points) == 4
    assert points[1][1] > 0.0, points  # dragged up
    assert typed == pytest.approx(10 ** (-6 / 20), abs=1e-3)  # -6 dB typed, Enter pressed
    assert geometry["legendBottom"] <= geometry["frameTop"] and geometry["handles"] == 4
    assert geometry["clipped"] == 0, geometry
    assert zoomed_handles == sum(0.3 <= f <= 3 for f, _ in points) == 2
    assert code_breaks == "normal"  # the code line wraps at its spaces, never inside a number
    assert shape_shown == ""  # "choose a shape": the curve on screen is no longer a preset
    for presses, before, after in bursts:  # each press: 1/24 octave down (rounded to 4 digits)
        assert after / before == pytest.approx(2 ** (-presses / 24), rel=2e-3), (presses, before, after)
    assert points[0] == [0.01, 0.0] and points[2] == [2.0, 1.0]
    # the notebook file keeps the widget's state (ipywidgets' widget-state metadata)
    saved = nbformat.read(tmp_path / "draw.ipynb", as_version=4)
    states = saved.metadata["widgets"]["application/vnd.jupyter.widget-state+json"]["state"]
    assert points in [m["state"].get("points") for m in states.values()]
