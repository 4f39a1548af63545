"""The HTML report in a real headless Chromium: it renders (a screenshot that is not blank), logs nothing to the
console, keeps its charts in the DOM, and prints on A4 pages."""

from __future__ import annotations

import re
import subprocess
from pathlib import Path

import numpy as np
import pytest

CHROMIUM = Path("/usr/bin/chromium")

pytestmark = [pytest.mark.browser,
              pytest.mark.skipif(not CHROMIUM.exists(), reason="needs /usr/bin/chromium (Debian package chromium)")]

# A4 in PostScript points, as Chromium writes the PDF MediaBox.
A4_PT = (595.0, 842.0)


def _chromium(tmp_path: Path, page: Path, *extra: str, timeout: int = 120) -> subprocess.CompletedProcess:
    """Run headless Chromium on a local file with a fresh profile, no network side-traffic, console to stderr."""
    profile = tmp_path / f"profile-{len(list(tmp_path.glob('profile-*')))}"
    cmd = [str(CHROMIUM), "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
           "--no-first-run", "--disable-component-update", "--disable-sync", "--disable-extensions",
           f"--user-data-dir={profile}", "--enable-logging=stderr", "--v=0", *extra, page.resolve().as_uri()]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=timeout, stdin=subprocess.DEVNULL)


def _console_lines(stderr: str) -> list[str]:
    """Messages the page wrote to its console (Chromium logs them as ':CONSOLE' lines) and uncaught errors."""
    return [ln for ln in stderr.splitlines() if ":CONSOLE" in ln or "Uncaught" in ln]


@pytest.fixture(scope="module")
def report_html(tmp_path_factory, mem_store):
    """A shortlist of the shipped catalog, exported as HTML with its charts."""
    from db.query import load_materials
    from ranking.report import export_result
    from ranking.shortlist import shortlist
    from ranking.target import Target

    with mem_store.session() as s:
        mats = load_materials(s)
    t = Target(voltage_V=800.0, tmin_K=233.15, tmax_K=378.15, energy_J=50.0, failure_probability=1e-3, margin=1.2,
               assume_defaults=True)
    res = shortlist(mats, t, draws=50)
    return export_result(res, tmp_path_factory.mktemp("html") / "shortlist.html", materials=mats)


def test_console_scanner_sees_a_page_error(tmp_path):
    """Control: a page that throws is caught by the scanner, so a clean scan below means something."""
    bad = tmp_path / "bad.html"
    bad.write_text("<!DOCTYPE html><html><body><p>x</p><script>throw new Error('planted')</script></body></html>")
    run = _chromium(tmp_path, bad, "--dump-dom")
    assert any("planted" in ln for ln in _console_lines(run.stderr)), run.stderr[-2000:]


def test_report_renders_to_a_non_blank_screenshot_without_console_messages(report_html, tmp_path):
    import matplotlib.image

    shot = tmp_path / "shot.png"
    run = _chromium(tmp_path, report_html, f"--screenshot={shot}", "--window-size=1200,1600",
                    "--hide-scrollbars")
    assert shot.exists(), run.stderr[-2000:]
    assert _console_lines(run.stderr) == []
    img = matplotlib.image.imread(shot)[..., :3]
    assert img.shape[:2] == (1600, 1200)
    flat = img.reshape(-1, 3)
    assert flat.std(axis=0).max() > 0.05, "screenshot is a single colour"
    ink = (flat.mean(axis=1) < 0.5).mean()
    assert 0.01 < ink < 0.5, f"dark-pixel share {ink:.3f}: blank or broken page"


def test_report_dom_holds_the_tables_and_the_inline_charts(report_html, tmp_path):
    run = _chromium(tmp_path, report_html, "--dump-dom")
    dom = run.stdout
    assert _console_lines(run.stderr) == []
    assert dom.count("<svg") == 3
    assert 'class="ranking"' in dom and 'class="sources"' in dom
    assert "Excluded" in dom and "CAUTION" in dom


def test_report_prints_on_a4_pages(report_html, tmp_path):
    pdf = tmp_path / "report.pdf"
    run = _chromium(tmp_path, report_html, f"--print-to-pdf={pdf}", "--no-pdf-header-footer")
    assert pdf.exists(), run.stderr[-2000:]
    data = pdf.read_bytes()
    boxes = re.findall(rb"/MediaBox\s*\[\s*0\s+0\s+([\d.]+)\s+([\d.]+)\s*\]", data)
    assert boxes, "no pages in the PDF"
    sizes = np.array([[float(w), float(h)] for w, h in boxes])
    assert np.allclose(sizes, A4_PT, atol=1.5), sizes[:3]
    assert 2 <= len(boxes) <= 20


def _pages(pdf: Path) -> int:
    return len(re.findall(rb"/Type\s*/Page[^s]", pdf.read_bytes()))


def test_review_document_prints_on_few_a4_pages_without_cut_columns(report_html, tmp_path):
    """Printed by headless Chromium: A4 portrait, the main part and the appendix on a handful of pages; laid out at
    the A4 text width (186 mm), no table is wider than the page and no cell's content spills out of it."""
    pdf = tmp_path / "review.pdf"
    run = _chromium(tmp_path, report_html, f"--print-to-pdf={pdf}", "--no-pdf-header-footer")
    assert pdf.exists(), run.stderr[-2000:]
    assert 2 <= _pages(pdf) <= 10
    # a copy with a measuring script (the report itself has none), at the printed text width of 186 mm = 703 px
    probe = tmp_path / "probe.html"
    script = """<script>
    window.addEventListener('load', () => {
      const bad = [];
      const page = document.body.clientWidth;
      for (const t of document.querySelectorAll('table')) {
        if (t.scrollWidth > page + 1) bad.push('table ' + t.className + ' ' + t.scrollWidth + '>' + page);
        for (const c of t.querySelectorAll('td, th'))
          if (c.scrollWidth > c.clientWidth + 1) bad.push('cell ' + c.textContent.trim().slice(0, 30));
      }
      const out = document.createElement('pre'); out.id = 'overflow'; out.textContent = JSON.stringify(bad);
      document.body.appendChild(out);
    });</script>"""
    probe.write_text(report_html.read_text().replace("</body>", script + "</body>"))
    run = _chromium(tmp_path, probe, "--dump-dom", "--window-size=703,1000", "--virtual-time-budget=3000")
    found = re.search(r'<pre id="overflow">(.*?)</pre>', run.stdout, re.S)
    assert found, run.stderr[-2000:]
    assert found.group(1) == "[]", found.group(1)[:2000]
