"""References to other workbooks: what the file alone cannot show.

A formula such as ``=SLOPE([1]Data!B2:B13,[1]Data!A2:A13)`` reads a file that is not part of the
audit (``[1]`` is the file's first external link). Its stored value is whatever the linked file
held when this one was last calculated; nothing here can recompute it, so the regression it
belongs to is left unaudited and the finding says so.
"""

from __future__ import annotations

from collections.abc import Iterator

from auditor.checks.base import check
from auditor.context import WorkbookContext
from auditor.design.formula_filter import formulas_that_may_hold
from auditor.formula.syntax import NameNode, Node, RefNode, calls, walk
from auditor.grid import column_letter
from auditor.locate.locator import PAIR_FUNCS
from auditor.model import Finding, Severity

MAX_CELLS_LISTED = 12


def _external_markers(node: Node) -> list[str]:
    found = []
    for sub in walk(node):
        if isinstance(sub, RefNode) and sub.ref.external:
            found.append(sub.ref.external)
        elif isinstance(sub, NameNode) and sub.external:
            found.append(sub.external)
    return found


def _may_link(context: WorkbookContext) -> Iterator[tuple[tuple[str, int, int], Node]]:
    """The parsed formulas that can read another workbook: a link is written with a bracketed
    marker (``[1]Data!A1``), in a formula's text or in a defined name it mentions
    (:mod:`auditor.design.formula_filter`); the other trees are not walked."""
    return formulas_that_may_hold(context.parsed, context.workbook, _bracketed)


def _bracketed(text: str) -> bool:
    return "[" in text


@check(
    "other-workbook-ref",
    "A regression reads data or results from another workbook, which cannot be verified here.",
    scope="workbook",
)
def other_workbook_ref(context: WorkbookContext) -> list[Finding]:
    """Say which cells depend on files outside the audit, regression cells first.

    Failing: ``Results!B4 =SLOPE([1]Data!B2:B13,[1]Data!A2:A13)`` (data in another file: the
    slope cannot be recomputed), or a defined name ``site_x`` referring to ``[2]Data!$A$2:$A$13``.
    Passing: every formula reads cells of this workbook.
    """
    stat_cells = {
        stat.cell.address.lower() for spec in context.specs for stat in spec.stats.values()
    }
    links: dict[str, str] = getattr(context.workbook, "external_links", None) or {}
    by_marker: dict[str, list[tuple[bool, str]]] = {}
    for (sheet, row, col), node in _may_link(context):
        markers = _external_markers(node)
        if not markers:
            continue
        address = f"{sheet}!{column_letter(col)}{row}"
        regression = address.lower() in stat_cells or any(
            call.name in PAIR_FUNCS for call in calls(node)
        )
        for marker in dict.fromkeys(markers):
            by_marker.setdefault(marker, []).append((regression, address))
    findings = []
    for marker, cells in sorted(by_marker.items()):
        cells.sort(key=lambda item: (not item[0], item[1]))
        feeding = [address for regression, address in cells if regression]
        severity: Severity = "minor" if feeding else "info"
        target = links.get(marker)
        named = f"the linked workbook {target}" if target else f"linked workbook {marker}"
        shown = [address for _, address in cells][:MAX_CELLS_LISTED]
        what = (
            f"{len(feeding)} of them regression formulas ({', '.join(feeding[:4])}"
            f"{'…' if len(feeding) > 4 else ''}), whose data or results cannot be recomputed "
            "from this file, so they are not audited"
            if feeding
            else "none of them part of a regression found here"
        )
        findings.append(
            Finding(
                check="other-workbook-ref",
                kind="external-ref",
                severity=severity,
                cells=shown,
                message=f"{len(cells)} formula(s) read {named}: {what}.",
                evidence={"link": marker, "target": target or "", "cells": len(cells)},
                fix="Audit the linked workbook too, or copy its data into this one (paste the "
                "values into a data sheet) and point the formulas there.",
            )
        )
    return findings
