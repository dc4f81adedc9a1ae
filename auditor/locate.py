"""Finding the regressions in a workbook, with no setup by the user.

Four ways, merged into one list of :class:`RegressionSpec`:

* **formulas** — every SLOPE/INTERCEPT/STEYX/RSQ/CORREL/PEARSON/LINEST call names a (y, x) pair;
  calls whose ranges overlap belong to one regression (a range that differs is a finding later,
  not a second regression); cells built on those (t, p, df, n, SE, limits) are attached by
  following references;
* **names** — defined names ``<stem>_x`` and ``<stem>_y`` (and ``<stem>_slope``, …);
* **bindings** — a TOML file mapping the cells of a template once for a batch of copies;
* **labels** — typed numbers beside labels such as "Slope" or "p-value".
"""

from __future__ import annotations

import fnmatch
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from auditor.errors import FormulaError
from auditor.formula import Binary, Call, Node, Number, Ref, RefNode, calls, parse, references, walk
from auditor.model import STAT_KEYS, FoundBy, stat_base
from auditor.roles import (
    linest_block_role,
    linest_index_role,
    role_from_label,
    role_from_shape,
)
from auditor.workbook import Cell, Workbook

PAIR_FUNCS = {"SLOPE", "INTERCEPT", "STEYX", "RSQ", "CORREL", "PEARSON", "LINEST"}
MAX_FOLLOW_ROUNDS = 4


@dataclass
class StatCell:
    key: str
    cell: Cell
    how: str  # "formula", "linest-block", "name", "binding", "label"
    block_position: tuple[int, int] | None = None  # (row, col) inside an array block


@dataclass
class PairUse:
    """One call that names a (y, x) pair: which cell, which function, which ranges."""

    cell: Cell
    function: str
    y: Ref
    x: Ref
    intercept: bool = True


@dataclass
class RegressionSpec:
    id: str
    sheet: str
    x: Ref
    y: Ref
    intercept: bool
    found_by: FoundBy
    stats: dict[str, StatCell] = field(default_factory=dict)
    uses: list[PairUse] = field(default_factory=list)
    label: str = ""

    @property
    def x_columns(self) -> int:
        return self.x.c2 - self.x.c1 + 1


def _overlaps(a: Ref, b: Ref) -> bool:
    return (
        a.sheet.lower() == b.sheet.lower()
        and a.r1 <= b.r2
        and b.r1 <= a.r2
        and a.c1 <= b.c2
        and b.c1 <= a.c2
    )


def _ref_arg(node: Node) -> Ref | None:
    return node.ref if isinstance(node, RefNode) else None


def _const_arg(node: Node | None) -> bool:
    """LINEST's const argument: FALSE (or 0) fits through the origin."""
    from auditor.formula import Bool, Number

    if node is None:
        return True
    if isinstance(node, Bool):
        return bool(node.value)
    if isinstance(node, Number):
        return float(node.value) != 0
    if isinstance(node, Call) and node.name in ("TRUE", "FALSE"):
        return node.name == "TRUE"
    return True


def pair_uses(cell: Cell, node: Node) -> list[PairUse]:
    found = []
    for call in calls(node):
        if call.name not in PAIR_FUNCS or len(call.args) < 2:
            continue
        y, x = _ref_arg(call.args[0]), _ref_arg(call.args[1])
        if y is None or x is None or y.external or x.external:
            continue
        intercept = (
            _const_arg(call.args[2]) if call.name == "LINEST" and len(call.args) > 2 else True
        )
        found.append(PairUse(cell, call.name, y, x, intercept))
    return found


class _Groups:
    """Union-find over pair uses: overlapping (or swapped) ranges are one regression."""

    def __init__(self, uses: list[PairUse]):
        self.uses = uses
        self.parent = list(range(len(uses)))
        for i, a in enumerate(uses):
            for j in range(i):
                b = uses[j]
                same = _overlaps(a.x, b.x) and _overlaps(a.y, b.y)
                swapped = _overlaps(a.x, b.y) and _overlaps(a.y, b.x)
                if same or swapped:
                    self._union(i, j)

    def _find(self, i: int) -> int:
        while self.parent[i] != i:
            self.parent[i] = self.parent[self.parent[i]]
            i = self.parent[i]
        return i

    def _union(self, i: int, j: int) -> None:
        self.parent[self._find(i)] = self._find(j)

    def groups(self) -> list[list[PairUse]]:
        out: dict[int, list[PairUse]] = {}
        for i, use in enumerate(self.uses):
            out.setdefault(self._find(i), []).append(use)
        return list(out.values())


def _box(uses: list[PairUse]) -> tuple[str, int, int, int, int] | None:
    if not uses:
        return None
    sheet = uses[0].cell.sheet
    rows = [u.cell.row for u in uses if u.cell.sheet == sheet]
    cols = [u.cell.col for u in uses if u.cell.sheet == sheet]
    return sheet, min(rows) - 1, min(cols) - 1, max(rows) + 1, max(cols) + 1


def _inside(use: PairUse, box: tuple[str, int, int, int, int] | None) -> bool:
    return box is not None and (
        use.cell.sheet == box[0]
        and box[1] <= use.cell.row <= box[3]
        and box[2] <= use.cell.col <= box[4]
    )


def _adopt_strays(groups: list[list[PairUse]]) -> list[list[PairUse]]:
    """A call sitting inside another block but naming this block's data (a block copied with an
    absolute reference left pointing back) belongs to the block it sits in: the mismatch of
    ranges is a finding of that block, not a second regression."""
    for group in groups:
        for use in list(group):
            rest = [u for u in group if u is not use]
            if not rest or _inside(use, _box(rest)):
                continue
            for other in groups:
                if other is not group and _inside(use, _box(other)):
                    group.remove(use)
                    other.append(use)
                    break
    return [g for g in groups if g]


def _primary_pair(uses: list[PairUse]) -> tuple[Ref, Ref]:
    """The (x, y) most calls agree on; ties go to the longest range (the table meant)."""
    votes: dict[tuple[Ref, Ref], int] = {}
    for use in uses:
        votes[(use.x, use.y)] = votes.get((use.x, use.y), 0) + 1

    # A swapped call (SLOPE(x, y)) votes for the reversed pair; the majority orientation wins.
    def score(pair: tuple[Ref, Ref]) -> tuple[int, int]:
        x, y = pair
        agreeing = sum(n for (ox, oy), n in votes.items() if _overlaps(ox, x) and _overlaps(oy, y))
        return agreeing, (y.r2 - y.r1) + (x.r2 - x.r1)

    return max(votes, key=score)


def label_for(workbook: Workbook, cell: Cell) -> str | None:
    """The text an author put beside a cell: nearest text to the left (3 cells), else above."""
    sheet = workbook.sheet(cell.sheet)
    if sheet is None:
        return None
    for dc in range(1, 4):
        if cell.col - dc < 1:
            break
        other = sheet.get(cell.row, cell.col - dc)
        if other is not None and other.value is not None:
            if isinstance(other.value, str) and not other.formula:
                return other.value
            break
    other = sheet.get(cell.row - 1, cell.col) if cell.row > 1 else None
    if other is not None and isinstance(other.value, str) and not other.formula:
        return other.value
    return None


class Locator:
    def __init__(self, workbook: Workbook, bindings: list[dict[str, Any]] | None = None):
        self.workbook = workbook
        self.bindings = bindings or []
        self.parsed: dict[tuple[str, int, int], Node] = {}
        self.parse_errors: list[tuple[Cell, str]] = []
        for cell in workbook.formula_cells():
            try:
                self.parsed[(cell.sheet, cell.row, cell.col)] = parse(
                    cell.formula or "", cell.sheet, workbook
                )
            except FormulaError as exc:
                self.parse_errors.append((cell, str(exc)))

    def node(self, cell: Cell) -> Node | None:
        return self.parsed.get((cell.sheet, cell.row, cell.col))

    # -- formulas ---------------------------------------------------------------------------
    def from_formulas(self) -> list[RegressionSpec]:
        uses: list[PairUse] = []
        for key, node in self.parsed.items():
            cell = self.workbook.cell(*key)
            if cell is not None:
                uses.extend(pair_uses(cell, node))
        groups = _adopt_strays(_Groups(uses).groups())
        self.anchor_cells = {(u.cell.sheet, u.cell.row, u.cell.col) for u in uses}
        specs = []
        for group in groups:
            x, y = _primary_pair(group)
            intercept = (
                all(u.intercept for u in group if u.function == "LINEST")
                if any(u.function == "LINEST" for u in group)
                else True
            )
            first = min(group, key=lambda u: (u.cell.sheet, u.cell.row, u.cell.col)).cell
            spec = RegressionSpec(
                id=f"{first.sheet}/{first.coord}",
                sheet=first.sheet,
                x=x,
                y=y,
                intercept=intercept,
                found_by="formulas",
                uses=group,
            )
            self._assign_anchor_roles(spec)
            self._follow_dependents(spec)
            specs.append(spec)
        return specs

    def _put(self, spec: RegressionSpec, key: str | None, stat: StatCell) -> None:
        """Attach a statistic cell; a second cell holding the same statistic gets ``key@A1``."""
        if key is None or not (key in STAT_KEYS or re.match(r"^[a-z_]+\[\d+\]$", key)):
            return
        if any(s.cell.address == stat.cell.address for s in spec.stats.values()):
            return
        if key in spec.stats:
            key = f"{key}@{stat.cell.coord}"
        stat.key = key
        spec.stats[key] = stat

    def _assign_anchor_roles(self, spec: RegressionSpec) -> None:
        k = spec.x_columns
        for use in sorted(spec.uses, key=lambda u: (u.cell.row, u.cell.col)):
            cell, node = use.cell, self.node(use.cell)
            if node is None:
                continue
            if use.function == "LINEST" and cell.array_ref:
                self._assign_block(spec, cell, k, use.intercept)
                continue
            role = linest_index_role(node, k, use.intercept) or role_from_shape(node)
            if role in (None, "p", "t_critical_or_ci"):
                role = self._role_of_dependent(spec, cell, node)
            self._put(spec, role, StatCell(role or "", cell, "formula"))

    def _assign_block(self, spec: RegressionSpec, anchor: Cell, k: int, intercept: bool) -> None:
        bounds = self.workbook.array_anchors.get((anchor.sheet, anchor.row, anchor.col))
        if bounds is None:
            return
        r1, c1, r2, c2 = bounds
        for r in range(r1, r2 + 1):
            for c in range(c1, c2 + 1):
                role = linest_block_role(r - r1 + 1, c - c1 + 1, k, intercept)
                cell = self.workbook.cell(anchor.sheet, r, c) or Cell(anchor.sheet, r, c, None)
                cell_with_formula = Cell(
                    cell.sheet,
                    r,
                    c,
                    cell.value,
                    anchor.formula,
                    cell.number_format,
                    anchor.array_ref,
                )
                self._put(
                    spec,
                    role,
                    StatCell(role or "", cell_with_formula, "linest-block", (r - r1, c - c1)),
                )

    def _stat_addresses(self, spec: RegressionSpec) -> dict[tuple[str, int, int], str]:
        out = {}
        for key, stat in spec.stats.items():
            out[(stat.cell.sheet.lower(), stat.cell.row, stat.cell.col)] = key
        for use in spec.uses:
            out.setdefault((use.cell.sheet.lower(), use.cell.row, use.cell.col), "")
        return out

    def _refs_roles(self, spec: RegressionSpec, node: Node) -> set[str]:
        known = self._stat_addresses(spec)
        found = set()
        for ref in references(node):
            for r in range(ref.r1, min(ref.r2, ref.r1 + 10) + 1):
                for c in range(ref.c1, ref.c2 + 1):
                    key = known.get((ref.sheet.lower(), r, c))
                    if key is not None:
                        found.add(key)
        return found

    def _picked(self, spec: RegressionSpec, node: Node) -> str | None:
        """The statistic a sub-expression stands for: a stat cell, or INDEX over a LINEST block."""
        keys = self._stat_addresses(spec)
        if isinstance(node, RefNode) and node.ref.is_cell:
            return keys.get((node.ref.sheet.lower(), node.ref.r1, node.ref.c1)) or None
        if isinstance(node, Call) and node.name == "INDEX" and len(node.args) >= 2:
            target = node.args[0]
            if isinstance(target, Call) and target.name == "LINEST":
                return linest_index_role(node, spec.x_columns, spec.intercept)
            if isinstance(target, RefNode):
                row = _literal(node.args[1])
                col = _literal(node.args[2]) if len(node.args) > 2 else 1
                if row is None or col is None:
                    return None
                r, c = target.ref.r1 + row - 1, target.ref.c1 + col - 1
                return keys.get((target.ref.sheet.lower(), r, c)) or None
        return None

    def _t_keys_in(self, spec: RegressionSpec, node: Node) -> list[str]:
        found = []
        for sub in walk(node):
            key = self._picked(spec, sub)
            if key and stat_base(key).startswith("t_"):
                found.append(stat_base(key))
        return found

    def _role_of_dependent(self, spec: RegressionSpec, cell: Cell, node: Node) -> str | None:
        label = label_for(self.workbook, cell)
        label_role = role_from_label(label) if label else None
        shape = role_from_shape(node)
        used = {stat_base(k) for k in self._refs_roles(spec, node)}
        if shape == "p":
            t_keys = self._t_keys_in(spec, node)
            if t_keys:
                return "p_" + t_keys[0][2:]
            if label_role == "p_intercept" or ("t_intercept" in used and "t_slope" not in used):
                return "p_intercept"
            return "p_slope"
        if shape == "t_critical_or_ci":
            if "slope" in used:
                if label_role in ("ci_slope_low", "ci_slope_high"):
                    return label_role
                top = node if isinstance(node, Binary) else None
                return "ci_slope_low" if top is not None and top.op == "-" else "ci_slope_high"
            return None
        if shape is not None:
            return shape
        if label_role in ("t_critical",):
            return None
        picked = self._picked(spec, node) if isinstance(node, Call) else None
        if picked is not None:
            return stat_base(picked)  # INDEX(block, r, c) repeats a statistic of the block
        if isinstance(node, Binary) and node.op == "/":
            numerator = self._picked(spec, node.left)
            denominator = self._picked(spec, node.right) or role_from_shape(node.right) or ""
            right_used = {stat_base(k) for k in self._refs_roles(spec, node.right)}
            se_like = stat_base(denominator).startswith("se_") or any(
                k.startswith("se_") for k in right_used
            )
            if numerator is not None and se_like:
                base = stat_base(numerator)
                if base.startswith("slope") or base.startswith("intercept"):
                    return "t_" + base
        return label_role

    def _follow_dependents(self, spec: RegressionSpec) -> None:
        data = [spec.x, spec.y]  # not the stray calls' ranges: those belong to a neighbour
        taken = {(s.cell.sheet, s.cell.row, s.cell.col) for s in spec.stats.values()}
        taken |= {(u.cell.sheet, u.cell.row, u.cell.col) for u in spec.uses}
        for _ in range(MAX_FOLLOW_ROUNDS):
            added = False
            for key, node in self.parsed.items():
                if key in taken or key in self.anchor_cells:
                    continue  # another regression's own call is never a dependent of this one
                cell = self.workbook.cell(*key)
                if cell is None:
                    continue
                touches_stats = bool(self._refs_roles(spec, node))
                touches_data = any(
                    _overlaps(ref, d) for ref in references(node) for d in data
                ) and key[0].lower() in {spec.sheet.lower(), spec.x.sheet.lower()}
                if not (touches_stats or touches_data):
                    continue
                if touches_data and not touches_stats and not self._near(spec, cell):
                    continue
                role = self._role_of_dependent(spec, cell, node)
                taken.add(key)
                label = label_for(self.workbook, cell)
                if (
                    role
                    and role in spec.stats
                    and role_from_label(label or "") != role
                    and not role.startswith(("se_", "t_"))
                    and not (isinstance(node, Call) and node.name == "INDEX")
                ):
                    continue  # a second p or count counts only when labelled so; SE and t
                    # built by hand are unambiguous shapes
                if role:
                    self._put(spec, role, StatCell(role, cell, "formula"))
                    added = True
            if not added:
                break

    def _near(self, spec: RegressionSpec, cell: Cell) -> bool:
        """A data-only formula (COUNT(x)-2) belongs to the block it sits in."""
        for stat in spec.stats.values():
            if (
                stat.cell.sheet == cell.sheet
                and abs(stat.cell.row - cell.row) <= 8
                and abs(stat.cell.col - cell.col) <= 4
            ):
                return True
        return False

    # -- names and bindings -----------------------------------------------------------------
    def _ref_from_text(self, text: str, sheet: str | None) -> Ref | None:
        try:
            node = parse(
                "=" + text.lstrip("="), sheet or next(iter(self.workbook.sheets)), self.workbook
            )
        except (FormulaError, StopIteration):
            return None
        return _ref_arg(node)

    def from_declarations(
        self, declared: dict[str, dict[str, str]], how: FoundBy, intercepts: dict[str, bool]
    ) -> list[RegressionSpec]:
        """``declared[stem] = {"x": ref text, "y": ref text, "slope": cell text, …}``."""
        specs = []
        for stem, entries in declared.items():
            if "x" not in entries or "y" not in entries:
                continue
            x = self._ref_from_text(entries["x"], None)
            y = self._ref_from_text(entries["y"], None)
            if x is None or y is None:
                continue
            spec = RegressionSpec(stem, y.sheet, x, y, intercepts.get(stem, True), how)
            for key, text in entries.items():
                if key in ("x", "y"):
                    continue
                ref = self._ref_from_text(text, y.sheet)
                if ref is None:
                    continue
                cell = self.workbook.cell(ref.sheet, ref.r1, ref.c1) or Cell(
                    ref.sheet, ref.r1, ref.c1, None
                )
                self._put(spec, key, StatCell(key, cell, "name" if how == "names" else "binding"))
            if spec.stats:
                first = min(spec.stats.values(), key=lambda s: (s.cell.row, s.cell.col)).cell
                spec.sheet = first.sheet
            specs.append(spec)
        return specs

    def from_names(self) -> list[RegressionSpec]:
        declared: dict[str, dict[str, str]] = {}
        pattern = re.compile(r"^(?P<stem>.+?)_(?P<key>x|y|" + "|".join(STAT_KEYS) + r")$", re.I)
        for defined in self.workbook.names:
            match = pattern.match(defined.name)
            if match:
                stem = match.group("stem")
                declared.setdefault(stem, {})[match.group("key").lower()] = defined.refers_to
        return self.from_declarations(declared, "names", {})

    def from_bindings(self) -> list[RegressionSpec]:
        name = Path(self.workbook.path).name
        declared: dict[str, dict[str, str]] = {}
        intercepts: dict[str, bool] = {}
        for index, entry in enumerate(self.bindings, start=1):
            if not fnmatch.fnmatch(name, str(entry.get("files", "*"))):
                continue
            stem = str(entry.get("id", f"binding-{index}"))
            declared[stem] = {"x": str(entry["x"]), "y": str(entry["y"])}
            declared[stem].update({k: str(v) for k, v in dict(entry.get("stats", {})).items()})
            intercepts[stem] = bool(entry.get("intercept", True))
        return self.from_declarations(declared, "bindings", intercepts)

    # -- labels -----------------------------------------------------------------------------
    def from_labels(self, taken: set[str]) -> list[RegressionSpec]:
        """A typed number beside "Slope" with a two-column numeric table to its left."""
        specs = []
        for sheet in self.workbook.sheets.values():
            for cell in sorted(sheet.cells.values(), key=lambda c: (c.row, c.col)):
                if not isinstance(cell.value, str) or role_from_label(cell.value) != "slope":
                    continue
                target = sheet.get(cell.row, cell.col + 1)
                if (
                    target is None
                    or target.formula
                    or isinstance(target.value, bool)
                    or not isinstance(target.value, (int, float))
                    or target.address in taken
                ):
                    continue
                pair = self._table_left_of(sheet.name, cell.col)
                if pair is None:
                    continue
                x, y = pair
                spec = RegressionSpec(
                    f"{sheet.name}/{target.coord}", sheet.name, x, y, True, "labels"
                )
                spec.stats["slope"] = StatCell("slope", target, "label")
                taken.add(target.address)
                specs.append(spec)
        return specs

    def _table_left_of(self, sheet_name: str, col: int) -> tuple[Ref, Ref] | None:
        """The nearest pair of adjacent columns left of ``col`` with 3+ numeric rows together."""
        sheet = self.workbook.sheet(sheet_name)
        if sheet is None:
            return None

        def numeric(r: int, c: int) -> bool:
            value = sheet.value(r, c)
            return isinstance(value, (int, float)) and not isinstance(value, bool)

        for c in range(col - 2, 0, -1):
            rows = [r for r in range(1, sheet.max_row + 1) if numeric(r, c) and numeric(r, c + 1)]
            if len(rows) < 3:
                continue
            start = end = rows[0]
            best = (start, end)
            for r in rows[1:]:
                end = r if r == end + 1 else end
                if r != end:
                    start = end = r
                if end - start > best[1] - best[0]:
                    best = (start, end)
            if best[1] - best[0] >= 2:
                return (
                    Ref(sheet.name, best[0], c, best[1], c),
                    Ref(sheet.name, best[0], c + 1, best[1], c + 1),
                )
        return None

    def attach_labelled_constants(self, spec: RegressionSpec) -> None:
        """Typed numbers beside statistic labels near the block are its reported values."""
        cells = [s.cell for s in spec.stats.values()] or [
            Cell(spec.y.sheet, spec.y.r1, spec.y.c2 + 1, None)
        ]
        sheet = self.workbook.sheet(cells[0].sheet)
        if sheet is None:
            return
        data_columns = [spec.x, spec.y]
        rows = range(min(c.row for c in cells) - 3, max(c.row for c in cells) + 6)
        cols = range(min(c.col for c in cells) - 3, max(c.col for c in cells) + 5)
        for r in rows:
            for c in cols:
                cell = sheet.get(r, c)
                if (
                    cell is None
                    or cell.formula
                    or cell.value is None
                    or isinstance(cell.value, bool)
                ):
                    continue
                if isinstance(cell.value, str) and not _looks_like_claim(cell.value):
                    continue
                if any(r_.c1 <= c <= r_.c2 and r_.sheet == cell.sheet for r_ in data_columns):
                    continue  # a value in a data column is data, whatever its header says
                label = label_for(self.workbook, cell)
                role = role_from_label(label) if label else None
                if role and not any(stat_base(k) == role for k in spec.stats):
                    self._put(spec, role, StatCell(role, cell, "label"))

    def block_title(self, spec: RegressionSpec) -> str:
        if not spec.stats:
            return ""
        top = min(spec.stats.values(), key=lambda s: (s.cell.row, s.cell.col)).cell
        sheet = self.workbook.sheet(top.sheet)
        if sheet is None:
            return ""
        for r in range(top.row - 1, max(0, top.row - 4), -1):
            for c in (top.col - 1, top.col, top.col - 2):
                cell = sheet.get(r, c) if c >= 1 else None
                if cell is not None and isinstance(cell.value, str) and not cell.formula:
                    if role_from_label(cell.value) is None and len(cell.value) > 3:
                        return cell.value
        return ""


def _literal(node: Node) -> int | None:
    return int(float(node.value)) if isinstance(node, Number) else None


_CLAIM = re.compile(
    r"^\s*(p\s*)?([<>≤≥]=?|=)?\s*[-−]?\d*\.?\d+(e-?\d+)?\s*%?\s*$|^\s*n\.?s\.?\s*$", re.I
)


def _looks_like_claim(text: str) -> bool:
    return bool(_CLAIM.match(text))


def _merge(primary: RegressionSpec, other: RegressionSpec) -> None:
    for key, stat in other.stats.items():
        primary.stats.setdefault(key, stat)
    primary.uses.extend(other.uses)


def locate(
    workbook: Workbook,
    bindings: list[dict[str, Any]] | None = None,
    locator: Locator | None = None,
) -> list[RegressionSpec]:
    """Every regression in the workbook, each with how it was found and its statistic cells."""
    locator = locator or Locator(workbook, bindings)
    declared = locator.from_bindings() + locator.from_names()
    found = locator.from_formulas()
    specs: list[RegressionSpec] = []
    for spec in declared:
        for other in list(found):
            if _overlaps(spec.x, other.x) and _overlaps(spec.y, other.y):
                _merge(spec, other)
                found.remove(other)
        specs.append(spec)
    specs.extend(found)
    for spec in specs:
        locator.attach_labelled_constants(spec)
    taken = {stat.cell.address for spec in specs for stat in spec.stats.values()}
    by_labels = locator.from_labels(taken)
    for spec in by_labels:
        locator.attach_labelled_constants(spec)
    specs.extend(by_labels)
    for spec in specs:
        spec.label = locator.block_title(spec)
    seen: set[str] = set()
    for spec in specs:
        base, n = spec.id, 2
        while spec.id in seen:
            spec.id = f"{base}-{n}"
            n += 1
        seen.add(spec.id)
    return specs
