"""How findings say numbers and rows, the same way in every check and diagnosis."""

from __future__ import annotations


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


def rows_text(rows: list[int]) -> str:
    """[16] -> "row 16"; [4, 16, 17] -> "rows 4, 16–17" (runs of rows joined by a dash)."""
    runs: list[list[int]] = []
    for row in sorted(rows):
        if runs and row == runs[-1][-1] + 1:
            runs[-1].append(row)
        else:
            runs.append([row])
    parts = [f"{r[0]}" if len(r) == 1 else f"{r[0]}–{r[-1]}" for r in runs]
    return ("row " if len(rows) == 1 else "rows ") + ", ".join(parts)
