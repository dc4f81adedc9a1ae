"""Finding the regressions in a workbook, with no setup by the user.

Four ways, merged into one list of :class:`RegressionSpec`:

* **formulas** — every SLOPE/INTERCEPT/STEYX/RSQ/CORREL/PEARSON/LINEST call names a (y, x) pair;
  calls whose ranges overlap belong to one regression (a range that differs is a finding later,
  not a second regression); cells built on those (t, p, df, n, SE, limits) are attached by
  following references;
* **names** — defined names ``<stem>_x`` and ``<stem>_y`` (and ``<stem>_slope``, …);
* **bindings** — a TOML file mapping the cells of a template once for a batch of copies;
* **labels** — typed numbers beside labels such as "Slope" or "p-value".
"""

from __future__ import annotations

from typing import Any

from auditor.locate.declared import DeclaredMixin
from auditor.locate.labels import LabelsMixin
from auditor.locate.spec import PAIR_FUNCS, PairUse, RegressionSpec, StatCell, overlaps
from auditor.read.workbook import Workbook

__all__ = ["PAIR_FUNCS", "Locator", "PairUse", "RegressionSpec", "StatCell", "locate"]


class Locator(DeclaredMixin, LabelsMixin):
    """All four ways of finding regressions over one parsed workbook."""


def _merge(primary: RegressionSpec, other: RegressionSpec) -> None:
    for key, stat in other.stats.items():
        primary.stats.setdefault(key, stat)
    primary.uses.extend(other.uses)


def locate(
    workbook: Workbook,
    bindings: list[dict[str, Any]] | None = None,
    locator: Locator | None = None,
) -> list[RegressionSpec]:
    """Every regression in the workbook, each with how it was found and its statistic cells."""
    locator = locator or Locator(workbook, bindings)
    declared = locator.from_bindings() + locator.from_names()
    found = locator.from_formulas()
    specs: list[RegressionSpec] = []
    for spec in declared:
        for other in list(found):
            if overlaps(spec.x, other.x) and overlaps(spec.y, other.y):
                _merge(spec, other)
                found.remove(other)
        specs.append(spec)
    specs.extend(found)
    for spec in specs:
        locator.attach_labelled_constants(spec)
    taken = {stat.cell.address for spec in specs for stat in spec.stats.values()}
    by_labels = locator.from_labels(taken)
    for spec in by_labels:
        locator.attach_labelled_constants(spec)
    specs.extend(by_labels)
    for spec in specs:
        spec.label = locator.block_title(spec)
        spec.x_headers = locator.x_headers(spec)
    seen: set[str] = set()
    for spec in specs:
        base, n = spec.id, 2
        while spec.id in seen:
            spec.id = f"{base}-{n}"
            n += 1
        seen.add(spec.id)
    return specs
