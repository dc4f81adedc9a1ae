"""The container check: what a file is, judged from its first bytes and its zip central
directory, before anything is inflated.

A zip bomb is refused on what it declares (total and per-member uncompressed size, member count,
inflation ratio above a floor for small parts); zipfile then stops every member at its declared
size, so a member that lies cannot inflate further. Files that are not xlsx packages (an OLE
compound file: a legacy .xls or a password-protected workbook; .xlsb; .ods; text such as a
renamed CSV; an empty or truncated file) are named for what they are, with what to do.
"""

from __future__ import annotations

import zipfile
from pathlib import Path

from auditor.errors import UnreadableWorkbook

# Limits against hostile containers (checked on the central directory, before inflating).
# A 1,048,576-row sheet of numbers is about 100 MB of XML; 1 GB declared is refused.
MAX_TOTAL_UNCOMPRESSED = 1_000_000_000
MAX_MEMBERS = 10_000
MAX_RATIO = 200.0  # real sheet XML deflates 5-50 fold
RATIO_FLOOR_BYTES = 10 * 1024**2  # small parts may compress better; only large ones are judged


def _compound_streams(path: Path) -> bytes:
    """The first directory sector of an OLE compound file (MS-CFB): it names the streams that
    tell a password-protected xlsx (EncryptionInfo, EncryptedPackage) from a legacy .xls
    (Workbook or Book). Empty when the header does not make sense."""
    with open(path, "rb") as handle:
        header = handle.read(512)
        if len(header) < 512:
            return b""
        shift = int.from_bytes(header[30:32], "little")
        first_directory = int.from_bytes(header[48:52], "little")
        if not 7 <= shift <= 16 or first_directory >= 0xFFFFFFFA:
            return b""
        handle.seek((first_directory + 1) << shift)
        return handle.read(1 << shift)


def _looks_like_text(head: bytes) -> bool:
    try:
        text = head[:2048].decode("utf-8")
    except UnicodeDecodeError as exc:
        if exc.start < len(head[:2048]) - 4:  # not just a character cut at the end
            return False
        text = head[: exc.start].decode("utf-8")
    return bool(text) and all(ch.isprintable() or ch in "\t\r\n" for ch in text)


def _describe_non_zip(head: bytes, path: Path) -> str:
    if head.startswith(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"):
        streams = _compound_streams(path)
        if "EncryptedPackage".encode("utf-16-le") in streams:
            return (
                f"{path.name} is password-protected, so its contents cannot be read. Ask the "
                "author for a copy without the password, or open it with the password, clear "
                "it (File > Info > Protect Workbook > Encrypt with Password), save the copy "
                "as .xlsx under a new name, and audit the copy"
            )
        if any(name.encode("utf-16-le") in streams for name in ("Workbook", "Book")):
            return (
                f"{path.name} is a legacy Excel 97-2003 workbook (.xls), not an xlsx package; "
                "open it and save it as .xlsx, then audit the copy"
            )
        return (
            f"{path.name} is either a legacy Excel 97-2003 workbook or a password-protected "
            "one, so its contents cannot be read. Open it (with the password, if asked), save "
            "a copy as .xlsx without a password, and audit the copy"
        )
    if not head:
        return f"{path.name} is empty (0 bytes); ask for a fresh copy"
    text = head.lstrip()
    if text.startswith((b"<?xml", b"<html", b"<HTML", b"<!DOCTYPE")):
        return f"{path.name} is an XML or HTML text file, not an xlsx package; save it as .xlsx"
    if _looks_like_text(head):
        return (
            f"{path.name} is plain text (perhaps a CSV renamed to .xlsx), not an xlsx package; "
            "open it in a spreadsheet and save it as .xlsx"
        )
    return (
        f"{path.name} is not a zip container, so not an xlsx package (it may be damaged or "
        "truncated at the start); ask for a fresh copy"
    )


def check_container(path: Path) -> None:
    """Inspect the zip central directory before anything is inflated."""
    open_container(path).close()


def open_container(path: Path) -> zipfile.ZipFile:
    """The package at ``path``, open for reading (the caller closes it), once its zip central
    directory has passed :func:`check_container`'s checks: the reader reads the directory once."""
    with open(path, "rb") as handle:
        head = handle.read(2048)
    if not head.startswith(b"PK"):
        raise UnreadableWorkbook(_describe_non_zip(head, path))
    try:
        archive = zipfile.ZipFile(path)
    # A damaged central directory can also hold a name that is not the UTF-8 its flag says,
    # claim a zip version from the future, or point past the end of the file.
    except (zipfile.BadZipFile, UnicodeDecodeError, NotImplementedError, OSError, EOFError) as exc:
        raise UnreadableWorkbook(
            f"{path.name} is a damaged or truncated zip container ({exc}); "
            "ask for a fresh copy of the file"
        ) from exc
    try:
        _check_members(path, archive.infolist())
    except BaseException:
        archive.close()
        raise
    return archive


def _check_members(path: Path, members: list[zipfile.ZipInfo]) -> None:
    if len(members) > MAX_MEMBERS:
        raise UnreadableWorkbook(
            f"{path.name} holds {len(members):,} parts (limit {MAX_MEMBERS:,}); refused as unsafe"
        )
    total = sum(m.file_size for m in members)
    if total >= MAX_TOTAL_UNCOMPRESSED:
        raise UnreadableWorkbook(
            f"{path.name} declares {total / 1e9:,.1f} GB once unpacked (limit "
            f"{MAX_TOTAL_UNCOMPRESSED / 1e9:.0f} GB); refused as a possible zip bomb or a file too "
            "large to audit"
        )
    for member in members:
        if member.file_size > RATIO_FLOOR_BYTES:
            ratio = member.file_size / max(member.compress_size, 1)
            if ratio > MAX_RATIO:
                raise UnreadableWorkbook(
                    f"{path.name}: part {member.filename!r} inflates {ratio:,.0f}-fold "
                    f"(limit {MAX_RATIO:.0f}); refused as a possible zip bomb"
                )
        if member.flag_bits & 0x1:
            raise UnreadableWorkbook(
                f"{path.name}: part {member.filename!r} is encrypted at the zip level, which no "
                "spreadsheet application writes; ask for an unprotected .xlsx"
            )
        if member.compress_type not in (zipfile.ZIP_STORED, zipfile.ZIP_DEFLATED):
            raise UnreadableWorkbook(
                f"{path.name}: part {member.filename!r} uses zip compression method "
                f"{member.compress_type}, which xlsx files never use; re-save it as .xlsx"
            )
    names = {m.filename for m in members}
    if "xl/workbook.bin" in names:
        raise UnreadableWorkbook(
            f"{path.name} is a binary workbook (.xlsb); save it as .xlsx and audit the copy"
        )
    if "content.xml" in names and "mimetype" in names:
        raise UnreadableWorkbook(
            f"{path.name} is an OpenDocument spreadsheet (.ods); save it as .xlsx"
        )
    for part, kind in (("word/document.xml", "a Word"), ("ppt/presentation.xml", "a PowerPoint")):
        if part in names:
            raise UnreadableWorkbook(f"{path.name} is {kind} document, not a workbook")
    if "xl/workbook.xml" not in names:
        raise UnreadableWorkbook(
            f"{path.name} is a zip file but not an xlsx workbook (no xl/workbook.xml); if it "
            "is an archive of workbooks, unpack it and audit the folder"
        )
