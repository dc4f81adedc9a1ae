"""The residual and probability output an add-in pastes below a table's coefficients."""

from __future__ import annotations

from auditor.locate.pasted_parts import Grid, ResidualOutput, close
from auditor.locate.pasted_record import PastedTable, cell_text
from auditor.read.workbook import Sheet

RESIDUAL_GAP_ROWS = 12  # how far below its coefficients the residual output starts


def residual_output(
    sheet: Sheet, grid: Grid, table: PastedTable, below: int
) -> ResidualOutput | None:
    """Observation numbers 1…n with predicted values and residuals beside them: the next numbers
    below the table (another table's numbers in between mean the output is not this one's)."""
    n = table.n
    columns = range(max(1, table.anchor.col - 3), table.anchor.col + 9)
    for r in range(below, below + RESIDUAL_GAP_ROWS):
        if any((r - 1, c) in grid for c in columns if r > below):
            return None
        for c in range(max(1, table.anchor.col - 3), table.anchor.col + 3):
            if grid.get((r, c)) != 1.0 or grid.get((r + n - 1, c)) != float(n):
                continue
            if any(grid.get((r + i, c)) != float(i + 1) for i in range(n)):
                continue
            predicted = [grid.get((r + i, c + 1)) for i in range(n)]
            residuals = [grid.get((r + i, c + 2)) for i in range(n)]
            if any(v is None for v in predicted) or any(v is None for v in residuals):
                continue
            output = ResidualOutput(
                r,
                c,
                [float(v) for v in predicted],  # type: ignore[arg-type]
                [float(v) for v in residuals],  # type: ignore[arg-type]
                None,
            )
            if all((r + i, c + 3) in grid for i in range(n)):
                output.standard = [grid[(r + i, c + 3)] for i in range(n)]
            output.probability_col = _probability_col(grid, r, c + 3, n)
            if output.probability_col is not None:
                output.sorted_y = [grid[(r + i, output.probability_col + 1)] for i in range(n)]
            width = 4 if output.standard is not None else 3
            last = output.probability_col + 1 if output.probability_col else c + width - 1
            for i in range(-1, n):
                for cc in range(c, last + 1):
                    table.footprint.add((r + i, cc))
            header = cell_text(sheet, r - 1, c + 1)
            table.y_label = header.split(" ", 1)[1].strip() if " " in header else ""
            return output
    return None


def _probability_col(grid: Grid, r: int, start: int, n: int) -> int | None:
    """Percentiles 100·(i − ½)/n in one column, the sorted y values in the next."""
    for c in range(start, start + 4):
        if all(close(grid.get((r + i, c), -1.0), 100.0 * (i + 0.5) / n) for i in range(n)):
            if all((r + i, c + 1) in grid for i in range(n)):
                return c
    return None
