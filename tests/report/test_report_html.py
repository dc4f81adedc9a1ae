"""review.html: one self-contained page (no network), per workbook its findings, per regression
three plots; the optional test renders it in headless Chromium.

The band of slopes drawn on the fit plot is checked against statsmodels' confidence interval of
the slope (an independent implementation), on a fixture workbook's own data."""

from __future__ import annotations

import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
import statsmodels.api as sm
from test_report_sample import sample_result

from auditor.model import AuditResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.report import write_reports
from auditor.report.html import render_html

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
BOOK = FIXTURES / "design_named_results.xlsx"


@pytest.fixture(scope="module")
def audited() -> AuditResult:
    workbook = audit_workbook(BOOK, load_policy("general"))
    return AuditResult("0.1.0", "general", [workbook], generated="2026-01-01")


def _no_network(page: str) -> None:
    # Links only within the page; nothing to fetch: no src, no stylesheet, no script.
    assert re.findall(r'href="([^"#][^"]*)"', page) == []
    assert "<script" not in page and " src=" not in page and "@import" not in page
    assert "default-src 'none'" in page  # and the browser is told so


def test_page_is_self_contained_with_a_plot_per_regression(audited: AuditResult) -> None:
    page = render_html(audited)
    _no_network(page)
    regressions = audited.workbooks[0].regressions
    assert page.count("<svg") == len(regressions) == 4
    for regression in regressions:
        assert f'id="r-{regression.id}"' in page
    for finding in audited.all_findings():
        assert finding.check in page
    assert page.count("Decision: open") == len(audited.all_findings())
    assert "SHA-256 " + audited.workbooks[0].sha256 in page


def test_band_of_slopes_is_the_confidence_interval_of_statsmodels(audited: AuditResult) -> None:
    load = next(r for r in audited.workbooks[0].regressions if r.id == "load")
    used = [p for p in load.data if p.used]
    x = np.array([p.x[0] for p in used], dtype=float)
    y = np.array([p.y for p in used], dtype=float)
    low, high = sm.OLS(y, sm.add_constant(x)).fit().conf_int(alpha=0.05)[1]
    page = render_html(audited)
    assert f"slopes the data allow ({low:.3g} to {high:.3g})" in page


def test_sample_result_page_lists_unreadable_and_waived() -> None:
    result = sample_result()
    finding = result.workbooks[0].regressions[0].findings[0]
    finding.decision = {"decision": "waived", "reason": "Stated one-sided test", "name": "R. E.",
                        "date": "2026-01-02"}  # fmt: skip
    page = render_html(result)
    _no_network(page)
    assert "Files not audited" in page and "scanned-copy.xlsx" in page
    assert "<b>Decision: waived</b> by R. E. on 2026-01-02: Stated one-sided test" in page
    assert "No plot: several x columns, or too few points." in page  # the sample has no data


def _chromium() -> str | None:
    return shutil.which("chromium") or shutil.which("chromium-browser")


@pytest.mark.optional
def test_chromium_renders_the_page(audited: AuditResult, tmp_path: Path) -> None:
    browser = _chromium()
    if browser is None:
        pytest.skip("Chromium is not installed (apt-get install -y chromium)")
    write_reports(audited, tmp_path / "out", ["html"])
    page = (tmp_path / "out" / "review.html").resolve()
    flags = [
        browser, "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
        "--no-first-run", f"--user-data-dir={tmp_path / 'profile'}",
    ]  # fmt: skip
    dom = subprocess.run(
        [*flags, "--dump-dom", page.as_uri()], capture_output=True, text=True, timeout=120
    ).stdout
    assert "<h1>Regression audit review</h1>" in dom
    assert dom.count("<svg") == 4  # the browser parsed every inline plot
    shot = tmp_path / "page.png"
    subprocess.run(
        [*flags, "--window-size=1280,2400", f"--screenshot={shot}", page.as_uri()],
        capture_output=True,
        timeout=120,
    )
    header = shot.read_bytes()[:24]
    assert header[:8] == b"\x89PNG\r\n\x1a\n"
    assert (int.from_bytes(header[16:20], "big"), int.from_bytes(header[20:24], "big")) == (
        1280,
        2400,
    )
