"""One audit run: inputs collected, policy and bindings loaded, workbooks audited (locally or
on a cluster), identities, waivers and a baseline applied, reports written."""

from __future__ import annotations

import contextlib
import os
import sys
import tomllib
from collections.abc import Callable
from datetime import UTC, datetime
from functools import partial
from pathlib import Path
from typing import Any

from auditor import __version__
from auditor.errors import UsageError
from auditor.model import AuditResult
from auditor.options import RunOptions


def timestamp_text(option: str | None) -> str:
    if option:
        return option
    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    if epoch:
        try:
            return datetime.fromtimestamp(int(epoch), tz=UTC).isoformat(timespec="seconds")
        except ValueError as exc:
            raise UsageError(
                f"SOURCE_DATE_EPOCH={epoch!r} is not a whole number of seconds"
            ) from exc
    return datetime.now(tz=UTC).isoformat(timespec="seconds")


def load_bindings(path: str | None) -> list[dict[str, Any]] | None:
    if path is None:
        return None
    try:
        data = tomllib.loads(Path(path).read_text(encoding="utf-8"))
    except FileNotFoundError as exc:
        raise UsageError(f"bindings file {path!r} does not exist") from exc
    except tomllib.TOMLDecodeError as exc:
        raise UsageError(f"bindings file {path!r} is not valid TOML: {exc}") from exc
    entries = data.get("regression", [])
    if not isinstance(entries, list) or not entries:
        raise UsageError(f"bindings file {path!r} needs one or more [[regression]] tables")
    for index, entry in enumerate(entries, start=1):
        missing = [key for key in ("x", "y") if key not in entry]
        if missing:
            raise UsageError(
                f"bindings file {path!r}: [[regression]] number {index} lacks {', '.join(missing)}"
                ' (give ranges such as x = "Data!A2:A21")'
            )
    return list(entries)


def _audit_locally(
    paths: list[Path],
    policy: Any,
    bindings: list[dict[str, Any]] | None,
    jobs: int,
    changed: bool,
    ledger_file: str | None,
    use_ledger: bool,
    time_limit: float | None,
    memory_limit_gb: float | None,
    points: str = "all",
    meanwhile: Callable[[], object] | None = None,
) -> list[Any]:
    from auditor.pipeline.batch import audit_batch
    from auditor.pipeline.limits import FileLimits

    if changed and not use_ledger:
        raise UsageError("--changed needs the ledger: drop --no-ledger")
    memory = int(memory_limit_gb * 1024**3) if memory_limit_gb else None
    limits = FileLimits(seconds=time_limit or None, memory_bytes=memory)
    ledger = None
    if use_ledger:
        from auditor.pipeline.ledger import (  # SQLite, imported when used
            Ledger,
            default_ledger_path,
        )

        ledger = Ledger(Path(ledger_file) if ledger_file else default_ledger_path())
    try:
        return audit_batch(
            paths,
            policy,
            bindings,
            jobs=jobs,
            ledger=ledger,
            changed=changed,
            limits=limits,
            progress=True,
            points=points,
            meanwhile=meanwhile,
        )
    finally:
        if ledger is not None:
            ledger.close()


def _points_read(options: RunOptions) -> str:
    """Which regressions' data points the reports of this run show: "findings" when only the
    workbook's detail sheets of regressions with a finding do, "all" otherwise (review.html plots
    every regression; ``--detail all`` gives each a sheet; nothing written, the caller keeps it)."""
    only_findings = options.write and options.detail == "findings" and "html" not in options.formats
    return "findings" if only_findings else "all"


def run_audit(inputs: list[str], out_dir: Path, options: RunOptions | None = None) -> AuditResult:
    """Audit ``inputs`` as ``options`` say; write the reports into ``out_dir``."""
    from auditor.pipeline import collector

    with contextlib.ExitStack() as run:
        with collector.paused():  # the audit's modules, at once (see pipeline.collector)
            import auditor.checks
            import auditor.pipeline.audit
            import auditor.pipeline.batch  # noqa: F401

            run.enter_context(collector.frozen())  # before any collection walks them
        return _run_audit(inputs, out_dir, options)


def _run_audit(inputs: list[str], out_dir: Path, options: RunOptions | None) -> AuditResult:
    from auditor.checks import catalogue
    from auditor.pipeline.inputs import scan_inputs
    from auditor.policy import load_policy
    from auditor.read.open import assert_safe_xml
    from auditor.report import prepare_reporters, write_reports
    from auditor.report.output import prepare_out_dir, staged_outputs
    from auditor.review.identity import assign_identities, audit_root
    from auditor.review.waivers import apply_waivers, default_waiver_file, load_waivers

    options = options or RunOptions()
    assert_safe_xml()
    policy = load_policy(options.policy)
    bindings = load_bindings(options.bindings_file)
    missing = [p for p in inputs if not Path(p).exists()]
    if missing:
        raise UsageError(f"no such file or folder: {', '.join(repr(m) for m in missing)}")
    scan = scan_inputs(inputs, out_dir if options.write else None)
    paths = scan.workbooks
    if not paths:
        others = "".join(f"\n  skipped {s.path}: {s.reason}" for s in scan.skipped)
        raise UsageError(
            f"no .xlsx or .xlsm workbooks found in {', '.join(repr(p) for p in inputs)}{others}"
        )
    if options.write:
        prepare_out_dir(out_dir)  # before the audit: a folder that cannot be written costs nothing
    # Read the baseline and waivers first: a typo in them should not cost a whole audit.
    root = audit_root(inputs)
    waiver_path = Path(options.waivers_file) if options.waivers_file else default_waiver_file(root)
    waivers = load_waivers(waiver_path, required=options.waivers_file is not None)
    baseline = None
    if options.baseline_file:
        from auditor.review.baseline import load_baseline

        baseline = load_baseline(Path(options.baseline_file))
    if options.cluster:
        from auditor.pipeline.cluster import audit_on_cluster

        workbooks = audit_on_cluster(
            paths, policy, bindings, cluster=options.cluster, ship_bytes=options.ship_bytes
        )
    else:
        workbooks = _audit_locally(
            paths,
            policy,
            bindings,
            options.jobs,
            options.changed,
            options.ledger_file,
            options.use_ledger,
            options.time_limit,
            options.memory_limit_gb,
            _points_read(options),
            # the reporters' imports, while the workers audit
            partial(prepare_reporters, options.formats) if options.write else None,
        )
    result = AuditResult(
        version=__version__,
        policy=policy.name,
        workbooks=workbooks,
        generated=timestamp_text(options.timestamp),
        inputs=[str(p) for p in inputs],
        checks=catalogue(),
        skipped=scan.skipped,
    )
    assign_identities(result, root)
    for unused in apply_waivers(result, waivers):
        print(
            f"warning: {waiver_path}: the waiver of {unused.identity} ({unused.workbook} "
            f"{unused.cell} {unused.check}) matches no finding of this run; remove it if fixed",
            file=sys.stderr,
        )
    if baseline is not None:
        from auditor.review.baseline import apply_baseline, describe_outcome

        outcome = apply_baseline(result, baseline, root)
        result = outcome.result
        for line in describe_outcome(outcome):
            print(line)
    if options.write:
        # Copies first: the Overview lists them. All files of the set are renamed into place
        # together at the end, so a refusal, a full disk or Ctrl-C leaves no partial set.
        try:
            with staged_outputs():
                copies = []
                if options.annotate:
                    from auditor.review.annotate import annotate_copies  # openpyxl's writer

                    copies = annotate_copies(result, out_dir, paths)
                write_reports(
                    result,
                    out_dir,
                    list(options.formats),
                    input_paths=[Path(p) for p in paths],
                    copies=copies,
                    detail=options.detail,
                )
        except OSError as exc:
            raise UsageError(
                f"cannot write the reports into {str(out_dir)!r} ({exc.strerror or exc}); "
                "nothing was written: free space or choose another folder with --out"
            ) from exc
        for copy in copies:
            if copy.error:
                print(f"error: {copy.source}: {copy.error}", file=sys.stderr)
            else:
                print(f"  wrote {copy.copy}")
    return result
