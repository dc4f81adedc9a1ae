"""The three plots of one regression on the review page, drawn with matplotlib as inline SVG.

    fit        the data, the fitted line, and the band of slopes the data allow: lines through
               the centroid (mean x, mean y) at the two confidence limits of the slope
    residuals  residual against x, with the zero line; points the intended fit left out are not
               drawn (they are listed in the detail table of audit.xlsx)
    design     where the x values sit (replicates stacked), each point sized by its share of
               Sxx, the point that carries the slope ringed, and the x range that would reach
               the standard error the policy's target asks for (present n, evenly spaced)

matplotlib is imported here only, when a page is written, so the rest of regaudit does not pay
for it. Text stays text in the SVG (small, searchable) and the SVG carries no date or random ids,
so the same audit gives the same page.
"""

from __future__ import annotations

import io
import math
from typing import Any

from auditor.model import RegressionResult

FIGURE_SIZE = (11.0, 4.1)  # inches: three panels side by side on a screen or a landscape page
POINT = "#1f4e79"
LINE = "#b5651d"
BAND = "#e8c9a8"
CARRIER = "#8e2c48"
NEEDED = "#2e7d4f"


def prepare_pyplot() -> None:
    """Import and set up matplotlib (before forking copies that draw: see ``html_many``)."""
    _pyplot()


def _pyplot() -> Any:
    import matplotlib

    matplotlib.use("Agg")  # no display: a file writer only
    matplotlib.rcParams.update({"svg.fonttype": "none", "svg.hashsalt": "regaudit"})
    import matplotlib.pyplot as plt

    return plt


def _used_points(regression: RegressionResult) -> list[tuple[int, float, float, float | None]]:
    """(row, x, y, residual) of the points the intended fit used (single x column)."""
    points = []
    for point in regression.data:
        if not point.used or not point.x or point.x[0] is None or point.y is None:
            continue
        points.append((point.row, float(point.x[0]), float(point.y), point.residual))
    return points


def can_plot(regression: RegressionResult) -> bool:
    slope = regression.intended.get("slope")
    return (
        regression.x_columns == 1
        and len(_used_points(regression)) >= 2
        and isinstance(slope, (int, float))
        and math.isfinite(slope)
    )


def _number(value: Any) -> float | None:
    if isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value):
        return float(value)
    return None


def _fit_panel(axes: Any, regression: RegressionResult, points: list[Any]) -> None:
    xs = [p[1] for p in points]
    ys = [p[2] for p in points]
    slope = float(regression.intended["slope"])
    intercept = _number(regression.intended.get("intercept")) or 0.0
    low, high = min(xs), max(xs)
    pad = 0.05 * (high - low or 1.0)
    grid = [low - pad, high + pad]
    centre_x = sum(xs) / len(xs) if regression.intercept else 0.0
    centre_y = intercept + slope * centre_x
    ci_low = _number(regression.intended.get("ci_slope_low"))
    ci_high = _number(regression.intended.get("ci_slope_high"))
    if ci_low is not None and ci_high is not None:
        lower = [centre_y + ci_low * (x - centre_x) for x in grid]
        upper = [centre_y + ci_high * (x - centre_x) for x in grid]
        band = f"slopes the data allow ({ci_low:.3g} to {ci_high:.3g})"
        axes.fill_between(grid, lower, upper, color=BAND, alpha=0.6, lw=0, label=band)
    axes.plot(grid, [intercept + slope * x for x in grid], color=LINE, lw=1.6,
              label=f"fitted line, slope {slope:.4g}")  # fmt: skip
    axes.scatter(xs, ys, s=18, color=POINT, zorder=3, label="data")
    axes.set_title("Data and fitted line", fontsize=10)
    axes.set_xlabel("x")
    axes.set_ylabel("y")
    _legend_below(axes)


def _legend_below(axes: Any) -> None:
    # Below the panel, never over the points; long labels stay readable.
    axes.legend(fontsize=7, loc="upper left", bbox_to_anchor=(0.0, -0.2), frameon=False)


def _residual_panel(axes: Any, points: list[Any]) -> None:
    shown = [(p[1], p[3]) for p in points if p[3] is not None]
    axes.axhline(0.0, color=LINE, lw=1.0)
    axes.scatter([x for x, _ in shown], [r for _, r in shown], s=18, color=POINT, zorder=3)
    axes.set_title("Residuals (y minus fitted)", fontsize=10)
    axes.set_xlabel("x")
    axes.set_ylabel("residual")


def _design_panel(axes: Any, regression: RegressionResult, points: list[Any]) -> None:
    xs = [p[1] for p in points]
    mean = sum(xs) / len(xs)
    deviations = [(x - mean) ** 2 for x in xs]
    total = sum(deviations) or 1.0
    stacked: dict[float, int] = {}
    heights = []
    for x in xs:
        stacked[x] = stacked.get(x, 0) + 1
        heights.append(stacked[x])
    sizes = [20 + 400 * d / total for d in deviations]
    axes.scatter(xs, heights, s=sizes, color=POINT, alpha=0.75, zorder=3,
                 label="x values (size: share of Sxx)")  # fmt: skip
    carrier = regression.design.get("max_sxx_share_row")
    share = _number(regression.design.get("max_sxx_share"))
    for (row, x, _, _), height in zip(points, heights, strict=True):
        if row == carrier:
            label = "largest share of Sxx" + (
                f" ({share:.0%}): carries the slope most" if share else ""
            )
            axes.scatter([x], [height], s=260, facecolors="none", edgecolors=CARRIER, lw=1.8,
                         zorder=4, label=label)  # fmt: skip
            break
    width = _number(regression.design.get("width_needed"))
    top = max(heights) + 1
    if width is not None:
        se = _number(regression.design.get("se_needed"))
        label = "x range giving the target SE" + (f" {se:.3g}" if se else "")
        label += f" ({len(xs)} points, evenly spaced)"
        axes.plot([mean - width / 2, mean + width / 2], [top, top], color=NEEDED, lw=3, label=label)
    axes.plot([min(xs), max(xs)], [top + 0.6, top + 0.6], color=POINT, lw=3,
              label="present x range")  # fmt: skip
    axes.set_ylim(0, top + 1.2)
    axes.set_yticks(range(1, max(heights) + 1))
    axes.set_ylabel("points at that x")
    axes.set_title("Design: where the x values sit", fontsize=10)
    axes.set_xlabel("x")
    _legend_below(axes)


def regression_svg(regression: RegressionResult) -> str:
    """The three panels as one ``<svg>`` element (no XML prolog), or "" when they cannot be
    drawn (several x columns, fewer than two points, no slope)."""
    if not can_plot(regression):
        return ""
    plt = _pyplot()
    points = _used_points(regression)
    figure, axes = plt.subplots(1, 3, figsize=FIGURE_SIZE)
    try:
        _fit_panel(axes[0], regression, points)
        _residual_panel(axes[1], points)
        _design_panel(axes[2], regression, points)
        figure.tight_layout()
        buffer = io.StringIO()
        figure.savefig(buffer, format="svg", metadata={"Date": None})
    finally:
        plt.close(figure)
    text = buffer.getvalue()
    return text[text.index("<svg") :]
