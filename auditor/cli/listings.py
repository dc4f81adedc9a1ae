"""``regaudit rules`` and ``regaudit history``: listings printed as tables."""

from __future__ import annotations

import argparse
from pathlib import Path

from auditor.errors import UsageError


def cmd_rules(args: argparse.Namespace) -> int:
    from tabulate import tabulate  # here, not at start-up: an audit does not need it

    from auditor.checks import REGISTRY
    from auditor.policy import load_policy

    rows = [(c.id, c.family, c.summary, ", ".join(c.thresholds)) for c in REGISTRY.values()]
    headers = ["check", "family", "what it finds", "thresholds it reads"]
    print(tabulate(rows, headers=headers, tablefmt="simple"))
    policy = load_policy(args.policy)
    print(f"\npolicy {policy.name!r}: {policy.description}")
    rows2 = [(k, f"{t.value:g}", t.source) for k, t in policy.thresholds.items()]
    print(tabulate(rows2, headers=["threshold", "value", "source"], tablefmt="simple"))
    return 0


def cmd_history(args: argparse.Namespace) -> int:
    from tabulate import tabulate

    from auditor.pipeline.ledger import Ledger, default_ledger_path

    path = Path(args.ledger) if args.ledger else default_ledger_path()
    if not path.exists():
        raise UsageError(f"no ledger at {str(path)!r}: run an audit first, or give --ledger")
    with Ledger(path) as ledger:
        entries = ledger.history(args.file)
    if not entries:
        print(f"{args.file}: no audits recorded in {path}")
        return 0
    rows = [
        (
            e.audited_at,
            e.sha256[:12],
            f"{e.size:,}",
            e.policy,
            e.version,
            e.status,
            e.regressions,
            ", ".join(f"{n} {s}" for s, n in e.findings.items()) or "none",
            f"{e.seconds:.2f} s",
        )
        for e in entries
    ]
    headers = [
        "audited (UTC)",
        "sha256",
        "bytes",
        "policy",
        "version",
        "status",
        "regressions",
        "findings",
        "time",
    ]
    print(tabulate(rows, headers=headers))
    return 0
