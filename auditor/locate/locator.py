"""Finding the regressions in a workbook, with no setup by the user.

Each form a regression takes is found by one *recogniser*: a function with the one signature
``find(locator, taken) -> list[RegressionSpec]`` (``locator`` holds the workbook and its parsed
formulas; ``taken`` the addresses of reported cells already bound to a regression). They run in
the order of :data:`RECOGNISERS`:

* **bindings**, **names** — declared regressions (a bindings TOML, defined names ``<stem>_x``…);
  a later regression over the same data merges into a declared one;
* **formulas** — SLOPE/INTERCEPT/STEYX/RSQ/LINEST calls name a (y, x) pair; cells built on them
  (t, p, df, n, SE, limits) are attached by following references;
* **hand-built** — slopes and intercepts recognised by the number they compute (COVARIANCE/VAR,
  SUMPRODUCT sums, ȳ − b·x̄); over the data of a regression found earlier they join it;
* then typed copies of a slope inside formulas are attached (:mod:`auditor.locate.typed_copies`);
* then typed numbers beside statistic labels are attached to every regression found so far;
* *late* recognisers see the cells bound so far and never take one twice: **typed tables** (a
  block of labelled typed figures that agree with one another, its data found by reproduction,
  one changed reading, or words and place), **labels** (a typed slope beside a two-column
  table), **pasted tables** (an analysis add-in's output pasted as
  values, its data found by reproduction), **trendlines** (a chart series with a linear
  trendline; its ``finish`` step joins a trendline over the same data as an earlier regression
  into it).

A new form is one module with one ``find`` function and one line in :data:`RECOGNISERS`.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from auditor.locate import (
    binding,
    declared,
    handbuilt_specs,
    labels,
    pasted_spec,
    trendlines,
    typed_copies,
    typed_spec,
)
from auditor.locate.formulas import FormulaLocator
from auditor.locate.spec import PAIR_FUNCS, PairUse, RegressionSpec, StatCell, overlaps
from auditor.read.workbook import Workbook

__all__ = [
    "PAIR_FUNCS",
    "RECOGNISERS",
    "Locator",
    "PairUse",
    "Recogniser",
    "RegressionSpec",
    "StatCell",
    "locate",
]

Locator = FormulaLocator  # the per-workbook state every recogniser reads: cells, parsed formulas


@dataclass(frozen=True)
class Recogniser:
    """One way of finding regressions."""

    name: str
    find: Callable[[FormulaLocator, set[str]], list[RegressionSpec]]
    absorbs: bool = False  # a later regression over overlapping x and y merges into these
    late: bool = False  # runs after labelled constants are attached; respects ``taken``
    # runs once all have found theirs, over the whole list (joins, completes, may drop its own)
    labelled: bool = True  # typed numbers beside statistic labels near its blocks are attached
    finish: Callable[[FormulaLocator, list[RegressionSpec]], list[RegressionSpec]] | None = None
    # Gives a regression found earlier over the same data this one's cells (True: consumed).
    join: Callable[[list[RegressionSpec], RegressionSpec], bool] | None = None


def _formulas(locator: FormulaLocator, taken: set[str]) -> list[RegressionSpec]:
    return locator.from_formulas()


RECOGNISERS: tuple[Recogniser, ...] = (
    Recogniser("bindings", declared.from_bindings, absorbs=True),
    Recogniser("names", declared.from_names, absorbs=True),
    Recogniser("formulas", _formulas),
    Recogniser("hand-built", handbuilt_specs.find, join=handbuilt_specs.join),
    # a typed statistic table whose numbers agree with one another, its data found after (a
    # stale one too: before the labels, which take a typed slope its data nearly give)
    Recogniser("typed tables", typed_spec.find, late=True, labelled=False),
    Recogniser("labels", labels.from_labels, late=True),
    # a pasted table is complete: its own layout names every number it holds; before the
    # trendlines, so that a chart of the same data joins the table's regression
    Recogniser("pasted tables", pasted_spec.find, late=True, labelled=False),
    # a chart series is no block of cells with labels beside it: its copies are found by value
    Recogniser("trendlines", trendlines.find, late=True, finish=trendlines.finish, labelled=False),
)


def _merge(primary: RegressionSpec, other: RegressionSpec) -> None:
    for key, stat in other.stats.items():
        primary.stats.setdefault(key, stat)
    primary.uses.extend(other.uses)


def _taken(specs: list[RegressionSpec]) -> set[str]:
    return {stat.cell.address for spec in specs for stat in spec.stats.values()}


def locate(
    workbook: Workbook,
    bindings: list[dict[str, Any]] | None = None,
    locator: FormulaLocator | None = None,
    recognisers: tuple[Recogniser, ...] = RECOGNISERS,
) -> list[RegressionSpec]:
    """Every regression in the workbook, each with how it was found and its statistic cells."""
    locator = locator or FormulaLocator(workbook, bindings)
    specs: list[RegressionSpec] = []
    absorbing: list[RegressionSpec] = []
    for recogniser in (r for r in recognisers if not r.late):
        for spec in recogniser.find(locator, _taken(specs)):
            if recogniser.join is not None and recogniser.join(specs, spec):
                continue
            target = next(
                (s for s in absorbing if overlaps(s.x, spec.x) and overlaps(s.y, spec.y)), None
            )
            if target is not None:
                _merge(target, spec)
                continue
            specs.append(spec)
            if recogniser.absorbs:
                absorbing.append(spec)
    typed_copies.attach_typed_copies(locator.workbook, locator.parsed, specs)
    for spec in specs:
        labels.attach_labelled_constants(locator, spec)
    for recogniser in (r for r in recognisers if r.late):
        found = recogniser.find(locator, _taken(specs))
        for spec in found if recogniser.labelled else ():
            labels.attach_labelled_constants(locator, spec)
        specs.extend(found)
    for spec in specs:
        spec.label = spec.label or labels.block_title(locator, spec)
        spec.x_headers = locator.x_headers(spec)
    for recogniser in recognisers:
        if recogniser.finish is not None:
            specs = recogniser.finish(locator, specs)
    specs = binding.single_owner(specs, locator.parsed)  # no cell bound to two regressions
    for spec in specs:
        spec.neighbour_ranges = [
            ref for other in specs if other is not spec for ref in (other.x, other.y)
        ]
    seen: set[str] = set()
    for spec in specs:
        base, n = spec.id, 2
        while spec.id in seen:
            spec.id = f"{base}-{n}"
            n += 1
        seen.add(spec.id)
    return specs
