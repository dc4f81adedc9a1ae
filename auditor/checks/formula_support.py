"""Shared by the formula-audit checks: which reported cells a defect reaches, and how bad it is.

A formula fault matters through the reported numbers it feeds: a typed df in the p-value formula
is critical when that p crosses the policy's alpha, major when it is only wrong, minor while it
still gives the right number. The cells a fault reaches are the cell itself and every reported
cell of the same regression built on it (``t = E4/E10`` depends on E4 and E10).
"""

from __future__ import annotations

from collections.abc import Iterable

from openpyxl.formula.tokenizer import Token

from auditor.checks.agreement_words import significance_changes
from auditor.context import RegressionContext
from auditor.errors import FormulaError
from auditor.formula.syntax import Node, parse, references
from auditor.formula.tokens import tokenize
from auditor.grid import column_letter
from auditor.locate.locator import RegressionSpec
from auditor.model import RegressionResult, Severity


def parse_quietly(formula: str | None, sheet: str) -> Node | None:
    """The formula's tree without the workbook (names stay names); None when it cannot parse."""
    if not formula:
        return None
    try:
        return parse(formula, sheet)
    except FormulaError:
        return None


def may_hold_number(formula: str) -> bool:
    """Whether the tree :func:`parse_quietly` makes of ``formula`` can hold a typed number: a
    Number node is made only of a NUMBER operand token (names stay names there). True when
    the text cannot be tokenized: the parse then decides."""
    try:
        tokens = tokenize(formula)
    except FormulaError:
        return True
    return any(t.type == Token.OPERAND and t.subtype == Token.NUMBER for t in tokens)


def reached_cells(
    spec: RegressionSpec, start: str, parsed: dict[tuple[str, int, int], Node] | None = None
) -> list[str]:
    """``start`` and the statistic cells of ``spec`` whose formulas build on it, transitively."""
    feeds: dict[str, set[str]] = {}
    for stat in spec.stats.values():
        cell = stat.cell
        key = (cell.sheet, cell.row, cell.col)
        node = (parsed or {}).get(key) or parse_quietly(cell.formula, cell.sheet)
        if node is None:
            continue
        for ref in references(node):
            if ref.rows * ref.cols > 64:
                continue  # a data range, not a cell the statistic is built from
            for r in range(ref.r1, ref.r2 + 1):
                for c in range(ref.c1, ref.c2 + 1):
                    source = _address(ref.sheet, r, c)
                    feeds.setdefault(source.lower(), set()).add(cell.address)
    reached, queue = [start], [start]
    while queue:
        for target in sorted(feeds.get(queue.pop().lower(), ())):
            if target not in reached:
                reached.append(target)
                queue.append(target)
    return reached


def _address(sheet: str, row: int, col: int) -> str:
    return f"{sheet}!{column_letter(col)}{row}"


def severity_in_regression(context: RegressionContext, cells: Iterable[str]) -> Severity:
    """Critical when a reached reported value changes the conclusion, major when one is wrong."""
    wanted = {c.lower() for c in cells}
    reached = [v for v in context.reported.values() if v.cell.lower() in wanted]
    wrong = [v for v in reached if v.verdict == "mismatch"]
    if any(significance_changes(context, v) for v in wrong):
        return "critical"
    return "major" if wrong else "minor"


def severity_in_result(result: RegressionResult, cells: Iterable[str]) -> Severity:
    """The same judgement after the regression checks ran: their critical findings say where a
    conclusion changed, the verdicts say where a value is wrong."""
    wanted = {c.lower() for c in cells}
    if any(
        f.severity == "critical" and f.cells and f.cells[0].lower() in wanted
        for f in result.findings
    ):
        return "critical"
    if any(v.verdict == "mismatch" and v.cell.lower() in wanted for v in result.reported.values()):
        return "major"
    return "minor"


def local_text(address: str, on_sheet: str) -> str:
    """``Sheet!B4:B13`` as a formula on ``on_sheet`` writes it (no sheet when it is the same)."""
    sheet, _, block = address.rpartition("!")
    if not sheet or sheet.lower() == on_sheet.lower():
        return block
    plain = sheet.replace("_", "").isalnum() and not sheet[0].isdigit()
    return f"{sheet}!{block}" if plain else "'" + sheet.replace("'", "''") + f"'!{block}"


def replace_argument(formula: str, function: str, index: int, new_text: str) -> str | None:
    """The formula with argument ``index`` (0-based) of the first call to ``function`` replaced,
    or None when there is no such argument. ``function`` is matched without storage prefixes."""
    try:
        tokens = tokenize(formula)
    except FormulaError:
        return None
    values = [t.value for t in tokens]
    for start, token in enumerate(tokens):
        if token.type == Token.FUNC and token.subtype == Token.OPEN:
            name = token.value[:-1].rpartition(":")[2].upper()
            while name.startswith(("_XLFN.", "_XLWS.")):
                name = name.split(".", 1)[1]
            if name == function.upper():
                span = _argument_span(tokens, start, index)
                if span is not None:
                    first, last = span
                    return "=" + "".join(values[:first] + [new_text] + values[last:])
    return None


def _argument_span(tokens: list[Token], open_at: int, index: int) -> tuple[int, int] | None:
    """Token positions [first, last) of argument ``index`` of the call opened at ``open_at``."""
    depth, arg, first = 0, 0, open_at + 1
    for i in range(open_at + 1, len(tokens)):
        token = tokens[i]
        if token.subtype == Token.OPEN and token.type in (Token.FUNC, Token.PAREN, Token.ARRAY):
            depth += 1
        elif token.subtype == Token.CLOSE and token.type in (Token.FUNC, Token.PAREN, Token.ARRAY):
            if depth == 0:
                return (first, i) if arg == index and i > first else None
            depth -= 1
        elif depth == 0 and token.type == Token.SEP and token.subtype == Token.ARG:
            if arg == index:
                return first, i
            arg, first = arg + 1, i + 1
    return None
