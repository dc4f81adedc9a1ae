"""Which formulas read a block: any of their references overlaps it (same sheet, case aside).

Following a regression's dependents asks this for its x and y ranges, once per regression; with
thousands of formulas and dozens of regressions, testing every reference of every formula each
time was most of the locating. The references are held here as arrays (one row each: the
formula it belongs to, its sheet, its corners) and a block is tested against all at once.
"""

from __future__ import annotations

import numpy as np

from auditor.formula.syntax import Ref

Key = tuple[str, int, int]  # a formula cell: (sheet, row, column)


SMALL = 256  # references at most tested one by one: numpy's fixed costs are larger below


class FormulaReads:
    """The references of every formula, as arrays, to find the formulas reading a block. A
    workbook of few references (a sheet or two of statistics) tests them one by one."""

    def __init__(self, refs_by_key: dict[Key, list[Ref]]) -> None:
        self._listed = [(key, list(refs)) for key, refs in refs_by_key.items()]
        self._small = sum(len(refs) for _, refs in self._listed) <= SMALL
        if not self._small:
            self._arrays(refs_by_key)

    def _arrays(self, refs_by_key: dict[Key, list[Ref]]) -> None:
        self._keys = list(refs_by_key)
        sheet_ids: dict[str, int] = {}
        owner, sheet, r1, c1, r2, c2 = [], [], [], [], [], []
        for place, refs in enumerate(refs_by_key.values()):
            for ref in refs:
                owner.append(place)
                sheet.append(sheet_ids.setdefault(ref.sheet.lower(), len(sheet_ids)))
                r1.append(ref.r1)
                c1.append(ref.c1)
                r2.append(ref.r2)
                c2.append(ref.c2)
        self._sheet_ids = sheet_ids
        self._owner = np.array(owner, dtype=np.int64)
        self._sheet = np.array(sheet, dtype=np.int64)
        self._box = np.array([r1, c1, r2, c2], dtype=np.int64).reshape(4, -1)
        self._key_sheet = np.array(
            [sheet_ids.setdefault(key[0].lower(), len(sheet_ids)) for key in self._keys],
            dtype=np.int64,
        )

    def readers(self, blocks: list[Ref], on_sheets: set[str]) -> set[Key]:
        """The formulas on one of ``on_sheets`` (lower case) with a reference overlapping one
        of ``blocks``."""
        if self._small:
            return readers_one_by_one(self._listed, blocks, on_sheets)
        hit = np.zeros(len(self._owner), dtype=bool)
        r1, c1, r2, c2 = self._box
        for block in blocks:
            sheet = self._sheet_ids.get(block.sheet.lower())
            if sheet is None:
                continue
            hit |= (
                (self._sheet == sheet)
                & (r1 <= block.r2)
                & (block.r1 <= r2)
                & (c1 <= block.c2)
                & (block.c1 <= c2)
            )
        wanted = [self._sheet_ids[name] for name in on_sheets if name in self._sheet_ids]
        places = np.unique(self._owner[hit])
        places = places[np.isin(self._key_sheet[places], wanted)]
        return {self._keys[place] for place in places.tolist()}


def readers_one_by_one(
    listed: list[tuple[Key, list[Ref]]], blocks: list[Ref], on_sheets: set[str]
) -> set[Key]:
    """:meth:`FormulaReads.readers` as the plain walk: every reference of every formula."""
    found: set[Key] = set()
    wanted = [(b.sheet.lower(), b) for b in blocks]
    for key, refs in listed:
        if key[0].lower() not in on_sheets:
            continue
        for ref in refs:
            sheet = ref.sheet.lower()
            if any(
                sheet == name
                and ref.r1 <= b.r2
                and b.r1 <= ref.r2
                and ref.c1 <= b.c2
                and b.c1 <= ref.c2
                for name, b in wanted
            ):
                found.add(key)
                break
    return found
