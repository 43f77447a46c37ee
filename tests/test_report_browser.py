"""The study report in a real browser: Playwright in Debian's Chromium at 1280 px.

A BIDS study of two recordings (long BIDS names, one recording broken so
its row carries a long error) is filtered; its ``report.html`` is opened
at a 1280 px wide window. The recordings table must fit the page (no
horizontal scrolling), and each section carries our own label.
Skipped without Chromium or Playwright (``make test-browser`` installs both).
"""

import os
import shutil
from pathlib import Path

import pytest

import gainshape as gs
from gainshape.simulate import simulate_workshop_recording

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
pytestmark = pytest.mark.skipif(CHROMIUM is None, reason="no Chromium on this machine "
                                "(apt-get install chromium, or run `make test-browser`)")
sync_api = pytest.importorskip("playwright.sync_api", reason="Playwright is not installed "
                               "(pip install -e '.[browser]', or run `make test-browser`)")
distributed = pytest.importorskip("distributed")
mne_bids = pytest.importorskip("mne_bids")


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    root = tmp_path_factory.mktemp("bids")
    for subject in ("controlgroup01", "controlgroup02"):
        raw = simulate_workshop_recording(seconds=30.0, seed=len(subject)).pick("eeg")
        path = mne_bids.BIDSPath(subject=subject, session="baselinevisit", task="auditoryoddball",
                                 acquisition="highdensity", datatype="eeg", root=root)
        mne_bids.write_raw_bids(raw, path, format="BrainVision", allow_preload=True,
                                verbose=False)
    broken = next(root.rglob("sub-controlgroup02*_eeg.vhdr"))
    broken.write_text("not a BrainVision header\n")
    recipe = gs.write_recipe(root.parent / "f.json", gs.bandpass(0.5, 40.0), picks="eeg")
    out = root.parent / "derivatives_with_a_long_name" / "gainshape"
    with distributed.Client(processes=False, n_workers=1, threads_per_worker=1,
                            dashboard_address=None) as client:
        table = gs.run_study(recipe, root, out, client=client, verbose=False)
    assert list(table.status) == ["filtered", "failed"]
    return out / "report.html"


def test_the_recordings_table_fits_1280_px_and_sections_carry_our_labels(report):
    with sync_api.sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=["--no-sandbox"])
        page = browser.new_page(viewport={"width": 1280, "height": 900})
        page.goto(report.as_uri())
        page.wait_for_selector("table.gs-recordings")
        table_right = page.eval_on_selector("table.gs-recordings",
                                            "t => t.getBoundingClientRect().right")
        page_width = page.evaluate("document.documentElement.scrollWidth")
        tags = page.eval_on_selector_all("button.tag, .badge, [data-mne-tag]",
                                         "els => els.map(e => e.textContent.trim())")
        text = page.inner_text("body")
        shots = os.environ.get("GAINSHAPE_SCREENSHOTS")
        if shots:
            page.locator("table.gs-recordings").scroll_into_view_if_needed()
            page.screenshot(path=str(Path(shots) / "study_report_1280.png"))
        browser.close()
    assert page_width <= 1280, page_width  # no horizontal scroll
    assert table_right <= 1280, table_right
    assert "custom-html" not in text and "custom-html" not in tags
    for label in ("filter", "band-change", "methods", "recordings", "failures"):
        assert label in tags, tags
