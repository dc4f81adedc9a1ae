"""What a formula reads, as the hand-built slope search (:mod:`auditor.locate.handbuilt`)
follows it: the ranges of one row or one column it reaches and the formula cells it reads
through single cells, in the order met."""

from __future__ import annotations

from dataclasses import dataclass, field

from auditor.formula.syntax import Ref

Key = tuple[str, int, int]  # a formula cell: (sheet, row, column)


@dataclass
class Reach:
    """What a formula reads: ranges of one row or one column (vectors) and the formula cells
    it reaches through single-cell references. The lists keep the order things were met; a
    set beside each answers "met already?" at once (a sheet of long formulas reaches hundreds
    of cells, and looking each up in a list made following them quadratic)."""

    vectors: list[Ref] = field(default_factory=list)
    cells: list[Key] = field(default_factory=list)
    read_by: dict[Key, Ref] = field(default_factory=dict)  # fixed cell -> the column reading it
    _vector_set: set[Ref] = field(default_factory=set, repr=False, compare=False)
    _cell_set: set[Key] = field(default_factory=set, repr=False, compare=False)

    def add_vector(self, ref: Ref) -> None:
        if ref not in self._vector_set:
            self._vector_set.add(ref)
            self.vectors.append(ref)

    def add_cell(self, key: Key) -> None:
        """A cell read directly: listed again if it was met before (as read)."""
        self.cells.append(key)
        self._cell_set.add(key)

    def add(self, other: Reach) -> None:
        for ref in other.vectors:
            self.add_vector(ref)
        cells, met = self.cells, self._cell_set  # add_cell written out: reaches merge often
        for key in other.cells:
            if key not in met:
                cells.append(key)
                met.add(key)
        for key, ref in other.read_by.items():
            self.read_by.setdefault(key, ref)
