"""Review-pipeline commands: ``regaudit baseline create`` and ``regaudit waive``."""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from auditor import __version__
from auditor.cli.runner import load_bindings, run_audit
from auditor.errors import UsageError
from auditor.model import AuditResult
from auditor.options import RunOptions

REPORT_FILES = {
    "json": "audit.json",
    "text": "summary.txt",
    "xlsx": "audit.xlsx",
    "sarif": "audit.sarif",
    "html": "review.html",
}


def cmd_baseline_create(args: argparse.Namespace) -> int:
    from auditor.pipeline.audit import collect_inputs
    from auditor.review.baseline import create_baseline, save_baseline
    from auditor.review.identity import audit_root

    options = RunOptions(
        policy=args.policy,
        jobs=args.jobs,
        bindings_file=args.bindings,
        timestamp=args.timestamp,
        cluster=args.cluster,
        ship_bytes=args.ship_bytes,
        waivers_file=None,
        write=False,
    )
    result = run_audit(args.paths, Path("."), options)
    if not any(w.status != "unreadable" for w in result.workbooks):
        raise UsageError("none of the inputs could be read, so there is nothing to record")
    baseline = create_baseline(result, audit_root(args.paths))
    target = save_baseline(baseline, Path(args.out), inputs=collect_inputs(args.paths))
    print(f"recorded {len(baseline.entries)} finding(s) of {len(result.workbooks)} workbook(s)")
    print(f"  wrote {target}; commit it and audit with --baseline {target}")
    return 0


def cmd_waive(args: argparse.Namespace) -> int:
    from auditor.pipeline.audit import audit_workbook
    from auditor.policy import load_policy
    from auditor.review.identity import assign_identities, relative_workbook_path
    from auditor.review.waivers import (
        WAIVER_FILENAME,
        add_waiver,
        choose_finding,
        new_waiver,
        waiver_for,
    )

    if bool(args.identity) == bool(args.workbook):
        raise UsageError("give either --identity ID, or --workbook FILE with --cell SHEET!A1")
    if args.identity:
        if not args.file:
            raise UsageError(f"--identity needs --file, e.g. --file DIR/{WAIVER_FILENAME}")
        target = Path(args.file)
        waiver = new_waiver(args.identity, args.reason, args.name, args.date)
    else:
        if not args.cell:
            raise UsageError("--workbook needs --cell, e.g. --cell 'Line 2!E4'")
        book = Path(args.workbook)
        if not book.is_file():
            raise UsageError(f"no such workbook: {args.workbook!r}")
        target = Path(args.file) if args.file else book.parent / WAIVER_FILENAME
        root = Path(os.path.abspath(target.parent))  # the waiver file sits at the audited root
        audited = audit_workbook(book, load_policy(args.policy), load_bindings(args.bindings))
        result = assign_identities(AuditResult(__version__, args.policy, [audited]), root)
        finding = choose_finding(result, str(book), args.cell, args.check)
        relative = relative_workbook_path(book, root)
        waiver = waiver_for(finding, relative, args.reason, args.name, args.date)
    add_waiver(target, waiver)
    print(f"waived {waiver.identity} in {target}: {waiver.note}")
    return 0


def cmd_record(args: argparse.Namespace) -> int:
    from auditor.cli.outcome import outcome_line
    from auditor.cli.record import write_record

    formats = tuple(args.format.split(",")) if args.format else ("json", "text", "xlsx")
    result, unused = write_record(
        args.paths,
        Path(args.out),
        args.policy,
        formats=formats,
        bindings_file=args.bindings,
        waivers_file=args.waivers,
        ledger_file=args.ledger,
        timestamp=args.timestamp,
    )
    for waiver in unused:
        print(
            f"warning: the waiver of {waiver.identity} ({waiver.workbook} {waiver.cell} "
            f"{waiver.check}) matches no finding; remove it if fixed",
            file=sys.stderr,
        )
    waived = sum(1 for f in result.all_findings() if f.decision)
    print(outcome_line(result))
    print(f"  {waived} finding(s) waived; written from the ledger, nothing audited again")
    for name in formats:
        print(f"  wrote {Path(args.out) / REPORT_FILES[name]}")
    return 0


def cluster_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument(
        "--cluster",
        default=None,
        metavar="ADDRESS",
        help="audit on Dask: a scheduler address (tcp://host:8786) or local:N for N local "
        "workers; needs pip install 'regaudit[cluster]'",
    )
    parser.add_argument(
        "--ship-bytes",
        action="store_true",
        help="with --cluster: send each file's bytes to the workers instead of its path",
    )


def add_review_parsers(sub: argparse._SubParsersAction, cores: int) -> None:  # type: ignore[type-arg]
    baseline = sub.add_parser("baseline", help="record today's findings to see only new ones")
    baseline_sub = baseline.add_subparsers(dest="baseline_command", required=True)
    create = baseline_sub.add_parser(
        "create", help="audit PATH... and record every finding in a baseline file"
    )
    create.add_argument("paths", nargs="+", metavar="PATH", help=".xlsx/.xlsm files or folders")
    create.add_argument(
        "--out", required=True, metavar="FILE", help="baseline file to write (JSON)"
    )
    create.add_argument(
        "--policy", default="auto", help="policy the audits will use (default: auto, as audit)"
    )
    create.add_argument("--jobs", type=int, default=cores, metavar="N", help="parallel workers")
    create.add_argument(
        "--bindings",
        default=None,
        metavar="FILE",
        help="TOML file mapping the cells of a workbook template (as for audit)",
    )
    create.add_argument("--timestamp", default=None, help="date recorded in the file")
    cluster_options(create)
    create.set_defaults(handler=cmd_baseline_create)

    waive = sub.add_parser(
        "waive",
        help="accept one finding with a reason, a name and a date",
        description="Record a waiver in the TOML waiver file. Name the finding by the "
        "'identity' shown in audit.json / audit.sarif, or by workbook, cell and check.",
    )
    waive.add_argument("--identity", default=None, metavar="ID", help="16 hex digits")
    waive.add_argument("--workbook", default=None, metavar="FILE", help="the workbook")
    waive.add_argument("--cell", default=None, metavar="SHEET!A1", help="the finding's cell")
    waive.add_argument("--check", default=None, metavar="ID", help="when a cell has several")
    waive.add_argument("--reason", required=True, help="why the finding is accepted")
    waive.add_argument("--name", required=True, help="who accepts it")
    waive.add_argument("--date", default=None, metavar="YYYY-MM-DD", help="default: today")
    waive.add_argument(
        "--file",
        default=None,
        metavar="WAIVERS",
        help="waiver file (default with --workbook: regaudit-waivers.toml beside it)",
    )
    waive.add_argument(
        "--policy",
        default="auto",
        help="policy name or TOML file the finding was reported under (default: auto, as audit)",
    )
    waive.add_argument(
        "--bindings",
        default=None,
        metavar="FILE",
        help="TOML file mapping the cells of a workbook template (as for audit)",
    )
    waive.set_defaults(handler=cmd_waive)

    record = sub.add_parser(
        "record",
        help="write the reports of a folder already audited, with today's review decisions, "
        "from the ledger (nothing is audited again)",
        description="Rewrite audit.xlsx, summary.txt and audit.json for PATH... from the "
        "ledger: each file is found by the SHA-256 of its present content under the same "
        "policy, bindings and regaudit version, and the waivers are applied. A file changed "
        "or never audited so is named and nothing is written.",
    )
    record.add_argument("paths", nargs="+", metavar="PATH", help=".xlsx/.xlsm files or folders")
    record.add_argument("--out", required=True, metavar="DIR", help="folder for the reports")
    record.add_argument(
        "--policy", default="auto", help="policy the files were audited under (default: auto)"
    )
    record.add_argument(
        "--bindings", default=None, metavar="FILE", help="bindings file the audit used, if any"
    )
    record.add_argument(
        "--waivers",
        default=None,
        metavar="FILE",
        help="review decisions (default: regaudit-waivers.toml in the audited folder, if any)",
    )
    record.add_argument(
        "--ledger", default=None, metavar="FILE", help="the ledger to read (default as for audit)"
    )
    record.add_argument(
        "--format",
        default=None,
        metavar="LIST",
        help="comma-separated outputs among json,text,xlsx,sarif,html (default: json,text,xlsx)",
    )
    record.add_argument(
        "--timestamp", default=None, help="date shown in the reports (for reproducible output)"
    )
    record.set_defaults(handler=cmd_record)
