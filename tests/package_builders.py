"""Hand-made files for the reader's tests: xlsx packages written part by part, an OLE compound
file, a zip bomb. Everything here is written byte by byte from the published formats (ECMA-376
for the package, MS-CFB for the compound file, APPNOTE for zip), not through a spreadsheet
library, so the tests can say exactly what the file holds."""

from __future__ import annotations

import struct
import zipfile
import zlib
from pathlib import Path

MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
PKG = "http://schemas.openxmlformats.org/package/2006/relationships"
DECL = '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'


def sheet_xml(rows: str, tail: str = "") -> str:
    return (
        f'{DECL}<worksheet xmlns="{MAIN}" xmlns:r="{REL}">'
        f"<sheetData>{rows}</sheetData>{tail}</worksheet>"
    )


def package_parts(
    sheets: dict[str, str],
    shared_strings: list[str] | None = None,
    styles: str | None = None,
    defined_names: str = "",
) -> dict[str, str | bytes]:
    """The parts of a minimal workbook: ``sheets`` maps sheet names to worksheet XML."""
    sheet_list = "".join(
        f'<sheet name="{name}" sheetId="{i}" r:id="rId{i}"/>'
        for i, name in enumerate(sheets, start=1)
    )
    rels = "".join(
        f'<Relationship Id="rId{i}" Type="{REL}/worksheet" Target="worksheets/sheet{i}.xml"/>'
        for i in range(1, len(sheets) + 1)
    )
    parts: dict[str, str | bytes] = {
        "[Content_Types].xml": _content_types(len(sheets), shared_strings is not None, styles),
        "_rels/.rels": (
            f'{DECL}<Relationships xmlns="{PKG}"><Relationship Id="rId1" '
            f'Type="{REL}/officeDocument" Target="xl/workbook.xml"/></Relationships>'
        ),
        "xl/workbook.xml": (
            f'{DECL}<workbook xmlns="{MAIN}" xmlns:r="{REL}"><sheets>{sheet_list}</sheets>'
            f"{defined_names}</workbook>"
        ),
    }
    extra = ""
    if shared_strings is not None:
        items = "".join(
            s if s.startswith("<si>") else f"<si><t>{s}</t></si>" for s in shared_strings
        )
        parts["xl/sharedStrings.xml"] = (
            f'{DECL}<sst xmlns="{MAIN}" count="{len(shared_strings)}">{items}</sst>'
        )
        extra += f'<Relationship Id="rIdS" Type="{REL}/sharedStrings" Target="sharedStrings.xml"/>'
    if styles is not None:
        parts["xl/styles.xml"] = f'{DECL}<styleSheet xmlns="{MAIN}">{styles}</styleSheet>'
        extra += f'<Relationship Id="rIdT" Type="{REL}/styles" Target="styles.xml"/>'
    parts["xl/_rels/workbook.xml.rels"] = (
        f'{DECL}<Relationships xmlns="{PKG}">{rels}{extra}</Relationships>'
    )
    for i, xml in enumerate(sheets.values(), start=1):
        parts[f"xl/worksheets/sheet{i}.xml"] = xml
    return parts


def _content_types(sheets: int, strings: bool, styles: str | None) -> str:
    sml = "application/vnd.openxmlformats-officedocument.spreadsheetml."
    overrides = [("/xl/workbook.xml", "sheet.main+xml")]
    overrides += [(f"/xl/worksheets/sheet{i}.xml", "worksheet+xml") for i in range(1, sheets + 1)]
    if strings:
        overrides.append(("/xl/sharedStrings.xml", "sharedStrings+xml"))
    if styles is not None:
        overrides.append(("/xl/styles.xml", "styles+xml"))
    body = "".join(f'<Override PartName="{n}" ContentType="{sml}{t}"/>' for n, t in overrides)
    return (
        f'{DECL}<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
        '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.'
        'relationships+xml"/><Default Extension="xml" ContentType="application/xml"/>'
        f"{body}</Types>"
    )


def write_package(path: Path, parts: dict[str, str | bytes]) -> Path:
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, data in parts.items():
            archive.writestr(name, data.encode("utf-8") if isinstance(data, str) else data)
    return path


def read_parts(path: Path) -> dict[str, bytes]:
    with zipfile.ZipFile(path) as archive:
        return {name: archive.read(name) for name in archive.namelist()}


def zip_bomb(path: Path, member: str, declared_bytes: int) -> Path:
    """A zip whose ``member`` really inflates to ``declared_bytes`` zero bytes (a few MB on
    disk). Built from one deflate block repeated: after a full flush every megabyte of zeros
    compresses to the same bytes, so nothing of that size is ever held in memory."""
    chunk = bytes(1 << 20)
    squeeze = zlib.compressobj(9, zlib.DEFLATED, -15)
    squeeze.compress(chunk)
    squeeze.flush(zlib.Z_FULL_FLUSH)
    unit = squeeze.compress(chunk) + squeeze.flush(zlib.Z_FULL_FLUSH)
    count = declared_bytes // len(chunk)
    crc = 0
    for _ in range(count):
        crc = zlib.crc32(chunk, crc)
    finish = zlib.compressobj(9, zlib.DEFLATED, -15).flush(zlib.Z_FINISH)  # an empty last block
    body = unit * count + finish
    size = count * len(chunk)
    name = member.encode()
    # The sizes go in ZIP64 extra fields (APPNOTE 4.5.3), which hold any size, so the same
    # writer serves declared sizes below and above 4 GB.
    local_extra = struct.pack("<HHQQ", 1, 16, size, len(body))
    local = struct.pack(
        "<IHHHHHIIIHH", 0x04034B50, 45, 0, 8, 0, 0, crc, 0xFFFFFFFF, 0xFFFFFFFF, len(name),
        len(local_extra),
    ) + name + local_extra  # fmt: skip
    central_extra = struct.pack("<HHQQQ", 1, 24, size, len(body), 0)
    central = struct.pack(
        "<IHHHHHHIIIHHHHHII", 0x02014B50, 45, 45, 0, 8, 0, 0, crc, 0xFFFFFFFF, 0xFFFFFFFF,
        len(name), len(central_extra), 0, 0, 0, 0, 0xFFFFFFFF,
    ) + name + central_extra  # fmt: skip
    offset = len(local) + len(body)
    zip64_end = struct.pack("<IQHHIIQQQQ", 0x06064B50, 44, 45, 45, 0, 0, 1, 1, len(central), offset)
    locator = struct.pack("<IIQI", 0x07064B50, 0, offset + len(central), 1)
    end = struct.pack("<IHHHHIIH", 0x06054B50, 0, 0, 1, 1, len(central), 0xFFFFFFFF, 0)
    path.write_bytes(local + body + central + zip64_end + locator + end)
    return path


def compound_file(path: Path, streams: dict[str, bytes]) -> Path:
    """An OLE compound file (MS-CFB version 3, 512-byte sectors) holding ``streams`` (at most
    three, each padded to 4,096 bytes so that none goes to the mini stream)."""
    sector = 512
    free, end_chain, fat_sect = 0xFFFFFFFF, 0xFFFFFFFE, 0xFFFFFFFD
    bodies = [data.ljust(4096, b"\0") for data in streams.values()]
    fat = [fat_sect, end_chain]  # sector 0 holds the FAT, sector 1 the directory
    starts = []
    for body in bodies:
        first = len(fat)
        count = len(body) // sector
        starts.append(first)
        fat.extend(list(range(first + 1, first + count)) + [end_chain])
    fat.extend([free] * (sector // 4 - len(fat)))

    def entry(name: str, kind: int, child: int, right: int, start: int, size: int) -> bytes:
        encoded = (name + "\0").encode("utf-16-le") if name else b""
        return (
            encoded.ljust(64, b"\0")
            + struct.pack("<HBB", len(encoded), kind, 1)
            + struct.pack("<III", free, right, child)
            + bytes(16 + 4 + 16)
            + struct.pack("<IQ", start, size)
        )

    names = list(streams)
    directory = entry("Root Entry", 5, 1 if names else free, free, end_chain, 0)
    for i, name in enumerate(names):
        right = i + 2 if i + 1 < len(names) else free
        directory += entry(name, 2, free, right, starts[i], len(streams[name]))
    directory = directory.ljust(sector, b"\0")
    header = (
        b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"  # signature
        + bytes(16)  # class id
        + struct.pack("<HHHHH", 0x3E, 3, 0xFFFE, 9, 6)  # versions, byte order, sector shifts
        + bytes(6)
        # directory sectors (0 in version 3), FAT sectors, first directory sector, transaction,
        # mini stream cut-off, first mini FAT sector, mini FAT sectors, first DIFAT, DIFAT sectors
        + struct.pack("<9I", 0, 1, 1, 0, 4096, end_chain, 0, end_chain, 0)
        + struct.pack("<109I", 0, *([free] * 108))  # the FAT is sector 0
    )
    assert len(header) == sector
    path.write_bytes(header + struct.pack(f"<{sector // 4}I", *fat) + directory + b"".join(bodies))
    return path
