"""Hostile and broken files, each made here as a real file: every one must come back unreadable
with a reason that says what the file is (and nothing may crash); a batch holding them goes on.

Sources for the formats: APPNOTE.TXT (zip, zip64), MS-CFB (OLE compound files: an encrypted
OOXML package is stored in one as EncryptionInfo + EncryptedPackage streams, a legacy workbook as
a Workbook stream), ECMA-376 (xlsx parts), XML 1.0 section 4 (entities, the source of the
billion-laughs and quadratic-blow-up attacks).
"""

from __future__ import annotations

import hashlib
import json
import shutil
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest
import xlsxwriter
from package_builders import (
    compound_file,
    package_parts,
    sheet_xml,
    write_package,
    zip_bomb,
)

from auditor.errors import UnreadableWorkbook
from auditor.pipeline.audit import audit_workbook
from auditor.pipeline.batch import audit_batch
from auditor.policy import load_policy
from auditor.read.open import read_workbook

ROOT = Path(__file__).resolve().parents[2]
GOOD = ROOT / "fixtures" / "workbooks" / "lab_nitrate_calibration_beside.xlsx"
ENGINES = ("stream", "openpyxl")

LAUGHS = (
    '<?xml version="1.0"?>\n<!DOCTYPE lolz [<!ENTITY lol "lol">'
    + "".join(
        f'<!ENTITY lol{i} "{("&lol" + str(i - 1) + ";") * 10}">' for i in range(1, 10)
    ).replace("&lol0;", "&lol;")
    + ']>\n<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
    '<sheetData><row r="1"><c r="A1" t="inlineStr"><is><t>&lol9;</t></is></c></row>'
    "</sheetData></worksheet>"
)
QUADRATIC = (
    '<?xml version="1.0"?>\n<!DOCTYPE sst [<!ENTITY big "' + "B" * 50_000 + '">]>\n'
    '<sst xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" count="1"><si><t>'
    + "&big;" * 20_000
    + "</t></si></sst>"
)
EXTERNAL = (
    '<?xml version="1.0"?>\n<!DOCTYPE wb [<!ENTITY secret SYSTEM "file:///etc/hostname">]>\n'
    '<workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" '
    'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets>'
    '<sheet name="&secret;" sheetId="1" r:id="rId1"/></sheets></workbook>'
)


def _good_parts() -> dict[str, str | bytes]:
    sheet = sheet_xml('<row r="1"><c r="A1"><v>1</v></c></row>')
    return package_parts({"Data": sheet}, ["x"])


def _with_part(path: Path, name: str, data: str | bytes) -> Path:
    parts = _good_parts()
    parts[name] = data
    return write_package(path, parts)


def _make_all(folder: Path) -> dict[str, tuple[Path, str]]:
    """name -> (file, words its reason must hold)."""
    folder.mkdir(parents=True, exist_ok=True)
    made: dict[str, tuple[Path, str]] = {}
    made["zip-bomb-1.1GB"] = (
        zip_bomb(folder / "bomb.xlsx", "xl/worksheets/sheet1.xml", 1100 * 2**20),
        "zip bomb",
    )
    made["ratio-bomb"] = (
        zip_bomb(folder / "ratio.xlsx", "xl/sharedStrings.xml", 64 * 2**20),
        "fold",
    )
    made["billion-laughs"] = (
        _with_part(folder / "laughs.xlsx", "xl/worksheets/sheet1.xml", LAUGHS),
        "document type",
    )
    made["quadratic-blowup"] = (
        _with_part(folder / "quadratic.xlsx", "xl/sharedStrings.xml", QUADRATIC),
        "document type",
    )
    made["external-entity"] = (
        _with_part(folder / "xxe.xlsx", "xl/workbook.xml", EXTERNAL),
        "document type",
    )
    padded = "<?xml version='1.0'?><!--" + " " * 70_000 + "-->" + LAUGHS.split("\n", 1)[1]
    made["doctype-behind-comment"] = (
        _with_part(folder / "padded.xlsx", "xl/worksheets/sheet1.xml", padded),
        "before its first element",
    )
    made["doctype-in-utf16"] = (
        _with_part(
            folder / "utf16.xlsx",
            "xl/worksheets/sheet1.xml",
            LAUGHS.replace('version="1.0"', 'version="1.0" encoding="UTF-16"').encode("utf-16"),
        ),
        "document type",
    )
    made["encrypted"] = (
        compound_file(
            folder / "protected.xlsx",
            {"EncryptionInfo": b"\4\0\4\0", "EncryptedPackage": b"\0" * 9},
        ),
        "password-protected",
    )
    made["legacy-xls"] = (
        compound_file(folder / "legacy.xls", {"Workbook": b"\x09\x08\x10\x00"}),
        "legacy Excel 97-2003",
    )
    made["xlsb"] = (
        write_package(
            folder / "binary.xlsb", {"[Content_Types].xml": "<Types/>", "xl/workbook.bin": b"\x83"}
        ),
        "binary workbook (.xlsb)",
    )
    made["ods"] = (
        write_package(
            folder / "calc.ods",
            {"mimetype": "application/vnd.oasis.opendocument.spreadsheet", "content.xml": "<x/>"},
        ),
        "OpenDocument",
    )
    csv = folder / "export.xlsx"
    csv.write_text("conc,response\n1,0.12\n2,0.25 µg/L\n", encoding="utf-8")
    made["csv-renamed"] = (csv, "plain text")
    empty = folder / "empty.xlsx"
    empty.write_bytes(b"")
    made["empty"] = (empty, "empty")
    data = GOOD.read_bytes()
    for name, cut in (("truncated-head", 40), ("truncated-half", len(data) // 2)):
        (folder / f"{name}.xlsx").write_bytes(data[:cut])
        made[name] = (folder / f"{name}.xlsx", "truncated")
    made["corrupted-member"] = (_corrupt_member(folder / "corrupt.xlsx"), "damaged")
    made["not-xml"] = (
        _with_part(folder / "garbage.xlsx", "xl/worksheets/sheet1.xml", b"\x00\xffnot xml"),
        "not well-formed",
    )
    return made


def _corrupt_member(path: Path) -> Path:
    """A real workbook whose sheet data bytes are overwritten: the central directory is intact,
    the CRC (or the deflate stream) is not."""
    data = bytearray(GOOD.read_bytes())
    with zipfile.ZipFile(GOOD) as archive:
        info = archive.getinfo("xl/worksheets/sheet1.xml")
    start = info.header_offset + 30 + len(info.filename.encode()) + len(info.extra)
    for offset in range(start + 20, start + info.compress_size - 20, 7):
        data[offset] ^= 0x5A
    path.write_bytes(bytes(data))
    return path


@pytest.fixture(scope="module")
def hostile(tmp_path_factory: pytest.TempPathFactory) -> dict[str, tuple[Path, str]]:
    return _make_all(tmp_path_factory.mktemp("hostile"))


CASES = [
    "zip-bomb-1.1GB", "ratio-bomb", "billion-laughs", "quadratic-blowup", "external-entity",
    "doctype-behind-comment", "doctype-in-utf16", "encrypted", "legacy-xls", "xlsb", "ods",
    "csv-renamed", "empty", "truncated-head", "truncated-half", "corrupted-member", "not-xml",
]  # fmt: skip


@pytest.mark.parametrize("case", CASES)
def test_hostile_file_is_refused_with_its_reason(
    hostile: dict[str, tuple[Path, str]], case: str
) -> None:
    path, words = hostile[case]
    with pytest.raises(UnreadableWorkbook) as caught:
        read_workbook(path)
    message = str(caught.value)
    assert words in message
    assert path.name in message


@pytest.mark.parametrize("case", CASES)
def test_the_reference_reader_refuses_it_too(
    hostile: dict[str, tuple[Path, str]], case: str
) -> None:
    """openpyxl parses through defusedxml: entity tricks fail there as well."""
    path, _words = hostile[case]
    with pytest.raises(UnreadableWorkbook):
        read_workbook(path, engine="openpyxl")


def test_no_secret_leaks_into_the_reason(hostile: dict[str, tuple[Path, str]]) -> None:
    hostname = Path("/etc/hostname").read_text().strip() if Path("/etc/hostname").exists() else ""
    result = audit_workbook(hostile["external-entity"][0], load_policy("general"))
    assert result.status == "unreadable"
    assert not hostname or hostname not in (result.error or "")


# VmHWM is the peak resident size of this process's own memory map; ru_maxrss would carry over
# the parent's peak through fork and exec.
_MEASURE = """
import json, re, sys
from auditor.errors import UnreadableWorkbook
from auditor.read.open import read_workbook
outcomes = []
for engine in ("stream", "openpyxl"):
    for path in sys.argv[1:]:
        try:
            read_workbook(path, engine=engine)
            outcomes.append("read")
        except UnreadableWorkbook:
            outcomes.append("refused")
status = open("/proc/self/status").read()
peak_kb = int(re.search(r"VmHWM:\\s+(\\d+) kB", status).group(1))
print(json.dumps({"outcomes": outcomes, "peak_mb": peak_kb / 1024}))
"""


def test_bombs_are_refused_with_bounded_memory(hostile: dict[str, tuple[Path, str]]) -> None:
    """Peak memory of a fresh process that meets every bomb, with both readers: the central
    directory and the XML guard stop them before anything large exists (limit: 100 MB, the
    issue's figure; a Python with openpyxl imported needs about 40)."""
    names = ["zip-bomb-1.1GB", "ratio-bomb", "billion-laughs", "quadratic-blowup"]
    paths = [str(hostile[name][0]) for name in names]
    done = subprocess.run(
        [sys.executable, "-c", _MEASURE, *paths],
        capture_output=True,
        text=True,
        check=True,
        cwd=ROOT,
    )
    report = json.loads(done.stdout)
    assert report["outcomes"] == ["refused"] * (2 * len(paths))
    assert report["peak_mb"] < 100


def test_macros_are_data_only(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """An .xlsm is read as worksheet XML: its VBA part is never opened, let alone run."""
    project = tmp_path / "vbaProject.bin"
    project.write_bytes(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + b"Attribute VB_Name AutoOpen" * 20)
    path = tmp_path / "with_macro.xlsm"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Data")
    for row, (x, y) in enumerate([(1, 2.0), (2, 4.1), (3, 5.9), (4, 8.2), (5, 9.9)], start=1):
        sheet.write_number(row, 0, x)
        sheet.write_number(row, 1, y)
    sheet.write_formula("D2", "=SLOPE(B2:B6,A2:A6)", None, 1.97)
    book.add_vba_project(str(project))
    book.close()
    opened: list[str] = []
    original = zipfile.ZipFile.open

    def recording_open(
        self: zipfile.ZipFile, name: object, *args: object, **kwargs: object
    ) -> object:
        opened.append(name if isinstance(name, str) else getattr(name, "filename", "?"))
        return original(self, name, *args, **kwargs)  # type: ignore[arg-type]

    monkeypatch.setattr(zipfile.ZipFile, "open", recording_open)
    result = audit_workbook(path, load_policy("general"))
    assert result.status == "audited"
    assert "xl/worksheets/sheet1.xml" in opened
    assert not [name for name in opened if "vba" in name.lower()]


def test_a_batch_goes_on_past_every_hostile_file(
    hostile: dict[str, tuple[Path, str]], tmp_path: Path
) -> None:
    good = tmp_path / GOOD.name
    shutil.copyfile(GOOD, good)
    paths = [hostile[case][0] for case in CASES] + [good]
    before = {p: hashlib.sha256(p.read_bytes()).hexdigest() for p in paths}
    results = audit_batch(paths, load_policy("general"), jobs=1)
    statuses = {Path(r.path).name: (r.status, r.error) for r in results}
    assert statuses[good.name][0] == "audited"
    for case in CASES:
        status, error = statuses[hostile[case][0].name]
        assert status == "unreadable" and error and hostile[case][1] in error, case
    assert {p: hashlib.sha256(p.read_bytes()).hexdigest() for p in paths} == before


@pytest.mark.optional
def test_real_legacy_and_opendocument_files(tmp_path: Path) -> None:
    """The same refusals on files LibreOffice itself writes in the legacy and ODF formats."""
    soffice = shutil.which("soffice")
    if soffice is None:
        pytest.skip("LibreOffice (soffice) is not installed")
    source = tmp_path / "source.xlsx"
    shutil.copyfile(GOOD, source)
    for target in ("xls", "ods"):
        subprocess.run(
            [soffice, f"-env:UserInstallation=file://{tmp_path}/profile-{target}", "--headless",
             "--convert-to", target, "--outdir", str(tmp_path / target), str(source)],
            check=True, capture_output=True, timeout=180,
        )  # fmt: skip
    legacy = tmp_path / "xls" / "source.xls"
    opendoc = tmp_path / "ods" / "source.ods"
    for path, words in ((legacy, "legacy Excel 97-2003"), (opendoc, "OpenDocument")):
        renamed = path.with_suffix(".xlsx")
        shutil.copyfile(path, renamed)
        with pytest.raises(UnreadableWorkbook, match=words):
            read_workbook(renamed)
