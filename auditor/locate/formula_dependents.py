"""The statistic a formula built on a regression's cells computes (t, p, SE, df, limits)."""

from __future__ import annotations

from auditor.formula.syntax import Binary, Call, Node, RefNode, references, walk
from auditor.locate.grid_labels import statistic_label
from auditor.locate.roles import linest_index_role, role_from_label, role_from_shape
from auditor.locate.spec import RegressionSpec, literal_int
from auditor.model import stat_base
from auditor.read.workbook import Cell, Workbook


def stat_addresses(spec: RegressionSpec) -> dict[tuple[str, int, int], str]:
    out = {}
    for key, stat in spec.stats.items():
        out[(stat.cell.sheet.lower(), stat.cell.row, stat.cell.col)] = key
    for use in spec.uses:
        out.setdefault((use.cell.sheet.lower(), use.cell.row, use.cell.col), "")
    return out


Known = dict[tuple[str, int, int], str]  # stat_addresses of a spec, found once by the caller


def refs_roles(spec: RegressionSpec, node: Node, known: Known | None = None) -> set[str]:
    if known is None:
        known = stat_addresses(spec)
    found = set()
    for ref in references(node):
        for r in range(ref.r1, min(ref.r2, ref.r1 + 10) + 1):
            for c in range(ref.c1, ref.c2 + 1):
                key = known.get((ref.sheet.lower(), r, c))
                if key is not None:
                    found.add(key)
    return found


def picked(spec: RegressionSpec, node: Node, keys: Known | None = None) -> str | None:
    """The statistic a sub-expression stands for: a stat cell, or INDEX over a LINEST block."""
    if keys is None:
        keys = stat_addresses(spec)
    if isinstance(node, RefNode) and node.ref.is_cell:
        return keys.get((node.ref.sheet.lower(), node.ref.r1, node.ref.c1)) or None
    if isinstance(node, Call) and node.name == "INDEX" and len(node.args) >= 2:
        target = node.args[0]
        if isinstance(target, Call) and target.name == "LINEST":
            return linest_index_role(node, spec.x_columns, spec.intercept)
        if isinstance(target, RefNode):
            row = literal_int(node.args[1])
            col = literal_int(node.args[2]) if len(node.args) > 2 else 1
            if row is None or col is None:
                return None
            r, c = target.ref.r1 + row - 1, target.ref.c1 + col - 1
            return keys.get((target.ref.sheet.lower(), r, c)) or None
    return None


def t_keys_in(spec: RegressionSpec, node: Node, known: Known | None = None) -> list[str]:
    if known is None:
        known = stat_addresses(spec)
    found = []
    for sub in walk(node):
        key = picked(spec, sub, known)
        if key and stat_base(key).startswith("t_"):
            found.append(stat_base(key))
    return found


def role_of_dependent(
    workbook: Workbook, spec: RegressionSpec, cell: Cell, node: Node, known: Known | None = None
) -> str | None:
    """``known``: the spec's stat_addresses when the caller has them (they are the same for
    every formula tried until a statistic is attached)."""
    if known is None:
        known = stat_addresses(spec)
    label = statistic_label(workbook, cell)
    label_role = role_from_label(label) if label else None
    shape = role_from_shape(node)
    used = {stat_base(k) for k in refs_roles(spec, node, known)}
    if shape == "p":
        t_keys = t_keys_in(spec, node, known)
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
    found = picked(spec, node, known) if isinstance(node, Call) else None
    if found is not None:
        return stat_base(found)  # INDEX(block, r, c) repeats a statistic of the block
    if isinstance(node, Binary) and node.op == "/":
        numerator = picked(spec, node.left, known)
        denominator = picked(spec, node.right, known) or role_from_shape(node.right) or ""
        right_used = {stat_base(k) for k in refs_roles(spec, node.right, known)}
        se_like = stat_base(denominator).startswith("se_") or any(
            k.startswith("se_") for k in right_used
        )
        if numerator is not None and se_like:
            base = stat_base(numerator)
            if base.startswith("slope") or base.startswith("intercept"):
                return "t_" + base
    return label_role
