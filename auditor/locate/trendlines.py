"""The trendline recogniser: one regression per audited chart series, then the finish step.

The series are read by :mod:`auditor.locate.trendline_series`; the finish step joins, traces
and completes the regressions once every recogniser has run.
"""

from __future__ import annotations

from auditor.formula.syntax import Ref
from auditor.locate.formulas import FormulaLocator
from auditor.locate.spec import RegressionSpec, overlaps
from auditor.locate.trendline_series import TrendlineUse, survey


def _span(ref: Ref | None, first: int, last: int) -> Ref | None:
    """Positions first..last (1-based) of a one-row or one-column series block."""
    if ref is None:
        return None
    if ref.cols == 1 or ref.rows > 1:
        return Ref(ref.sheet, ref.r1 + first - 1, ref.c1, ref.r1 + last - 1, ref.c2)
    return Ref(ref.sheet, ref.r1, ref.c1 + first - 1, ref.r2, ref.c1 + last - 1)


def spec_for(use: TrendlineUse) -> RegressionSpec:
    """The regression a linear trendline fits: the series trimmed to its plotted points."""
    used = use.used
    first, last = used[0].position, used[-1].position
    y = _span(use.y_ref, first, last)
    x = _span(use.x_ref, first, last)
    texts = (
        x.address
        if x is not None
        else (f"positions {first}..{last}" if use.by_position else use.x_text),
        y.address if y is not None else use.y_text,
    )
    placeholder = Ref("", 1, 1, 1, 1)  # no cells: values cached in the chart only
    sheet = (y or x).sheet if (y or x) is not None else use.chart.sheet  # type: ignore[union-attr]
    name = use.chart.part.rsplit("/", 1)[-1].removesuffix(".xml")
    if use.by_position:
        x = None  # the category cells are labels: the fit's x are the positions 1..n
    spec = RegressionSpec(
        id=f"{use.chart.sheet}/{name}-series{use.series.index + 1}",
        sheet=sheet,
        x=x or placeholder,
        y=y or placeholder,
        intercept=use.forced_intercept is None,
        found_by="trendline",
    )
    spec.trendlines.append(use)
    spec.range_texts = texts
    return spec


def _same(a: Ref, b: Ref) -> bool:
    return (a.sheet.lower(), a.r1, a.c1, a.r2, a.c2) == (b.sheet.lower(), b.r1, b.c1, b.r2, b.c2)


def find(locator: FormulaLocator, taken: set[str]) -> list[RegressionSpec]:
    """One regression per chart series with a linear trendline over data (a late recogniser:
    it binds no cell; :func:`finish` joins and completes what it found)."""
    return [spec_for(use) for use in survey(locator.workbook) if use.status == "audited"]


def finish(locator: FormulaLocator, specs: list[RegressionSpec]) -> list[RegressionSpec]:
    """Once every recogniser has run: a trendline over the very ranges of a regression found
    before joins it (one regression, two ways of showing it); the unpaired cells of unequal
    series are traced into the regressions they reach; typed copies of the trendlines' figures
    are attached (:mod:`auditor.locate.trendline_copies`)."""
    from auditor.locate.trendline_copies import attach_copies
    from auditor.locate.trendline_table import attach_rests

    kept: list[RegressionSpec] = []
    for spec in specs:
        if spec.found_by == "trendline" and spec.trendlines:
            use: TrendlineUse = spec.trendlines[0]
            same = next(
                (
                    other
                    for other in kept
                    if not use.by_position and _same(other.x, spec.x) and _same(other.y, spec.y)
                ),
                None,
            )
            if same is not None:
                _join(same, spec)
                continue
            how = "against positions 1..n" if use.by_position else "y on x"
            own = f"linear trendline of {use.describe} ({how})"
            spec.label = f"{spec.label}: {own}" if spec.label else own
        kept.append(spec)
    for spec in kept:
        for use in spec.trendlines:
            if use.length_mismatch:
                use.runs_into = _reached_blocks(use, spec, kept)
    attach_copies(locator.workbook, kept, locator.parsed)
    attach_rests(locator.workbook, kept)
    return kept


def _join(primary: RegressionSpec, other: RegressionSpec) -> None:
    """Move a trendline regression into the regression over the same data: its chart series,
    and any statistic cells found beside it (under a key of their own when the name is taken)."""
    primary.trendlines.extend(other.trendlines)
    for key, stat in other.stats.items():
        if any(s.cell.address == stat.cell.address for s in primary.stats.values()):
            continue
        primary.stats[key if key not in primary.stats else f"{key}@{stat.cell.address}"] = stat


def _reached_blocks(
    use: TrendlineUse, own: RegressionSpec, specs: list[RegressionSpec]
) -> list[str]:
    """Data ranges of other regressions that a series' unpaired cells run into."""
    longer = use.y_ref if use.y_count > use.x_count else use.x_ref
    if longer is None:
        return []
    paired = min(use.x_count, use.y_count)
    extra = (
        Ref(longer.sheet, longer.r1 + paired, longer.c1, longer.r2, longer.c2)
        if longer.cols == 1
        else Ref(longer.sheet, longer.r1, longer.c1 + paired, longer.r2, longer.c2)
    )
    reached = []
    for spec in specs:
        if spec is own:
            continue
        for block in (spec.y, spec.x):
            if overlaps(extra, block):
                reached.append(f"{block.address} (the data of the regression {spec.id})")
                break
    return reached
