"""The plots of every regression on the review page, drawn by several processes at once.

Each regression's plot is an independent matplotlib figure, and drawing them is nearly all of
the page's time (about 0.15 s each; the demo's 84 regressions take 12 of its 14 seconds). On a
machine with several cores the figures are drawn by forked copies of this process, matplotlib
already imported, each regression sent to one and its SVG text sent back, in page order. The
SVG carries no date and no random ids (``html_plots``), so the page is the same byte for byte
however many processes drew it. Where forking is unsafe (``processes.can_fork``) or there are too
few figures to gain, they are drawn here, one by one.
"""

from __future__ import annotations

from collections.abc import Sequence

from auditor.model import RegressionResult
from auditor.processes import can_fork, ignore_interrupts, interrupts_held, usable_cores
from auditor.report.html_plots import can_plot, prepare_pyplot, regression_svg

MIN_PER_PROCESS = 4  # fewer figures than this per extra process: starting it costs more


def draw_plots(regressions: Sequence[RegressionResult], processes: int | None = None) -> list[str]:
    """``regression_svg`` of each regression, in order (``processes``: at most this many;
    the default, one per usable core)."""
    drawn = [r for r in regressions if can_plot(r)]
    wanted = usable_cores() if processes is None else processes
    wanted = min(wanted, len(drawn) // MIN_PER_PROCESS)
    if wanted < 2 or not can_fork():
        return [regression_svg(regression) for regression in regressions]
    import multiprocessing  # noqa: PLC0415 (only when drawing in parallel)

    prepare_pyplot()  # imported once, here, before the copies are made
    # Ctrl-C reaches the whole process group: the copies leave it to this process, which stops
    # them (leaving the pool terminates it) and says so in one line, not one traceback each.
    # It is held back while the pool is made: arriving while the pool starts its threads, it
    # left the copies running past the end of the run.
    with interrupts_held() as let_through:
        with multiprocessing.get_context("fork").Pool(wanted, ignore_interrupts) as pool:
            let_through()
            svgs = iter(pool.map(regression_svg, drawn, chunksize=1))
    return [next(svgs) if can_plot(regression) else "" for regression in regressions]
