"""Proof over whole folders that shared formulas are expanded as openpyxl's Translator expands
them.

    python benchmarks/same_shared_formulas.py FOLDER [FOLDER ...]

Every .xlsx/.xlsm below each folder is read in place (never copied, never written) twice: as
regaudit reads it (:class:`auditor.read.shared_formulas.SharedFormula`, a template per group)
and with every shared formula moved by ``openpyxl.formula.translate.Translator`` instead. The
two readings must hold the same cells (:func:`auditor.read.equality.workbook_differences`), or
fail with the same message. Prints the counts and the time of each reading; exits 1 on any
difference.
"""

from __future__ import annotations

import sys
import time
from collections import Counter
from pathlib import Path

from openpyxl.formula.translate import Translator

from auditor.errors import UnreadableWorkbook
from auditor.grid import column_letter
from auditor.read import sheet
from auditor.read.equality import workbook_differences
from auditor.read.open import read_workbook
from auditor.read.shared_formulas import SharedFormula


class _ByTranslator(SharedFormula):
    """SharedFormula with each cell's text moved by openpyxl's Translator (the group's bounds
    and tokens, which the reading keeps for the locator, as SharedFormula keeps them)."""

    def __init__(self, formula: str, row: int, col: int) -> None:
        self.translator = Translator(formula, f"{column_letter(col)}{row}")
        super().__init__(formula, row, col)

    def at(self, row: int, col: int) -> str:
        text: str = self.translator.translate_formula(f"{column_letter(col)}{row}")
        return text


def _read(path: Path, mover: object) -> tuple[object, float]:
    setattr(sheet, "SharedFormula", mover)  # noqa: B010 (the reader's name, replaced)
    started = time.perf_counter()
    try:
        found: object = read_workbook(path)
    except UnreadableWorkbook as exc:
        found = f"unreadable: {exc}"
    finally:
        setattr(sheet, "SharedFormula", SharedFormula)  # noqa: B010
    return found, time.perf_counter() - started


def main(argv: list[str]) -> int:
    if not argv:
        print(__doc__)
        return 2
    problems: list[str] = []
    counts: Counter[str] = Counter()
    seconds = {"template": 0.0, "Translator": 0.0}
    for folder in argv:
        for path in sorted(p for p in Path(folder).rglob("*") if p.suffix in (".xlsx", ".xlsm")):
            ours, ours_seconds = _read(path, SharedFormula)
            theirs, their_seconds = _read(path, _ByTranslator)
            seconds["template"] += ours_seconds
            seconds["Translator"] += their_seconds
            counts["files"] += 1
            if isinstance(ours, str) or isinstance(theirs, str):
                if ours != theirs:
                    problems.append(f"{path}: {ours!s:.200} vs {theirs!s:.200}")
                continue
            counts["formula cells"] += len(ours.formula_cells())  # type: ignore[attr-defined]
            differences = workbook_differences(theirs, ours)  # type: ignore[arg-type]
            if differences:
                problems.append(f"{path}: " + "; ".join(differences[:5]))
    print("| count | value |\n|---|---:|")
    for key, count in counts.items():
        print(f"| {key} | {count:,} |")
    print(f"| files that differ | {len(problems)} |")
    for label, value in seconds.items():
        print(f"| seconds, {label} | {value:.2f} |")
    for problem in problems:
        print(f"DIFFERENT {problem}")
    return 1 if problems else 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
