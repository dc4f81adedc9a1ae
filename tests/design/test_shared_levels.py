"""x sorted once per regression (design.lackfit.count_levels, made by the pipeline) and shared by
the job's signs (locate.job.read_signs) and the design metrics gives what each finds sorting x
itself: generated x columns with replicated levels, ties of 0.0 and -0.0, negative values and
one level only; and an audit's design metrics take the pipeline's sort."""

from __future__ import annotations

import random
from pathlib import Path

import numpy as np
import pytest
from test_design_support import context

from auditor.design import metrics
from auditor.design.lackfit import count_levels, level_counts
from auditor.design.metrics import compute_design
from auditor.formula.syntax import Ref
from auditor.locate.job import read_signs
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.workbook import Cell, Sheet, Workbook


def _x(rng: random.Random) -> list[float]:
    levels = rng.sample([-2.0, -0.0, 0.0, 0.5, 1.0, 2.0, 5.0, 10.0, 20.0], rng.randint(1, 7))
    x = [v for v in levels for _ in range(rng.choice([1, 1, 2, 3]))]
    if rng.random() < 0.5:
        rng.shuffle(x)
    return x


def _book(x: list[float]) -> tuple[Workbook, Ref, Ref]:
    cells = {(3, 1): Cell("Data", 3, 1, "Conc (mg/L)"), (3, 2): Cell("Data", 3, 2, "Absorbance")}
    for i, value in enumerate(x):
        cells[(4 + i, 1)] = Cell("Data", 4 + i, 1, value)
        cells[(4 + i, 2)] = Cell("Data", 4 + i, 2, 0.1 + 0.3 * value)
    book = Workbook("b.xlsx", "", {"Data": Sheet("Data", cells)}, [], True)
    last = 3 + len(x)
    return book, Ref("Data", 4, 1, last, 1), Ref("Data", 4, 2, last, 2)


def test_the_signs_read_from_shared_levels_are_the_signs_read_alone() -> None:
    rng = random.Random(12)
    for case in range(200):
        x = np.array(_x(rng))
        book, xr, yr = _book(x.tolist())
        counted = level_counts(x)
        assert counted is not None
        shared = read_signs(book, xr, yr, x, ["Calibration"], case % 2 == 0, counted)
        alone = read_signs(book, xr, yr, x, ["Calibration"], case % 2 == 0)
        assert shared == alone, x


def test_design_metrics_from_shared_levels_are_those_sorted_alone() -> None:
    rng = random.Random(4)
    compared = 0
    for _ in range(120):
        x = np.array(_x(rng))
        y = 1.0 + 0.5 * x + np.array([rng.gauss(0.0, 0.2) for _ in x])
        ctx = context(x, y)
        known = count_levels(ctx.data.x)
        shared = compute_design(ctx.data, ctx.fit, ctx.policy, known_levels=known)
        alone = compute_design(ctx.data, ctx.fit, ctx.policy)
        assert repr(shared.to_dict()) == repr(alone.to_dict()), x
        compared += shared.levels > 1
    assert compared >= 60


def test_an_audit_sorts_x_once_for_the_job_and_the_design(monkeypatch: pytest.MonkeyPatch) -> None:
    """The design metrics of an audit never sort x themselves: the pipeline's sort serves."""

    def refused(_x: np.ndarray) -> object:
        raise AssertionError("the design metrics sorted x again")

    monkeypatch.setattr(metrics, "count_levels", refused)
    fixtures = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
    result = audit_workbook(fixtures / "calib_bench_runs.xlsx", load_policy("auto"))
    assert result.regressions
    for regression in result.regressions:
        assert regression.design["levels"] >= 2
        assert not [f for f in regression.findings if f.check == "stat-unverifiable"]
