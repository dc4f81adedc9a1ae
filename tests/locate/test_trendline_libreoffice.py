"""What a chart trendline really fits, as LibreOffice draws it (optional: needs ``soffice``).

LibreOffice renders each chart of a workbook into a PDF, with the trendline's equation label
("f(x) = 1.97 x + 0.09") as text. The test writes three charts with XlsxWriter, has LibreOffice
render them, reads the labels back and compares them with the regressions regaudit recomputes:

* a scatter series: y on x;
* a line series with text categories: y on the positions 1..n;
* a line series with dates as categories: LibreOffice fits y on the date serials (a date axis),
  while regaudit, like the spreadsheet the key workbooks come from, fits the positions 1..n: the
  test pins that difference (the slopes differ by the spacing of the dates);
* a scatter series whose y range is three cells longer than its x range: the first n pairs only;
* a scatter series with an empty x cell: the point is left out, the others keep their x values;
* a scatter series with one x cell holding text: LibreOffice leaves that point out, while
  regaudit, like the spreadsheet the studied workbooks come from, fits y against 1..n (pinned).

The PDF text is read through each font's ToUnicode map (ISO 32000-1, 9.10.3): LibreOffice writes
text as glyph codes of subset fonts, and the map turns them back into characters.
"""

from __future__ import annotations

import re
import shutil
import subprocess
import zlib
from pathlib import Path

import numpy as np
import pytest
import statsmodels.api as sm
import xlsxwriter

from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy

X = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0]
Y = [2.3, 4.1, 6.4, 7.7, 10.2, 12.1, 13.8]
RECALC_OFF = """<?xml version="1.0" encoding="UTF-8"?>
<oor:items xmlns:oor="http://openoffice.org/2001/registry">
<item oor:path="/org.openoffice.Office.Calc/Formula/Load">
<prop oor:name="OOXMLRecalcMode" oor:op="fuse"><value>0</value></prop></item>
</oor:items>
"""


LAYOUTS = (  # sheet, plot, categories, extra y cells
    ("Scatter Run", "scatter", "numbers", 0),
    ("Line Run", "line", "labels", 0),
    ("Dated Run", "line", "dates", 0),
    ("Long Y", "scatter", "numbers", 3),
    ("Text X", "scatter", "one text", 0),
    ("Blank X", "scatter", "one blank", 0),
)


def _write(path: Path) -> None:
    book = xlsxwriter.Workbook(str(path))
    dates = book.add_format({"num_format": "yyyy-mm-dd"})
    for number, (name, plot, categories, extra) in enumerate(LAYOUTS):
        sheet = book.add_worksheet(name)
        y = [round(v * (1 + number / 10) + number, 3) for v in Y]  # a label of its own
        for i, x in enumerate(X):
            if categories == "dates":
                sheet.write_number(i, 0, 46000 + 7 * i, dates)  # a week apart
            elif categories == "labels":
                sheet.write_string(i, 0, f"Week {i + 1}")
            elif categories.startswith("one") and i == 2:
                if categories == "one text":
                    sheet.write_string(i, 0, "n/a")
            elif categories == "one text":
                sheet.write_number(i, 0, 2 * x + 1)  # x values that are not the positions
            else:
                sheet.write_number(i, 0, x)
        sheet.write_column(0, 1, [*y, 30.0, 35.0, 41.0][: len(y) + extra])
        chart = book.add_chart({"type": plot})
        chart.add_series(
            {
                "categories": [name, 0, 0, len(X) - 1, 0],
                "values": [name, 0, 1, len(Y) - 1 + extra, 1],
                "trendline": {"type": "linear", "display_equation": True},
            }
        )
        sheet.insert_chart("D2", chart)
    book.close()


def _pdf_text(pdf: bytes) -> list[str]:
    """The text runs of a PDF written by LibreOffice, decoded through its ToUnicode maps."""
    streams = []
    for match in re.finditer(rb"stream\r?\n(.*?)endstream", pdf, re.S):
        try:
            streams.append(zlib.decompress(match.group(1)))
        except zlib.error:
            continue
    maps = []
    for stream in streams:
        if b"beginbfchar" in stream:
            pairs = re.findall(
                rb"<([0-9A-Fa-f]+)>\s*<([0-9A-Fa-f]+)>", stream.split(b"beginbfchar")[1]
            )
            maps.append({int(a, 16): chr(int(b, 16)) for a, b in pairs})
    runs = []
    for stream in streams:
        for array, single in re.findall(rb"\[(.*?)\]\s*TJ|<([0-9A-Fa-f]+)>\s*Tj", stream):
            codes = b"".join(re.findall(rb"<([0-9A-Fa-f]+)>", array)) if array else single
            glyphs = [int(codes[i : i + 2], 16) for i in range(0, len(codes), 2)]
            runs.extend("".join(m.get(g, "?") for g in glyphs) for m in maps)
    return runs


@pytest.mark.optional
def test_libreoffice_draws_the_trendline_regaudit_recomputes(tmp_path: Path) -> None:
    soffice = shutil.which("soffice")
    if soffice is None:
        pytest.skip("LibreOffice (soffice) is not installed")
    source = tmp_path / "trendlines.xlsx"
    _write(source)
    profile = tmp_path / "profile"
    (profile / "user").mkdir(parents=True)
    (profile / "user" / "registrymodifications.xcu").write_text(RECALC_OFF, encoding="utf-8")
    command = [soffice, f"-env:UserInstallation={profile.as_uri()}", "--headless"]
    command += ["--convert-to", "pdf", "--outdir", str(tmp_path), str(source)]
    subprocess.run(command, capture_output=True, timeout=300, check=True)
    labels = [run for run in _pdf_text((tmp_path / "trendlines.pdf").read_bytes()) if "f(x)" in run]
    drawn = []
    for label in dict.fromkeys(labels):  # each font map decodes the run; keep distinct labels
        found = re.fullmatch(r"f\(x\) = (-?[\d.]+) x ([+−-]) ([\d.]+)", label.strip())
        if found:
            sign = -1.0 if found.group(2) in "−-" else 1.0
            drawn.append((float(found.group(1)), sign * float(found.group(3))))
    result = audit_workbook(source, load_policy("general"))
    recomputed = [(r.intended["slope"], r.intended["intercept"]) for r in result.regressions]
    assert len(recomputed) == len(LAYOUTS) and len(drawn) == len(LAYOUTS), (labels, recomputed)
    scatter, labelled, dated, long_y, text_x, blank_x = zip(drawn, recomputed, strict=True)
    for (slope, intercept), (ours, our_intercept) in (scatter, labelled, long_y, blank_x):
        assert slope == pytest.approx(ours, rel=1e-9)
        assert intercept == pytest.approx(our_intercept, rel=1e-9, abs=1e-12)
    # x cells holding text: the spreadsheet the studied workbooks come from plots the series
    # against 1..n (common practice: it ignores non-numeric x values and counts), which regaudit
    # follows; LibreOffice leaves the text point out and keeps the other x values.
    y = np.array([round(v * 1.4 + 4, 3) for v in Y])
    x = np.array([2 * v + 1 for v in X])
    kept = np.arange(len(X)) != 2
    drawn_fit = sm.OLS(y[kept], sm.add_constant(x[kept])).fit().params
    positions_fit = sm.OLS(y, sm.add_constant(np.arange(1.0, len(X) + 1))).fit().params
    (slope, _), (ours, _) = text_x
    assert slope == pytest.approx(float(drawn_fit[1]), rel=1e-9)
    assert ours == pytest.approx(float(positions_fit[1]), rel=1e-12)
    # A date axis is where the applications part: LibreOffice fits y on the date serials, so its
    # slope is per day (the positions are a week apart) where regaudit's is per position.
    (slope, _), (ours, _) = dated
    assert slope == pytest.approx(ours / 7, rel=1e-9)
