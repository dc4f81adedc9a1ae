"""Same answers before and after a speed change: the audit.json of a corpus, volatile fields gone.

    python benchmarks/same_results.py save /tmp/before.json [PATH ...]
    python benchmarks/same_results.py compare /tmp/before.json [PATH ...]

Without PATHs the corpus is every workbook under fixtures/ (the demo workbooks that
``regaudit demo`` copies, and the edge cases) and the small benchmark workbooks of corpus.py
(written into the system's temporary folder when missing). Each workbook is audited on its own,
in-process, through the whole run (policy auto, identities, waivers), JSON the only output; the
document is kept with the run's date, the folders of paths and any duration removed. ``compare``
prints the first differences and exits 1 when there are any. Never part of the test suite.
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path
from typing import Any

sys.path.insert(0, str(Path(__file__).resolve().parent))
import corpus  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
VOLATILE_KEYS = {"generated", "seconds", "duration", "elapsed", "inputs"}


def default_corpus() -> list[Path]:
    paths = sorted(ROOT.joinpath("fixtures").rglob("*.xlsx"))
    folder = Path(tempfile.gettempdir()) / "regaudit-bench"
    paths.append(corpus.ensure(corpus.SMALL, folder))
    paths.append(corpus.ensure(corpus.MEDIUM, folder))
    paths.extend(corpus.ensure_many(200, folder / "batch_200")[:12])
    return paths


def _strip(value: Any) -> Any:
    if isinstance(value, dict):
        return {k: _strip(v) for k, v in value.items() if k not in VOLATILE_KEYS}
    if isinstance(value, list):
        return [_strip(v) for v in value]
    if isinstance(value, str) and "/" in value and value.endswith((".xlsx", ".xlsm")):
        return Path(value).name
    return value


def audit_documents(paths: list[Path]) -> dict[str, Any]:
    from auditor.cli.runner import run_audit
    from auditor.options import RunOptions
    from auditor.report.json import audit_document

    documents: dict[str, Any] = {}
    with tempfile.TemporaryDirectory() as scratch:
        for path in paths:
            options = RunOptions(
                policy="auto",  # the command line's default
                jobs=0,
                formats=("json",),
                timestamp="2000-01-01T00:00:00+00:00",
                write=False,
                use_ledger=False,
            )
            result = run_audit([str(path)], Path(scratch), options)
            documents[str(path.relative_to(ROOT) if path.is_relative_to(ROOT) else path.name)] = (
                _strip(audit_document(result))
            )
    return documents


def _differences(before: Any, after: Any, where: str, found: list[str]) -> None:
    if len(found) >= 20:
        return
    if isinstance(before, dict) and isinstance(after, dict):
        for key in before.keys() | after.keys():
            if key not in before or key not in after:
                found.append(f"{where}.{key}: only {'after' if key in after else 'before'}")
            else:
                _differences(before[key], after[key], f"{where}.{key}", found)
    elif isinstance(before, list) and isinstance(after, list) and len(before) == len(after):
        for index, (b, a) in enumerate(zip(before, after, strict=True)):
            _differences(b, a, f"{where}[{index}]", found)
    elif before != after:
        found.append(f"{where}: {str(before)[:120]!r} → {str(after)[:120]!r}")


def main(argv: list[str]) -> int:
    if len(argv) < 2 or argv[0] not in ("save", "compare"):
        print(__doc__)
        return 2
    command, store = argv[0], Path(argv[1])
    paths = [Path(p) for p in argv[2:]] or default_corpus()
    documents = audit_documents(paths)
    if command == "save":
        store.write_text(json.dumps(documents, indent=1, sort_keys=True, default=str))
        print(f"saved the audits of {len(documents)} workbooks to {store}")
        return 0
    before = json.loads(store.read_text())
    after = json.loads(json.dumps(documents, sort_keys=True, default=str))
    found: list[str] = []
    _differences(before, after, "", found)
    if found:
        print(f"{len(found)}+ differences:\n" + "\n".join(found))
        return 1
    print(f"the audits of {len(documents)} workbooks are unchanged")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
