"""The stable identity of a finding: what a baseline entry and a waiver refer to.

A finding must keep its identity when rows are inserted above its block, when the block moves,
or when the numbers change, and lose it when its formula is rewritten. Its key is

    workbook path relative to the audited root │ sheet │ check id │ anchor

where the anchor is the first of these that applies to the finding's first cell:

    a reported statistic with a formula   statistic key + the formula in relative R1C1 form
    (of any regression of the workbook)
    a typed reported statistic            statistic key + "constant"
    a cell whose formula the finding      "formula:" + that formula in relative R1C1 form
    quotes (evidence["formula"])
    another cell                          its offset from the anchor statistic of its
                                          regression (or of the first one on its sheet),
                                          + that statistic's key and R1C1 formula
    none of these                         the cell as written (nothing steadier is known)

Relative R1C1 is what makes a formula independent of where it sits: ``=E4/E10`` in E11 and
``=E14/E20`` in E21 are both ``=R[-7]C/R[-1]C``. That is also why two blocks copied side by side
can give equal keys; equal keys in one workbook are numbered in document order (``#2``, ``#3``).
The identity shown to users is the first 16 hex digits of the key's SHA-256: short enough to
copy into ``regaudit waive --identity``, 64 bits against accidental collisions.
"""

from __future__ import annotations

import hashlib
import os
import re
from collections.abc import Iterable, Sequence
from pathlib import Path

from auditor.errors import FormulaError
from auditor.formula.operands import parse_a1
from auditor.formula.r1c1 import r1c1_text, to_r1c1
from auditor.grid import A1_CELL, column_index, on_grid, split_cell
from auditor.model import (
    AuditResult,
    Finding,
    RegressionResult,
    ReportedValue,
    WorkbookResult,
    stat_base,
)

IDENTITY_DIGITS = 16
SEPARATOR = "\x1f"  # the ASCII unit separator: cannot occur in a path, sheet name or check id

_BOOKS = (".xlsx", ".xlsm")
_COLUMNS = re.compile(r"^(\$?)([A-Za-z]{1,3}):(\$?)([A-Za-z]{1,3})$")
_ROWS = re.compile(r"^(\$?)([0-9]+):(\$?)([0-9]+)$")
# Statistics tried in turn as the anchor of a regression's other cells: the slope first, since
# every regression reports it and its formula names both data ranges.
_ANCHOR_ORDER = ("slope", "intercept", "residual_sd", "r_squared", "se_slope", "t_slope")


def audit_root(inputs: Iterable[str | Path]) -> Path:
    """The folder identities are relative to: the common folder of the inputs.

    A folder input counts as itself and a file as its parent, so ``audit book.xlsx`` and
    ``audit .`` in the same folder give the same identities; an input that no longer exists
    counts as a file when its name ends in .xlsx or .xlsm. Paths are made absolute without
    resolving symbolic links, so a linked workbook keeps the path under which it was found.
    """
    folders = []
    for raw in inputs:
        path = Path(os.path.abspath(raw))
        # An input that is gone (a result read back later) is judged by its name.
        is_file = path.is_file() or (not path.exists() and path.suffix.lower() in _BOOKS)
        folders.append(path.parent if is_file else path)
    if not folders:
        return Path(os.path.abspath(os.curdir))
    try:
        return Path(os.path.commonpath(folders))
    except ValueError:  # inputs on two Windows drives share no folder: keep full paths
        return Path(os.path.abspath(os.curdir))


def relative_workbook_path(path: str | Path, root: Path) -> str:
    """The workbook's path below ``root`` with forward slashes (the same on every system)."""
    absolute = Path(os.path.abspath(path))
    try:
        return absolute.relative_to(root).as_posix()
    except ValueError:
        return absolute.as_posix()  # outside the root (cannot happen for collected inputs)


def _position(address: str) -> tuple[int, int] | None:
    """'E11' or '$E$11' -> (11, 5); None for anything that is not one cell."""
    match = A1_CELL.match(address)
    if match is None:
        return None
    row, column = int(match.group(4)), column_index(match.group(2))
    if not on_grid(row, column):  # beyond the grid: a defined name, not a cell
        return None
    return row, column


def reference_r1c1(reference: str, origin: tuple[int, int]) -> str | None:
    """One A1 reference (cell, range, whole columns or rows) in R1C1 relative to ``origin``.

    None when ``reference`` is not an A1 reference (a defined name, a table reference).
    """
    parsed = parse_a1(reference)
    return None if parsed is None else r1c1_text(parsed, *origin, compact=True)


def formula_r1c1(formula: str, cell: str) -> str:
    """``=SLOPE(B4:B13,A4:A13)`` in E4 -> ``=SLOPE(RC[-3]:R[9]C[-3],RC[-4]:R[9]C[-4])``.

    Whitespace outside text is dropped, so re-spacing a formula does not change its identity.
    A formula the tokenizer cannot read is kept as written: its identity then depends on its
    place, which is the best that can be said of it.
    """
    origin = _position(split_cell(cell)[1].replace("$", ""))
    text = formula if formula.startswith("=") else "=" + formula
    if origin is None:
        return text
    try:
        return to_r1c1(text, *origin, compact=True)
    except FormulaError:
        return text


def _offset(cell: str, anchor: str) -> str:
    """The place of ``cell`` (a cell or a range) relative to the cell ``anchor``, in R1C1."""
    origin = _position(split_cell(anchor)[1])
    address = split_cell(cell)[1]
    converted = reference_r1c1(address, origin) if origin else None
    return converted if converted is not None else address


def _statistic_anchor(key: str, value: ReportedValue) -> str:
    if value.formula:
        return f"{stat_base(key)}:{formula_r1c1(value.formula, value.cell)}"
    return f"{stat_base(key)}:constant"


def _regression_anchor(regression: RegressionResult) -> tuple[str, ReportedValue] | None:
    """The reported statistic other cells of the regression are placed against."""
    for key in _ANCHOR_ORDER:
        if key in regression.reported:
            return key, regression.reported[key]
    for key, value in regression.reported.items():
        return key, value
    return None


def _statistic_at(cell: str, regressions: Iterable[RegressionResult]) -> str | None:
    for regression in regressions:
        for key, value in regression.reported.items():
            if value.cell == cell:
                return _statistic_anchor(key, value)
    return None


def finding_key(
    finding: Finding,
    workbook: str,
    regression: RegressionResult | None = None,
    regressions: Sequence[RegressionResult] = (),
) -> str:
    """The readable identity key of one finding (see the module docstring); no occurrence.

    ``regression`` is the one the finding belongs to (None for a workbook-level finding);
    ``regressions`` are all of the workbook's, searched when the finding's own does not hold
    its cell (workbook-level checks often point at a regression's statistic).
    """
    first = finding.cells[0] if finding.cells else ""
    sheet = split_cell(first)[0] if first else (regression.sheet if regression else "")
    own = [regression] if regression is not None else []
    anchor = _statistic_at(first, [*own, *regressions]) if first else None
    formula = finding.evidence.get("formula")
    if anchor is None and first and isinstance(formula, str) and formula.startswith("="):
        anchor = f"formula:{formula_r1c1(formula, first)}"
    if anchor is None:
        # A data cell: placed against the statistic of its regression (or of the first one on
        # its sheet), so the whole block may move.
        home = regression or next((r for r in regressions if r.sheet == sheet), None)
        found = _regression_anchor(home) if home is not None else None
        if found is not None:
            place = _offset(first, found[1].cell) if first else "-"
            anchor = f"at {place} of {_statistic_anchor(*found)}"
    if anchor is None:
        anchor = f"cell:{split_cell(first)[1]}" if first else "workbook"  # nothing steadier
    return SEPARATOR.join((workbook, sheet, finding.check, anchor))


def digest(key: str) -> str:
    return hashlib.sha256(key.encode("utf-8")).hexdigest()[:IDENTITY_DIGITS]


def workbook_keys(workbook: WorkbookResult, path: str) -> list[tuple[Finding, str]]:
    """Keys of one workbook's findings in document order, repeated keys numbered ``#2``…"""
    in_order: list[tuple[Finding, RegressionResult | None]] = [
        (finding, None) for finding in workbook.findings
    ]
    in_order += [(finding, r) for r in workbook.regressions for finding in r.findings]
    seen: dict[str, int] = {}
    keyed: list[tuple[Finding, str]] = []
    for finding, regression in in_order:
        key = finding_key(finding, path, regression, workbook.regressions)
        seen[key] = seen.get(key, 0) + 1
        keyed.append((finding, key if seen[key] == 1 else f"{key}#{seen[key]}"))
    return keyed


def identity_keys(result: AuditResult, root: Path | None = None) -> list[tuple[Finding, str]]:
    """Every finding of ``result`` with its readable key; ``root`` defaults to the inputs'."""
    base = root if root is not None else audit_root(result.inputs or [os.curdir])
    keyed: list[tuple[Finding, str]] = []
    for workbook in result.workbooks:
        keyed += workbook_keys(workbook, relative_workbook_path(workbook.path, base))
    return keyed


def assign_identities(result: AuditResult, root: Path | None = None) -> AuditResult:
    """Set ``Finding.identity`` on every finding of ``result`` (in place); return ``result``."""
    for finding, key in identity_keys(result, root):
        finding.identity = digest(key)
    return result


def readable(key: str) -> str:
    """A key for people: the separator shown as ' | '."""
    return key.replace(SEPARATOR, " | ")
