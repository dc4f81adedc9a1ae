"""The audit of one workbook and of a batch: read → locate → extract → fit → checks.

Each step is a plain function over plain data; only :mod:`auditor.read.workbook` touches files and
nothing here writes any. A broken file becomes an ``unreadable`` result with its reason, and the
batch goes on.
"""

from __future__ import annotations

import gc
from collections.abc import Iterable
from functools import partial
from pathlib import Path
from typing import Any

from auditor.checks import run_regression_checks, run_workbook_checks
from auditor.checks.formula_support import reached_cells
from auditor.checks.merge import one_per_mistake
from auditor.compare.reported import build_reported
from auditor.context import RegressionContext, WorkbookContext
from auditor.design.calibration import prepare
from auditor.design.calibration_summary import summary_row
from auditor.design.inputs import DesignInputReader
from auditor.design.lackfit import count_levels
from auditor.errors import UnreadableWorkbook
from auditor.evaluation.evaluator import Evaluator
from auditor.extract.entry import extract
from auditor.fit.ols import FitResult, fit_ols
from auditor.locate.locator import Locator, RegressionSpec, locate
from auditor.locate.pasted_spec import pasted_intended, unsourced_result
from auditor.locate.typed_spec import typed_unsourced_result
from auditor.model import DataPoint, Finding, RegressionResult, WorkbookResult
from auditor.pipeline.collector import paused
from auditor.pipeline.inputs import scan_inputs
from auditor.pipeline.isolate import guarded, unverifiable_regression
from auditor.pipeline.shared_floats import shared_floats
from auditor.policy import Policy
from auditor.read.open import read_workbook, sha256_of
from auditor.read.workbook import Workbook


def collect_inputs(paths: Iterable[str | Path]) -> list[Path]:
    """Files as given, and folders searched recursively for .xlsx/.xlsm (sorted, no duplicates);
    regaudit's own reports and annotated copies are left out (``auditor.pipeline.inputs``)."""
    return scan_inputs(paths).workbooks


def audit_regression(
    workbook: Workbook,
    evaluator: Evaluator,
    spec: RegressionSpec,
    policy: Policy,
    inputs_reader: DesignInputReader | None = None,
) -> RegressionResult:
    result, fit = _audit_unannotated(workbook, evaluator, spec, policy, inputs_reader)
    if fit is not None:
        _annotate_points(result.data, fit)
    return result


def _audit_unannotated(
    workbook: Workbook,
    evaluator: Evaluator,
    spec: RegressionSpec,
    policy: Policy,
    inputs_reader: DesignInputReader | None = None,
) -> tuple[RegressionResult, FitResult | None]:
    """The regression's result with its data points not yet given their fitted values (which
    only the reports read), and the fit that gives them (None: nothing was fitted)."""
    unsourced = unsourced_result(spec) or typed_unsourced_result(spec)
    if unsourced is not None:
        return unsourced, None  # a table with no data found: listed, nothing to recompute
    data = extract(workbook, evaluator, spec)
    reader = inputs_reader or DesignInputReader(workbook, evaluator)
    inputs = reader.read(spec)
    # The job decides the policy (auto: calibration curves by their words) before anything is
    # judged; for a calibration, what the workbook computes from the curve is read here.
    levels = count_levels(data.x)  # one sort of x for the job's signs and the design metrics
    policy, job, calibration = prepare(
        workbook, evaluator, spec, data, inputs, reader.parsed, policy, levels[1]
    )
    fit = fit_ols(data.x, data.y, intercept=spec.intercept, confidence=policy.get("confidence"))
    intended = fit.stats()
    intended.update(pasted_intended(spec, fit))
    reported = build_reported(
        spec,
        evaluator,
        intended,
        workbook.stored_values,
        policy.get("stored_relative_tolerance"),
        fit.conditioning,
    )
    context = RegressionContext(
        spec,
        data,
        fit,
        reported,
        policy,
        workbook.stored_values,
        inputs,
        calibration=calibration,
        levels=levels,
    )
    findings = run_regression_checks(context)
    points = list(data.points)
    result = RegressionResult(
        id=spec.id,
        sheet=spec.sheet,
        x_range=spec.range_texts[0] if spec.range_texts else spec.x.address,
        y_range=spec.range_texts[1] if spec.range_texts else spec.y.address,
        found_by=spec.found_by,
        n=data.n,
        intercept=spec.intercept,
        x_columns=spec.x_columns,
        intended=intended,
        reported=reported,
        design=context.design_metrics().to_dict(),
        findings=findings,
        data=points,
        intended_x_range=data.intended_x_range,
        intended_y_range=data.intended_y_range,
        label=spec.label,
        policy=policy.name,
        policy_reason=job.why,
        calibration=summary_row(spec, calibration, policy, findings),
        conditioning=fit.conditioning.to_dict() if fit.conditioning is not None else {},
    )
    return result, fit


def _annotate_points(points: list[DataPoint], fit: FitResult) -> None:
    """Give each used point its fitted value, residual, leverage and Cook's distance."""
    used = [p for p in points if p.used]
    if len(fit.fitted) != len(used):
        return  # the fit is undefined (too few points, constant x): nothing to attach
    # tolist() gives the same Python floats as float() of each element, in one C call.
    # The fitted values and leverages (functions of x alone, which repeats) share their floats.
    fitted, residuals = shared_floats(fit.fitted), fit.residuals.tolist()
    leverage = shared_floats(fit.leverage) if len(fit.leverage) else [None] * len(used)
    for point, value, residual, weight in zip(used, fitted, residuals, leverage, strict=True):
        point.fitted, point.residual, point.leverage = value, residual, weight
    if len(fit.cooks_distance):
        for point, distance in zip(used, fit.cooks_distance.tolist(), strict=True):
            point.cooks_distance = distance


def audit_workbook(
    path: str | Path, policy: Policy, bindings: list[dict[str, Any]] | None = None
) -> WorkbookResult:
    # The collector held back from the reading on: the cells (the reader leaves no cycle among
    # them) are freed with the workbook and never walked (a tenth of the reading time of small
    # workbooks otherwise, in the collection that followed the reading).
    with paused():
        return _audit_workbook(path, policy, bindings)


def _audit_workbook(
    path: str | Path, policy: Policy, bindings: list[dict[str, Any]] | None = None
) -> WorkbookResult:
    path = Path(path)
    try:
        workbook = read_workbook(path)
    except UnreadableWorkbook as exc:
        digest = sha256_of(path) if path.is_file() else ""
        return WorkbookResult(str(path), digest, "unreadable", error=str(exc), failure="file")
    # The collector held back while the workbook is audited: what the audit makes (parsed
    # formulas, points, results) is walked once, when the workbook is let go below, not again
    # at every step of its growth (a fifth of the CPU of a large workbook otherwise).
    with paused():
        evaluator = Evaluator(workbook)
        locator = Locator(workbook, bindings)
        locator.evaluator = evaluator  # recognisers that test what a formula computes share it
        specs = locate(workbook, bindings, locator)
        reader = DesignInputReader(workbook, evaluator, locator.parsed)
        audited = [
            guarded(
                partial(_audit_unannotated, workbook, evaluator, spec, policy, reader),
                partial(_unverifiable_unannotated, spec),
            )
            for spec in specs
        ]
        regressions = [result for result, _ in audited]
        context = WorkbookContext(
            stored_values=workbook.stored_values,
            formula_count=len(workbook.formula_cells()),
            unparsed=[(cell.address, why) for cell, why in locator.parse_errors],
            regressions=len(regressions),
            workbook=workbook,
            specs=specs,
            results=regressions,
            parsed=locator.parsed,
            policy=policy,
            evaluator=evaluator,
        )
        kept = _route(run_workbook_checks(context), regressions)
        for spec, result in zip(specs, regressions, strict=True):
            result.findings = guarded(
                partial(one_per_mistake, result.findings, partial(_reach, spec, locator=locator)),
                partial(_as_they_are, result.findings),
            )
        # A regression formula that fails (#VALUE!) is a regression all the same, and audited.
        broken = any(f.check == "regression-cell-error" for f in kept)
        outcome = WorkbookResult(
            path=str(path),
            sha256=workbook.sha256,
            status="audited" if regressions or broken else "no-regressions",
            stored_values=workbook.stored_values,
            regressions=regressions,
            findings=kept,
        )
        # The cells are let go before the points take their four numbers each: on a sheet of a
        # million rows the two would otherwise be held at once (hundreds of MB).
        del context, reader, locator, evaluator, workbook
        gc.collect(0)  # the young objects (the audit's): any cycle among them freed here
        for result, fit in audited:
            if fit is not None:
                guarded(partial(_annotate_points, result.data, fit), _not_annotated)
        return outcome


def _unverifiable_unannotated(
    spec: RegressionSpec, exc: BaseException
) -> tuple[RegressionResult, FitResult | None]:
    return unverifiable_regression(spec, exc), None


def _not_annotated(_exc: BaseException) -> None:
    return None  # the points keep no fitted values; the audit's findings stand


def _as_they_are(findings: list[Finding], _exc: BaseException) -> list[Finding]:
    return findings


def _reach(spec: RegressionSpec, cell: str, *, locator: Locator) -> list[str]:
    """The reported cells a fault at ``cell`` spoils: those built on it, and the other cells of
    the array block it belongs to (one LINEST computes them all)."""
    reached = reached_cells(spec, cell, locator.parsed)
    blocks = {
        stat.cell.array_ref
        for stat in spec.stats.values()
        if stat.how == "linest-block" and stat.cell.address in reached
    }
    same_block = [
        stat.cell.address
        for stat in spec.stats.values()
        if stat.how == "linest-block" and stat.cell.array_ref in blocks
    ]
    return list(dict.fromkeys(reached + same_block))


def _route(findings: list[Finding], regressions: list[RegressionResult]) -> list[Finding]:
    """A workbook-level finding that starts at a regression's reported cell is shown with that
    regression (sibling blocks, pasted values, links); the rest stay with the workbook."""
    owners = {value.cell: r for r in regressions for value in r.reported.values()}
    # A regression with no reported cell (a chart trendline) is known by its y range.
    owners.update({r.y_range: r for r in regressions if not r.reported and r.y_range not in owners})
    kept: list[Finding] = []
    for finding in findings:
        owner = owners.get(finding.cells[0]) if finding.cells else None
        (owner.findings if owner is not None else kept).append(finding)
    return kept


__all__ = ["audit_regression", "audit_workbook", "collect_inputs"]
