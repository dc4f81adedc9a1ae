"""How findings say numbers and rows, the same way in every check and diagnosis."""

from __future__ import annotations

from auditor.grid import column_letter


def fmt(value: object) -> str:
    """A number as a finding shows it: six significant digits for floats (0.000123457)."""
    if isinstance(value, float):
        return f"{value:.6g}"
    return str(value)


def fmt_pair(a: object, b: object) -> tuple[str, str]:
    """Two numbers shown with the fewest significant digits (6 or more) that tell them apart:
    never "reported 1, recomputed 1"."""
    if not (isinstance(a, float) and isinstance(b, float)) or a == b:
        return fmt(a), fmt(b)
    for digits in range(6, 18):
        left, right = f"{a:.{digits}g}", f"{b:.{digits}g}"
        if left != right:
            return left, right
    return repr(a), repr(b)


def rows_text(rows: list[int], across: bool = False) -> str:
    """[16] -> "row 16"; [4, 16, 17] -> "rows 4, 16–17" (runs of rows joined by a dash). With
    ``across`` (a table laid out in rows, one point per column) the numbers are sheet columns:
    [9, 10] -> "columns I–J"."""
    runs: list[list[int]] = []
    for row in sorted(rows):
        if runs and row == runs[-1][-1] + 1:
            runs[-1].append(row)
        else:
            runs.append([row])
    name = column_letter if across else str
    parts = [f"{name(r[0])}" if len(r) == 1 else f"{name(r[0])}–{name(r[-1])}" for r in runs]
    word = "column" if across else "row"
    return (f"{word} " if len(rows) == 1 else f"{word}s ") + ", ".join(parts)


def point_word(across: bool) -> str:
    """What one point of a table is called: a row, or a column of a table laid out in rows."""
    return "column" if across else "row"
