"""Waivers: a team accepts one finding, with a reason, a name and a date.

The waivers live in a TOML file beside the workbooks (``regaudit-waivers.toml`` at the audited
root), committed with them, one table per waiver::

    [[waiver]]
    identity = "3f9a1c0e5b2d7a48"      # the finding's "identity" in audit.json / audit.sarif
    reason = "Pasted value agreed with the rerun of 2024-05-02; kept for the signed record."
    name = "A. Reviewer"
    date = 2024-05-03
    workbook = "lab_recovery.xlsx"     # the next three are for the reader; matching uses identity
    cell = "Recovery!E4"
    check = "stat-recompute"

A waived finding stays in every report, marked with its waiver, and no longer counts for
``--fail-on``. A waiver whose finding has gone is reported as unused, so the file does not rot.
"""

from __future__ import annotations

import datetime as dt
import json
import re
import tomllib
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from auditor.errors import UsageError
from auditor.model import AuditResult, Finding
from auditor.report.output import atomic_output

WAIVER_FILENAME = "regaudit-waivers.toml"
_IDENTITY = re.compile(r"^[0-9a-f]{16}$")
_REQUIRED = ("identity", "reason", "name", "date")
_KNOWN = (*_REQUIRED, "workbook", "cell", "check")


@dataclass(frozen=True)
class Waiver:
    identity: str
    reason: str
    name: str
    date: str  # ISO 8601 calendar date, YYYY-MM-DD
    workbook: str = ""
    cell: str = ""
    check: str = ""

    @property
    def note(self) -> str:
        """What a report shows beside a waived finding (``Finding.waived``)."""
        return f"{self.reason} (accepted by {self.name} on {self.date})"


def default_waiver_file(root: Path) -> Path:
    return Path(root) / WAIVER_FILENAME


def check_identity(identity: str) -> str:
    """The identity in canonical form, or a UsageError saying where to find a real one."""
    cleaned = identity.strip().lower()
    if not _IDENTITY.match(cleaned):
        raise UsageError(
            f"identity {identity!r} is not a finding identity (16 hexadecimal digits); copy it "
            "from the 'identity' of the finding in audit.json or audit.sarif"
        )
    return cleaned


def check_date(value: Any, origin: str = "date") -> str:
    """A TOML date, or text in YYYY-MM-DD form, as ISO text."""
    if isinstance(value, dt.datetime):
        return value.date().isoformat()
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, str):
        try:
            return dt.date.fromisoformat(value.strip()).isoformat()
        except ValueError:
            pass
    raise UsageError(f"{origin} {value!r} is not a date; write it as YYYY-MM-DD, e.g. 2024-05-03")


def _entry(raw: Any, origin: str) -> Waiver:
    if not isinstance(raw, dict):
        raise UsageError(f"{origin} is not a table; write each waiver as a [[waiver]] table")
    missing = [key for key in _REQUIRED if key not in raw]
    if missing:
        raise UsageError(f"{origin} lacks {', '.join(missing)}; every waiver needs {_REQUIRED}")
    unknown = sorted(set(raw) - set(_KNOWN))
    if unknown:
        raise UsageError(f"{origin}: unknown key {unknown[0]!r}; allowed keys are {_KNOWN}")
    for key in ("reason", "name"):
        if not isinstance(raw[key], str) or not raw[key].strip():
            raise UsageError(f"{origin}: {key} {raw[key]!r} must be non-empty text")
    return Waiver(
        identity=check_identity(str(raw["identity"])),
        reason=raw["reason"].strip(),
        name=raw["name"].strip(),
        date=check_date(raw["date"], f"{origin}: date"),
        workbook=str(raw.get("workbook", "")),
        cell=str(raw.get("cell", "")),
        check=str(raw.get("check", "")),
    )


def parse_waivers(text: str, origin: str) -> list[Waiver]:
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise UsageError(f"waiver file {origin!r} is not valid TOML: {exc}") from exc
    unknown = sorted(set(data) - {"waiver"})
    if unknown:
        raise UsageError(
            f"waiver file {origin!r}: unknown table {unknown[0]!r}; use [[waiver]] tables only"
        )
    entries = data.get("waiver", [])
    if not isinstance(entries, list):
        raise UsageError(f"waiver file {origin!r}: write [[waiver]] (an array of tables)")
    waivers = [
        _entry(raw, f"waiver file {origin!r}: [[waiver]] number {n}")
        for n, raw in enumerate(entries, start=1)
    ]
    seen: dict[str, int] = {}
    for number, waiver in enumerate(waivers, start=1):
        if waiver.identity in seen:
            raise UsageError(
                f"waiver file {origin!r}: [[waiver]] number {number} repeats identity "
                f"{waiver.identity!r} of number {seen[waiver.identity]}; keep one of them"
            )
        seen[waiver.identity] = number
    return waivers


def load_waivers(path: Path, required: bool = False) -> list[Waiver]:
    """The waivers in ``path``; a missing file is no waivers unless ``required``."""
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError as exc:
        if not required:
            return []
        raise UsageError(f"waiver file {str(path)!r} does not exist") from exc
    except (OSError, UnicodeDecodeError) as exc:
        raise UsageError(f"waiver file {str(path)!r} cannot be read: {exc}") from exc
    return parse_waivers(text, str(path))


def apply_waivers(result: AuditResult, waivers: Iterable[Waiver]) -> list[Waiver]:
    """Mark the waived findings of ``result`` (in place); return the waivers that matched none.

    Findings must carry their identity already (``identity.assign_identities``).
    """
    by_identity = {waiver.identity: waiver for waiver in waivers}
    used: set[str] = set()
    for finding in result.all_findings():
        waiver = by_identity.get(finding.identity)
        if waiver is not None:
            finding.waived = waiver.note
            finding.decision = {
                "decision": "waived",
                "reason": waiver.reason,
                "name": waiver.name,
                "date": waiver.date,
            }
            used.add(waiver.identity)
    return [waiver for identity, waiver in by_identity.items() if identity not in used]


def counts_for_gate(finding: Finding) -> bool:
    """Whether ``finding`` may fail the run under ``--fail-on``: waived findings never do."""
    return finding.waived is None


def _toml_string(text: str) -> str:
    # A JSON string is a TOML basic string, except that TOML also forbids a raw DEL character.
    return json.dumps(text, ensure_ascii=False).replace("\x7f", "\\u007F")


def render_waiver(waiver: Waiver) -> str:
    """One ``[[waiver]]`` table, ready to append to a waiver file."""
    lines = ["[[waiver]]", f"identity = {_toml_string(waiver.identity)}"]
    lines += [f"reason = {_toml_string(waiver.reason)}", f"name = {_toml_string(waiver.name)}"]
    lines.append(f"date = {waiver.date}")  # a TOML local date, not text
    for key in ("workbook", "cell", "check"):
        value = getattr(waiver, key)
        if value:
            lines.append(f"{key} = {_toml_string(value)}")
    return "\n".join(lines) + "\n"


def add_waiver(path: Path, waiver: Waiver, inputs: Iterable[Path | str] = ()) -> None:
    """Append ``waiver`` to the file at ``path`` (created if missing), atomically.

    The existing text is kept as it is, comments included; the new table goes at the end.
    A second waiver for the same identity is refused rather than silently doubled.
    """
    path = Path(path)
    existing = path.read_text(encoding="utf-8") if path.exists() else ""
    for earlier in parse_waivers(existing, str(path)) if existing else []:
        if earlier.identity == waiver.identity:
            raise UsageError(
                f"finding {waiver.identity!r} is already waived in {str(path)!r} by "
                f"{earlier.name} on {earlier.date}; edit that entry to change it"
            )
    if existing.strip():
        text = existing.rstrip("\n") + "\n\n" + render_waiver(waiver)
    else:
        text = "# Findings accepted by the team (regaudit waive).\n\n" + render_waiver(waiver)
    parse_waivers(text, str(path))  # never write a file that would not load again
    path.parent.mkdir(parents=True, exist_ok=True)
    with atomic_output(path, inputs) as handle:
        handle.write(text.encode("utf-8"))


def new_waiver(
    identity: str, reason: str, name: str, date: str | None = None, **about: str
) -> Waiver:
    """A checked waiver dated today unless ``date``; ``about`` fills workbook, cell and check."""
    for label, text in (("reason", reason), ("name", name)):
        if not text.strip():
            raise UsageError(f"the waiver's {label} {text!r} is empty; say why and who accepts it")
    return Waiver(
        identity=check_identity(identity),
        reason=reason.strip(),
        name=name.strip(),
        date=check_date(date) if date else dt.date.today().isoformat(),
        **about,
    )


def waiver_for(
    finding: Finding, workbook: str, reason: str, name: str, date: str | None = None
) -> Waiver:
    """A waiver of ``finding`` (which carries its identity), dated today unless ``date``."""
    if not finding.identity:
        raise ValueError("assign identities (auditor.review.identity.assign_identities) first")
    cell = finding.cells[0] if finding.cells else ""
    return new_waiver(
        finding.identity, reason, name, date, workbook=workbook, cell=cell, check=finding.check
    )


def find_findings(
    result: AuditResult, workbook: str, cell: str, check: str | None = None
) -> list[Finding]:
    """Findings of ``workbook`` (its path as audited, or its file name) whose cells name ``cell``.

    ``cell`` is written ``Sheet!A1`` as the reports show it (``$`` and a quoted sheet name are
    accepted too); ``check`` narrows the choice when several checks report the same cell.
    """
    wanted = normalise_cell(cell)
    matches: list[Finding] = []
    for audited in result.workbooks:
        if workbook not in (audited.path, Path(audited.path).name, Path(audited.path).as_posix()):
            continue
        for finding in audited.all_findings():
            if check is not None and finding.check != check:
                continue
            if wanted in (normalise_cell(c) for c in finding.cells):
                matches.append(finding)
    return matches


def normalise_cell(cell: str) -> str:
    """``'My Sheet'!$E$4`` -> ``My Sheet!E4`` (how findings name their cells)."""
    sheet, bang, address = cell.strip().rpartition("!")
    if sheet.startswith("'") and sheet.endswith("'") and len(sheet) >= 2:
        sheet = sheet[1:-1].replace("''", "'")
    return f"{sheet}{bang}{address.replace('$', '').upper()}"


def choose_finding(
    result: AuditResult, workbook: str, cell: str, check: str | None = None
) -> Finding:
    """The one finding ``regaudit waive --workbook --cell [--check]`` means, or a UsageError
    that lists what is there, so the user can say which."""
    matches = find_findings(result, workbook, cell, check)
    if len(matches) == 1:
        return matches[0]
    where = f"{cell!r} of {workbook!r}" + (f" from check {check!r}" if check else "")
    if not matches:
        present = [f for w in result.workbooks for f in w.all_findings()]
        listing = "; ".join(f"{f.cells[0] if f.cells else '-'} {f.check}" for f in present[:12])
        raise UsageError(f"no finding at {where}; findings in this workbook: {listing or 'none'}")
    listing = ", ".join(sorted({f.check for f in matches}))
    raise UsageError(f"{len(matches)} findings at {where} ({listing}); add --check to pick one")
