"""The report as people see it: rendered by headless Chromium (Debian's ``chromium``, installed by .ci/run).

Checks: every embedded figure decodes in the browser (its onload handler marks it in the DOM), the
screenshot is not blank (many distinct colours: the figures' colour maps), and printing to PDF works.
Skipped only where no Chromium is installed (a developer machine without it); CI installs it.
"""
import shutil
import subprocess

import numpy as np
import pytest

from calib.cautions import CAUTIONS
from calib.figures import k_figure, profile_figure
from calib.instruments import PointInstrument
from calib.profile import RotorPlaneProfile
from calib.report import write_report
from calib.table import PointResult, build_table

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--virtual-time-budget=5000"]
pytestmark = pytest.mark.skipif(CHROMIUM is None, reason="chromium is not installed (CI installs it)")


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    folder = tmp_path_factory.mktemp("report")
    points = []
    for level, cells, n in (("coarse", 1000, 6.6), ("normal", 2250, 6.8), ("fine", 5000, 6.9)):
        for flow in (0.01, 0.02):
            profile = RotorPlaneProfile.power_law(n, 0.05, flow / (np.pi * 0.05**2) / 0.8)
            points.append(PointResult(flow, level, cells, 100, True, 1.0, 10.0, profile))
    table = build_table(points, PointInstrument(nominal_area=np.pi * 0.05**2, at_r=0.0))
    figures = {"profile": profile_figure(points[-1].profile, "20 L/s"), "k": k_figure(table)}
    path = write_report(folder / "report.html", title="Browser check <test>", case_text="title = 'x'",
                        table=table, figures=figures, cautions=CAUTIONS, version="test")
    return folder, path


def _chromium(folder, *args):
    profile = folder / "chromium-profile"
    return subprocess.run([CHROMIUM, *FLAGS, f"--user-data-dir={profile}", *args], capture_output=True,
                          text=True, timeout=120)


def test_figures_load_in_the_browser(report):
    folder, path = report
    dom = _chromium(folder, "--dump-dom", path.as_uri()).stdout
    assert dom.count("data-state=\"loaded\"") == 2, dom[:500]
    assert "data-state=\"broken\"" not in dom


def test_screenshot_is_not_blank(report):
    from matplotlib.image import imread
    folder, path = report
    shot = folder / "shot.png"
    _chromium(folder, "--window-size=1200,3000", f"--screenshot={shot}", path.as_uri())
    pixels = imread(shot)[:, :, :3]
    colours = np.unique((pixels * 255).astype(np.uint8).reshape(-1, 3), axis=0)
    assert len(colours) > 100  # text alone gives a few grey levels; the figures give many colours
    assert pixels.std() > 0.05


def test_prints_to_pdf(report):
    folder, path = report
    pdf = folder / "report.pdf"
    _chromium(folder, "--no-pdf-header-footer", f"--print-to-pdf={pdf}", path.as_uri())
    data = pdf.read_bytes()
    assert data[:5] == b"%PDF-" and data.count(b"/Type /Page") >= 2
