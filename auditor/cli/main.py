"""Command line: ``regaudit audit|rules|demo`` (``python -m auditor`` does the same).

Exit codes: 0 no finding at or above ``--fail-on``; 1 such findings; 2 a usage error, or no
input could be read.
"""

from __future__ import annotations

import argparse
import os
import shutil
import sys
import time
from pathlib import Path

from auditor import __version__
from auditor.cli.listings import cmd_history, cmd_rules
from auditor.cli.outcome import outcome_line
from auditor.cli.plan import add_plan_parser
from auditor.cli.review import REPORT_FILES, add_review_parsers, cluster_options
from auditor.cli.runner import run_audit
from auditor.errors import PolicyError, RegauditError, UsageError
from auditor.model import SEVERITY_RANK, AuditResult
from auditor.options import DEFAULT_FORMATS as FORMATS
from auditor.options import RunOptions
from auditor.pipeline.limits import default_jobs

FAIL_CHOICES = ("critical", "major", "minor", "info", "never")
DEMO_FORMATS = (*FORMATS, "html")  # the demo shows the review page too
FORMAT_CHOICES = (*FORMATS, "sarif", "html")  # audit.sarif and review.html when asked for

EPILOG = """exit codes:
  0  no finding at or above --fail-on (default: critical)
  1  at least one finding at or above --fail-on
  2  a usage error, or none of the inputs could be read
waived findings (regaudit-waivers.toml) and findings in --baseline never give exit 1
"""


INTERRUPTED = (
    "interrupted: no report was written (files finished before the interrupt are kept in the "
    "ledger; --changed carries on from there)"
)


def _print_outcome(result: AuditResult, out_dir: Path, formats: tuple[str, ...]) -> None:
    for workbook in result.workbooks:
        if workbook.status == "unreadable":
            print(f"error: {workbook.path}: {workbook.error}", file=sys.stderr)
    for skipped in result.skipped:
        print(f"skipped {skipped.path}: {skipped.reason}", file=sys.stderr)
    print(outcome_line(result))
    for fmt in formats:
        print(f"  wrote {out_dir / REPORT_FILES[fmt]}")


def exit_code(result: AuditResult, fail_on: str) -> int:
    from auditor.review.waivers import counts_for_gate

    if not any(w.status != "unreadable" for w in result.workbooks):
        return 2
    if fail_on == "never":
        return 0
    limit = SEVERITY_RANK[fail_on]
    failing = [
        f
        for f in result.all_findings()
        if SEVERITY_RANK[f.severity] <= limit and counts_for_gate(f)
    ]
    return 1 if failing else 0


def cmd_audit(args: argparse.Namespace) -> int:
    formats = tuple(args.format.split(",")) if args.format else FORMATS
    bad = [f for f in formats if f not in FORMAT_CHOICES]
    if bad:
        raise UsageError(f"unknown format {bad[0]!r}; choose from {', '.join(FORMAT_CHOICES)}")
    started = time.perf_counter()
    options = RunOptions(
        policy=args.policy,
        jobs=args.jobs,
        formats=formats,
        bindings_file=args.bindings,
        timestamp=args.timestamp,
        cluster=args.cluster,
        ship_bytes=args.ship_bytes,
        waivers_file=args.waivers,
        baseline_file=args.baseline,
        annotate=args.annotate,
        changed=args.changed,
        ledger_file=args.ledger,
        use_ledger=not args.no_ledger,
        time_limit=args.time_limit,
        memory_limit_gb=args.memory_limit,
        detail=args.detail,
    )
    result = run_audit(args.paths, Path(args.out), options)
    _print_outcome(result, Path(args.out), formats)
    print(f"  in {time.perf_counter() - started:.1f} s")
    return exit_code(result, args.fail_on)


def demo_workbooks() -> list[Path]:
    from importlib import resources

    folder = resources.files("auditor.fixtures").joinpath("workbooks")
    return sorted(Path(str(p)) for p in folder.iterdir() if str(p).endswith(".xlsx"))


def cmd_demo(args: argparse.Namespace) -> int:
    target = Path(args.dir)
    inputs = target / "workbooks"
    inputs.mkdir(parents=True, exist_ok=True)
    for source in demo_workbooks():
        shutil.copyfile(source, inputs / source.name)
    print(f"wrote {len(demo_workbooks())} demo workbooks to {inputs}")
    out_dir = target / "audit"
    options = RunOptions(
        policy=args.policy,
        jobs=args.jobs,
        timestamp=args.timestamp,
        annotate=True,
        formats=DEMO_FORMATS,
    )
    result = run_audit([str(inputs)], out_dir, options)
    _print_outcome(result, out_dir, DEMO_FORMATS)
    print(
        f"open {out_dir / 'review.html'} in a browser or {out_dir / 'audit.xlsx'}, "
        f"or read {out_dir / 'summary.txt'}"
    )
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="regaudit",
        description="Audit the regressions in spreadsheet workbooks: recompute every reported "
        "statistic from the workbook's own data and explain each disagreement.",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"regaudit {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)
    cores = default_jobs()

    audit = sub.add_parser(
        "audit",
        help="audit workbooks and folders of workbooks",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    audit.add_argument("paths", nargs="+", metavar="PATH", help=".xlsx/.xlsm files or folders")
    audit.add_argument(
        "--policy",
        default="auto",
        help="auto (per regression: calibration curves by their words), a policy name or a .toml",
    )
    audit.add_argument("--out", default="regaudit-out", metavar="DIR", help="output folder")
    audit.add_argument("--jobs", type=int, default=cores, metavar="N", help="parallel workers")
    audit.add_argument(
        "--fail-on",
        default="critical",
        choices=FAIL_CHOICES,
        help="exit 1 when a finding is at least this severe (default: critical)",
    )
    audit.add_argument(
        "--format",
        default=None,
        metavar="LIST",
        help="comma-separated outputs among json,text,xlsx,sarif,html (default: json,text,xlsx; "
        "html is review.html, a page with plots per regression)",
    )
    audit.add_argument(
        "--bindings",
        default=None,
        metavar="FILE",
        help="TOML file mapping the cells of a workbook template",
    )
    audit.add_argument("--timestamp", default=None, help="date shown in reports (reproducible)")
    audit.add_argument(
        "--baseline",
        default=None,
        metavar="FILE",
        help="report only findings not recorded in FILE (from 'regaudit baseline create'), "
        "and list recorded ones that no longer occur",
    )
    audit.add_argument(
        "--waivers",
        default=None,
        metavar="FILE",
        help="accepted findings (default: regaudit-waivers.toml in the audited folder, if any)",
    )
    audit.add_argument(
        "--annotate",
        action="store_true",
        help="also write NAME.audited.xlsx into --out for each workbook with findings: a note "
        "(message and fix) and a light fill on every flagged cell; the originals are never changed",
    )
    audit.add_argument(
        "--changed",
        action="store_true",
        help="re-audit only files whose content changed since the last run with the same policy "
        "and version; reuse the ledger's results for the rest (reports still cover every file)",
    )
    audit.add_argument(
        "--ledger",
        default=None,
        metavar="FILE",
        help="SQLite ledger of past audits (default: $REGAUDIT_LEDGER, else "
        "~/.local/state/regaudit/ledger.sqlite)",
    )
    audit.add_argument("--no-ledger", action="store_true", help="record nothing in the ledger")
    audit.add_argument(
        "--detail",
        default="findings",
        choices=("findings", "all"),
        help="detail sheets in audit.xlsx: for each regression with a finding (default), or all",
    )
    audit.add_argument(
        "--time-limit",
        type=float,
        default=600.0,
        metavar="SECONDS",
        help="stop a file that takes longer and report it (default: 600; 0: no limit)",
    )
    audit.add_argument(
        "--memory-limit",
        type=float,
        default=4.0,
        metavar="GB",
        help="stop a file whose worker needs more memory and report it (default: 4; 0: no limit)",
    )
    cluster_options(audit)
    audit.set_defaults(handler=cmd_audit)

    add_review_parsers(sub, cores)
    add_plan_parser(sub)

    history = sub.add_parser("history", help="show the past audits of a file from the ledger")
    history.add_argument("file", metavar="FILE", help="a workbook audited before")
    history.add_argument("--ledger", default=None, metavar="FILE", help="the ledger to read")
    history.set_defaults(handler=cmd_history)

    rules = sub.add_parser("rules", help="list the checks and the policy's thresholds")
    rules.add_argument(
        "--policy",
        default="general",
        help="policy name or TOML file whose thresholds to list (default: general)",
    )
    rules.set_defaults(handler=cmd_rules)

    demo = sub.add_parser("demo", help="write the demo workbooks and audit them")
    demo.add_argument(
        "dir",
        nargs="?",
        default="regaudit-demo",
        metavar="DIR",
        help="folder to create: DIR/workbooks gets the demo workbooks, DIR/audit the reports "
        "(default: regaudit-demo)",
    )
    demo.add_argument(
        "--policy",
        default="auto",
        help="auto (calibration curves by their words), a policy name or a .toml (default: auto)",
    )
    demo.add_argument(
        "--jobs", type=int, default=cores, metavar="N", help="parallel workers (default: cores)"
    )
    demo.add_argument(
        "--timestamp", default=None, help="date shown in the reports (for reproducible output)"
    )
    demo.set_defaults(handler=cmd_demo)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.handler(args))
    except (UsageError, PolicyError) as exc:
        print(f"error: {exc}", file=sys.stderr)
        return 2
    except RegauditError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(INTERRUPTED, file=sys.stderr)
        return 130  # 128 + SIGINT, as shells report it
    except BrokenPipeError:
        # The reader of our output went away (`regaudit rules | head`): stop quietly, and keep
        # Python from complaining again when it flushes stdout at exit.
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
