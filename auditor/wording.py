"""How findings say numbers and rows, the same way in every check and diagnosis."""

from __future__ import annotations


def fmt(value: object) -> str:
    """A number as a finding shows it: six significant digits for floats (0.000123457)."""
    if isinstance(value, float):
        return f"{value:.6g}"
    return str(value)


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
