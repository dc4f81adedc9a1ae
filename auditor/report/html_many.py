"""The plots of every regression on the review page, drawn by several processes at once.

Each regression's plot is an independent matplotlib figure, and drawing them is nearly all of
the page's time (about 0.15 s each; the demo's 84 regressions take 12 of its 14 seconds). On a
machine with several cores the figures are drawn by forked copies of this process, matplotlib
already imported, each regression sent to one and its SVG text sent back, in page order. The
SVG carries no date and no random ids (``html_plots``), so the page is the same byte for byte
however many processes drew it. Where forking is unsafe (``forked.can_fork``) or there are too
few figures to gain, they are drawn here, one by one.
"""

from __future__ import annotations

import os
import signal
from collections.abc import Sequence

from auditor.model import RegressionResult
from auditor.report.forked import can_fork
from auditor.report.html_plots import can_plot, prepare_pyplot, regression_svg

MIN_PER_PROCESS = 4  # fewer figures than this per extra process: starting it costs more


def _ignore_interrupts() -> None:
    """A drawing process's first step: Ctrl-C is the parent's to handle. SIGINT came blocked
    from the parent (see ``draw_plots``), so none slips in before it is ignored."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.pthread_sigmask(signal.SIG_UNBLOCK, {signal.SIGINT})


def usable_cores() -> int:
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not on Linux
        return max(1, os.cpu_count() or 1)


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
    # SIGINT is blocked while the pool is made, not ignored: a Ctrl-C then waits until the pool
    # is whole and inside the block that stops it. Arriving while the pool starts its threads,
    # it would leave the copies running past the end of the run, holding the console open.
    blocked = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    try:
        pool = multiprocessing.get_context("fork").Pool(wanted, _ignore_interrupts)
    except BaseException:
        signal.pthread_sigmask(signal.SIG_SETMASK, blocked)
        raise
    with pool:
        signal.pthread_sigmask(signal.SIG_SETMASK, blocked)  # a Ctrl-C held back arrives here
        svgs = iter(pool.map(regression_svg, drawn, chunksize=1))
    return [next(svgs) if can_plot(regression) else "" for regression in regressions]
