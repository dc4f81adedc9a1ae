"""One finding per mistake: the findings of one regression that one cause explains become one.

Several checks see one mistake from different sides: a y range moved one row down is a
misaligned pair of ranges (xy-rows-misaligned), rows left outside the range (rows-outside-range)
and seven reported values that disagree with the recomputation (stat-recompute); a df typed into
a p formula is a typed count, a p with the wrong df and a cell unlike its siblings. A reviewer
needs the mistake once, at its cause, with every cell it reaches and every value it spoils.

How findings are grouped (within one regression, after the workbook-level findings are routed):

1. Findings that name a cause in the formulas or the table (CAUSE_CHECKS, in order of how
   directly they name it) lead; findings of one kind merge into the first of that kind.
2. A diagnosed recomputation (stat-recompute with a kind) joins the cause of its kind, else a
   cause whose cells it shares or reaches (a value built on the faulty cell), else it leads.
3. A copied-block note (sibling-formula-differs) and an unexplained recomputation join the
   cause that shares or reaches one of their cells; otherwise they stand alone.

The merged finding keeps the leader's check, kind and wording, takes the worst severity, lists
every cell once (the leader's first, then the others in order), says what the joined findings
add, and records every kind it covers in ``evidence["kinds"]`` and the checks in
``evidence["merged_checks"]``.
"""

from __future__ import annotations

from collections.abc import Callable

from auditor.checks.agreement_words import describe
from auditor.grid import parse_cell
from auditor.model import SEVERITY_RANK, Finding
from auditor.wording import fmt_pair

# Checks that name the cause itself, most direct first (a shifted range explains the rows it
# leaves out; a typed df explains the wrong p).
CAUSE_CHECKS: tuple[str, ...] = (
    "xy-rows-misaligned",
    "ranges-disagree",
    "typed-count-in-formula",
    "total-row-in-range",
    "text-numbers-skipped",
    "coefficient-label-mismatch",
    "range-beyond-table",
    "rows-outside-range",
    "pasted-result",
    "stat-stale",
)
RECOMPUTE = "stat-recompute"
SIBLINGS = "sibling-formula-differs"
JOINING = (RECOMPUTE, SIBLINGS)

Reach = Callable[[str], list[str]]


def _rank(finding: Finding) -> tuple[int, int]:
    if finding.check in CAUSE_CHECKS:
        return 0, CAUSE_CHECKS.index(finding.check)
    if finding.check == RECOMPUTE and finding.kind:
        return 1, 0
    if finding.check == SIBLINGS:
        return 2, 0
    return 3, 0


def _mergeable(finding: Finding) -> bool:
    return finding.severity != "info" and (
        finding.check in CAUSE_CHECKS or finding.check in JOINING
    )


class _Group:
    def __init__(self, leader: Finding, reach: Reach) -> None:
        self.leader = leader
        self.members: list[Finding] = [leader]
        self.kinds = [leader.kind] if leader.kind else []
        self.reached: set[str] = set()
        self._reach = reach
        self._cover(leader)

    def _cover(self, finding: Finding) -> None:
        for cell in finding.cells:
            self.reached.update(c.lower() for c in self._reach(cell))
            self.reached.add(cell.lower())

    def touches(self, finding: Finding) -> bool:
        return any(cell.lower() in self.reached for cell in finding.cells)

    def add(self, finding: Finding) -> None:
        self.members.append(finding)
        if finding.kind and finding.kind not in self.kinds:
            self.kinds.append(finding.kind)
        self._cover(finding)

    def finding(self) -> Finding:
        leader = self.leader
        if len(self.members) == 1:
            return leader
        cells = list(dict.fromkeys(c for f in self.members for c in f.cells))
        severity = min((f.severity for f in self.members), key=lambda s: SEVERITY_RANK[s])
        extra = [f for f in self.members[1:] if f.check not in (leader.check, RECOMPUTE)]
        said = " ".join(
            dict.fromkeys(f"Also: {_first_sentence(f.message)}" for f in extra if f.message)
        )
        if leader.check != RECOMPUTE:
            spoilt = _values_spoilt([f for f in self.members if f.check == RECOMPUTE])
            said = (said + " " + spoilt).strip()
        evidence = dict(leader.evidence)
        evidence["kinds"] = list(self.kinds)
        evidence["merged_checks"] = list(dict.fromkeys(f.check for f in self.members))
        spoiled = [
            {"cells": f.cells, "message": f.message} for f in self.members if f.check == RECOMPUTE
        ]
        if spoiled and leader.check != RECOMPUTE:
            evidence["values_affected"] = spoiled
        repairs = {cell: text for f in self.members for cell, text in fix_formulas(f).items()}
        if repairs:
            evidence["fix_formulas"] = repairs
        return Finding(
            check=leader.check,
            severity=severity,
            message=(leader.message + (" " + said if said else "")).strip(),
            kind=leader.kind or next(iter(self.kinds), None),
            cells=cells,
            evidence=evidence,
            fix=leader.fix or next((f.fix for f in self.members if f.fix), ""),
            identity=leader.identity,
            waived=leader.waived,
        )


def fix_formulas(finding: Finding) -> dict[str, str]:
    """The formulas a finding suggests, by cell (from stat-recompute's evidence, single or
    grouped, and from a merged finding)."""
    found: dict[str, str] = dict(finding.evidence.get("fix_formulas", {}))
    single = finding.evidence.get("fix_formula")
    if isinstance(single, str) and finding.cells:
        found.setdefault(finding.cells[0], single)
    for value in finding.evidence.get("values", []) or []:
        if isinstance(value, dict) and isinstance(value.get("fix_formula"), str):
            found.setdefault(str(value["cell"]), str(value["fix_formula"]))
    return found


def _values_spoilt(recomputed: list[Finding]) -> str:
    """The wrong values a cause makes, in one sentence: "It makes 3 reported values wrong:
    slope in S!E4 -0.0890414 (recomputed -0.0888641); …"."""
    values: list[dict[str, object]] = []
    for finding in recomputed:
        grouped = finding.evidence.get("values")
        if isinstance(grouped, list):
            values.extend(v for v in grouped if isinstance(v, dict))
        elif "reported" in finding.evidence and finding.cells:
            values.append({**finding.evidence, "cell": finding.cells[0]})
    if not values:
        return ""
    parts = []
    for value in sorted(values, key=lambda v: _position(str(v.get("cell", "")))):
        shown, recomputed_text = fmt_pair(value.get("reported"), value.get("intended"))
        name = describe(str(value.get("key", "")))
        parts.append(f"{name} in {value.get('cell')} {shown} (recomputed {recomputed_text})")
    return f"It makes {len(values)} reported value(s) wrong: " + "; ".join(parts) + "."


def _first_sentence(message: str) -> str:
    head, dot, _ = message.partition(". ")
    return head + "." if dot else message


def one_per_mistake(findings: list[Finding], reach: Reach) -> list[Finding]:
    """The findings with every group explained by one cause merged into one (see module doc).
    ``reach(cell)`` gives the cell and the reported cells built on it."""
    candidates = sorted((f for f in findings if _mergeable(f)), key=_rank)
    groups: list[_Group] = []

    def join(finding: Finding, by_kind: bool, by_cells: bool) -> bool:
        for group in groups:
            same_kind = by_kind and finding.kind is not None and finding.kind in group.kinds
            if same_kind or (by_cells and group.touches(finding)):
                group.add(finding)
                return True
        return False

    for finding in candidates:
        tier = _rank(finding)[0]
        if tier == 0:
            joined = join(finding, by_kind=True, by_cells=False)
        elif tier == 1:
            joined = join(finding, by_kind=True, by_cells=False) or join(
                finding, by_kind=False, by_cells=True
            )
        else:
            joined = join(finding, by_kind=False, by_cells=True)
        if not joined:
            groups.append(_Group(finding, reach))
    merged = {id(g.leader): g.finding() for g in groups}
    members = {id(f) for g in groups for f in g.members[1:]}
    out: list[Finding] = []
    for finding in findings:
        if id(finding) in members:
            continue
        kept = merged.get(id(finding), finding)
        kept.cells = tidy_cells(kept.cells)
        out.append(kept)
    return out


def _position(cell: str) -> tuple[str, int, int, int]:
    sheet, _, block = cell.rpartition("!")
    corner = block.split(":", 1)[0].replace("$", "")
    try:
        row, col = parse_cell(corner)
    except ValueError:
        return sheet.lower(), 1, 0, 0  # not a cell: after the cells, in the order given
    return sheet.lower(), 0, col, row


def tidy_cells(cells: list[str]) -> list[str]:
    """Each cell once; the first (where the finding is shown and routed) stays first, the rest
    in sheet, column and row order (E4, E5, …, E12 rather than E12, E9, E8)."""
    unique = list(dict.fromkeys(cells))
    if len(unique) < 3:
        return unique
    return unique[:1] + sorted(unique[1:], key=_position)
