"""What statistic a cell holds: from its formula's shape, from the label beside it, or both.

The formula's shape wins where it is unambiguous (``=SLOPE(…)`` is a slope whatever its label
says); a label decides between shapes that look alike (a t statistic and a t critical value are
both divisions or inverse-t calls) and names typed constants.
"""

from __future__ import annotations

import re
from functools import lru_cache

from auditor.formula.syntax import Binary, Call, Node, Number, Unary, calls

# LINEST's 5-row block by (row, column-from-the-right) for k x columns; see the design's facts.
LINEST_SHARED = {
    (3, 1): "r_squared",
    (3, 2): "residual_sd",
    (4, 1): "f",
    (4, 2): "df",
    (5, 1): "ss_regression",
    (5, 2): "ss_residual",
}

_LABELS: list[tuple[re.Pattern[str], str]] = [
    (
        re.compile(r"^(se|s\.?e\.?|std\.? ?err(or)?|standard error)\b.*\b(intercept|b0|a)\b"),
        "se_intercept",
    ),
    (
        re.compile(
            r"^(se|s\.?e\.?|std\.? ?err(or)?|standard error)\b.*\b(estimate|regression|y)\b"
        ),
        "residual_sd",
    ),
    (re.compile(r"^(se|s\.?e\.?|std\.? ?err(or)?|standard error|u\(b1\))"), "se_slope"),
    (re.compile(r"^t([\s(:=,_-]|$).*\b(intercept|b0)\b"), "t_intercept"),
    (re.compile(r"^(t crit|t-crit|critical t|t\(0)"), "t_critical"),
    (re.compile(r"^t([\s(:=,_-]|$)"), "t_slope"),
    (
        re.compile(r"^(p([\s(:=,<_-]|$)|p-?value|prob|sig(\.|nificance)?\b).*\b(intercept|b0)\b"),
        "p_intercept",
    ),
    (re.compile(r"^(p([\s(:=,<_-]|$)|p-?value|prob(ability)?\b|sig(\.|nificance)?\b)"), "p_slope"),
    (re.compile(r"^(df|d\.f\.|degrees of freedom|dof)\b"), "df"),
    (re.compile(r"^(n|count|points|number of (points|observations|standards))\b"), "n"),
    (
        re.compile(
            r"^(r ?(²|\^2|2|-?sq(uared)?)|rsq|coefficient (of determination|r ?(²|\^2|2\b)))"
        ),
        "r_squared",
    ),
    (re.compile(r"^(r|correl(ation)?|pearson)\b"), "r"),
    (
        re.compile(r"^(s|sy\.?x|s\(y\)|steyx|residual (sd|s\.d\.|std)|res\.? ?sd|s_?res)\b"),
        "residual_sd",
    ),
    (re.compile(r"^(intercept|b0|offset|blank)\b"), "intercept"),
    (re.compile(r"^(slope|b1|gradient|sensitivity|coefficient|rate)\b"), "slope"),
    (re.compile(r"^(lower|ci low|lcl|95% ?(ci)? ?low)"), "ci_slope_low"),
    (re.compile(r"^(upper|ci high|ucl|95% ?(ci)? ?(high|up))"), "ci_slope_high"),
]


# The same labels in Spanish, German and French, said in English before matching (words are
# vocabulary: there is no computing them). Longer phrases first.
_OTHER_LANGUAGES: list[tuple[re.Pattern[str], str]] = [
    (re.compile(r"^(error est[aá]ndar|standardfehler|erreur (standard|type))\b"), "standard error"),
    (re.compile(r"^(pendiente|steigung|pente)\b"), "slope"),
    (
        re.compile(r"^(ordenada al origen|intercepto|achsenabschnitt|ordonn[ée]e [àa] l.origine)"),
        "intercept",
    ),  # fmt: skip
    (re.compile(r"^(estad[ií]stico t|t-wert|statistique t)\b"), "t"),
    (re.compile(r"^(valor p|p-wert|valeur p)\b"), "p-value"),
    (re.compile(r"^(grados de libertad|freiheitsgrade|degr[ée]s de libert[ée])"), "df"),
    (re.compile(r"^(r cuadrado|bestimmtheitsma(ß|ss)|coefficient de d[ée]termination)"), "r²"),
]


@lru_cache(maxsize=8192)  # the same labels are read by several recognisers
def role_from_label(text: str) -> str | None:
    """'SE of slope' -> 'se_slope'; 'p-value' -> 'p_slope'; 'Pendiente' -> 'slope'; None when
    not a statistic label."""
    cleaned = text.strip().lower().rstrip(":=").strip()
    cleaned = cleaned.replace("_", " ")
    for pattern, english in _OTHER_LANGUAGES:
        cleaned = pattern.sub(english, cleaned, count=1)
    if not cleaned or len(cleaned) > 40:
        return None
    for pattern, role in _LABELS:
        if pattern.search(cleaned):
            return role
    return None


_P_FUNCS = {
    "TDIST",
    "T.DIST",
    "T.DIST.2T",
    "T.DIST.RT",
    "NORM.S.DIST",
    "NORMSDIST",
    "NORM.DIST",
    "NORMDIST",
}
_TINV_FUNCS = {"TINV", "T.INV", "T.INV.2T"}


def role_from_shape(node: Node) -> str | None:
    """The statistic a formula computes, judged from its functions alone (None: undecided)."""
    names = [c.name for c in calls(node)]
    top = node.name if isinstance(node, Call) else None
    if top == "INDEX" and names[1:2] == ["LINEST"]:
        return None  # decided by position, see linest_index_role
    if top in ("SLOPE",):
        return "slope"
    if top == "INTERCEPT":
        return "intercept"
    if top == "STEYX":
        return "residual_sd"
    if top == "RSQ":
        return "r_squared"
    if top in ("CORREL", "PEARSON"):
        return "r"
    if isinstance(node, Binary) and node.op == "^" and isinstance(node.left, Call):
        if node.left.name in ("CORREL", "PEARSON") and _is_number(node.right, 2.0):
            return "r_squared"
    if any(n in _P_FUNCS for n in names):
        return "p"
    if any(n in _TINV_FUNCS for n in names):
        return "t_critical_or_ci"
    if "STEYX" in names and any(
        n in ("DEVSQ", "SUMSQ", "VAR", "VAR.S", "STDEV", "STDEV.S") for n in names
    ):
        return "se_slope"
    if top == "COUNT" or top == "COUNTA":
        return "n"
    if isinstance(node, Binary) and node.op == "-" and isinstance(node.left, Call):
        if node.left.name in ("COUNT", "COUNTA") and isinstance(node.right, Number):
            return "df"
    return None


def _is_number(node: Node, value: float) -> bool:
    return isinstance(node, Number) and float(node.value) == value


def linest_block_role(row: int, col: int, k: int, intercept: bool) -> str | None:
    """Role of the cell at 1-based (row, col) of a LINEST(…, stats=TRUE) block with k x columns.

    Row 1 holds coefficients in reverse order of the x columns, then the intercept; row 2 their
    standard errors; rows 3-5 the shared statistics in the first two columns (#N/A beyond).
    """
    if row in (1, 2):
        base = "slope" if row == 1 else "se_slope"
        if col == k + 1:
            if not intercept:
                return None
            return "intercept" if row == 1 else "se_intercept"
        if 1 <= col <= k:
            x_index = k - col + 1
            return base if k == 1 else f"{base}[{x_index}]"
        return None
    return LINEST_SHARED.get((row, col))


def linest_index_role(node: Node, k: int, intercept: bool) -> str | None:
    """INDEX(LINEST(…), r, c) with literal r and c -> the statistic it picks."""
    if not (isinstance(node, Call) and node.name == "INDEX" and len(node.args) >= 2):
        return None
    row = _literal_int(node.args[1])
    col = _literal_int(node.args[2]) if len(node.args) > 2 else 1
    if row is None or col is None:
        return None
    return linest_block_role(row, col, k, intercept)


def single_cell_linest_role(node: Node, k: int, intercept: bool) -> str | None:
    """``=LINEST(y, x)`` typed into one cell (no array): the cell shows the block's top-left
    element, the coefficient of the last x column (the slope when there is one x)."""
    while isinstance(node, Call) and node.name in ("IFERROR", "ROUND") and node.args:
        node = node.args[0]
    if isinstance(node, Call) and node.name == "LINEST":
        return linest_block_role(1, 1, k, intercept)
    return None


def _literal_int(node: Node) -> int | None:
    if isinstance(node, Number):
        return int(float(node.value))
    if isinstance(node, Unary) and node.op == "+" and isinstance(node.operand, Number):
        return int(float(node.operand.value))
    return None
