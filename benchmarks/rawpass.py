"""The bare reading pass the issue's ratios divide by: zipfile + lxml iterparse, nothing built.

Kept free of any heavy import so that, run as a whole process (``python rawpass.py FILE...``),
it costs what the least reader of formulas and values must pay, start-up included.
"""

from __future__ import annotations

import sys
import zipfile
from pathlib import Path

from lxml import etree

NS = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"


def raw_pass(path: Path) -> int:
    """Formula text and stored value of every cell, and the shared strings; nothing built."""
    cells = 0
    with zipfile.ZipFile(path) as archive:
        names = archive.namelist()
        if "xl/sharedStrings.xml" in names:
            with archive.open("xl/sharedStrings.xml") as handle:
                for _, item in etree.iterparse(handle, tag=NS + "si"):
                    item.xpath("string()")
                    item.clear()
        for name in names:
            if not (name.startswith("xl/worksheets/") and name.endswith(".xml")):
                continue
            with archive.open(name) as handle:
                for _, cell in etree.iterparse(handle, tag=NS + "c"):
                    cell.findtext(NS + "f")
                    cell.findtext(NS + "v")
                    cells += 1
                    cell.clear()
    return cells


if __name__ == "__main__":
    print(sum(raw_pass(Path(p)) for p in sys.argv[1:]))
