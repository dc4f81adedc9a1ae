"""False alarms and findings per planted mistake: the two figures of "never cry wolf".

    python benchmarks/false_alarms.py                 # both parts
    python benchmarks/false_alarms.py --demo-only     # only the demo corpus (no shared folder)
    python benchmarks/false_alarms.py --verbose       # list every finding counted

* **Real-world study set** (``/work/shared/realworld`` or ``../shared/realworld`` beside the
  repository; skipped cleanly when neither exists): the whole folder is audited and the set's
  own scorer (``score.py``) prints its per-workbook lines and the summary; a false alarm there is
  a major or critical finding on a cell that is not a known mistake. The workbooks are read in
  place, never copied.
* **Demo corpus** (``fixtures/workbooks`` with ``fixtures/manifest.json``): for every regression
  with planted mistakes, the findings of severity minor or above that the audit gives it (its
  own and the workbook-level ones routed to it), against the number of planted mistakes (the
  manifest's expected entries, counting entries on the same cells as one mistake: a df typed
  into a p formula is one slip, whatever kinds it is named by). Design and calibration
  judgements of the data (spread, lack of fit, acceptance of standards) are counted apart: they
  judge the data against a policy, not the arithmetic a mistake was planted in. Clean
  regressions count every major or critical finding as a false alarm, except the design
  findings the manifest declares.

A table is printed; nothing is asserted (speed and counts belong to benchmarks, not tests).
"""

from __future__ import annotations

import argparse
import contextlib
import io
import json
import subprocess
import sys
import tempfile
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]
SHARED_CANDIDATES = (Path("/work/shared/realworld"), ROOT.parent / "shared" / "realworld")


def _audit(folder: Path, out: Path) -> dict[str, Any]:
    from auditor.cli.main import main

    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        main(["audit", str(folder), "--out", str(out), "--jobs", "1", "--fail-on", "never"])
    data: dict[str, Any] = json.loads((out / "audit.json").read_text(encoding="utf-8"))
    return data


def real_world(verbose: bool) -> None:
    shared = next((p for p in SHARED_CANDIDATES if (p / "key.json").is_file()), None)
    if shared is None:
        print("real-world set: not found (/work/shared/realworld, ../shared/realworld): skipped")
        return
    with tempfile.TemporaryDirectory(prefix="regaudit-rw-") as tmp:
        _audit(shared / "workbooks", Path(tmp))
        scored = subprocess.run(
            [
                sys.executable,
                str(shared / "score.py"),
                str(shared / "key.json"),
                f"{tmp}/audit.json",
            ],
            capture_output=True,
            text=True,
            check=False,
        )
    lines = scored.stdout.splitlines()
    shown = (
        lines if verbose else [ln for ln in lines if "false_alarms=0" not in ln or "SUMMARY" in ln]
    )
    print("real-world set:", shared)
    for line in shown:
        print("  " + line)


def _planted_mistakes(declared: dict[str, Any]) -> int:
    return len({tuple(sorted(e.get("cells", []))) for e in declared.get("expected", [])})


def _judgement_checks() -> set[str]:
    """Checks that judge the data against a policy (design spread, calibration acceptance):
    they are no finding about a planted arithmetic mistake, and are counted apart."""
    from auditor.checks import REGISTRY

    families = {"design", "calibration", "calibration_results"}
    return {check.id for check in REGISTRY.values() if check.family in families}


def _findings_of(workbook: dict[str, Any], regression: dict[str, Any]) -> list[dict[str, Any]]:
    cells = {v["cell"] for v in regression["reported"].values()}
    routed = [f for f in workbook["findings"] if f["cells"] and f["cells"][0] in cells]
    return [f for f in regression["findings"] + routed if f["severity"] != "info"]


def _declared_design(declared: dict[str, Any], finding: dict[str, Any]) -> bool:
    """A design finding the manifest expects of a clean regression (a weak design is no error
    in the arithmetic, and saying so is no false alarm)."""
    return any(
        finding["kind"] == e["kind"] and set(e["cells"]) & set(finding["cells"])
        for e in declared.get("design_expected", [])
    )


def demo(verbose: bool) -> None:
    manifest = json.loads((ROOT / "fixtures" / "manifest.json").read_text(encoding="utf-8"))
    with tempfile.TemporaryDirectory(prefix="regaudit-demo-") as tmp:
        audit = _audit(ROOT / "fixtures" / "workbooks", Path(tmp))
    by_name = {Path(w["path"]).name: w for w in audit["workbooks"]}
    rows: list[tuple[str, str, int, int]] = []
    false_alarms = 0
    judgements, judgement_count = _judgement_checks(), 0
    for entry in manifest["workbooks"]:
        workbook = by_name.get(entry["file"])
        if workbook is None:
            continue
        for declared in entry["regressions"]:
            match = [
                r
                for r in workbook["regressions"]
                if r["x_range"] == declared["x_range"] and r["y_range"] == declared["y_range"]
            ]
            findings = _findings_of(workbook, match[0]) if match else []
            if declared.get("clean"):
                serious = [
                    f
                    for f in findings
                    if f["severity"] in ("critical", "major") and not _declared_design(declared, f)
                ]
                false_alarms += len(serious)
                continue
            judged = [f for f in findings if f["check"] in judgements]
            findings = [f for f in findings if f["check"] not in judgements]
            judgement_count += len(judged)
            rows.append(
                (entry["file"], declared["sheet"], _planted_mistakes(declared), len(findings))
            )
            if verbose:
                for f in findings:
                    print(f"    {declared['sheet']}: {f['check']} {f['kind']} {f['cells'][:3]}")
    planted = sum(r[2] for r in rows)
    found = sum(r[3] for r in rows)
    print("demo corpus: findings (minor or above) per planted mistake")
    print(f"  {'workbook':42} {'sheet':16} planted findings")
    for file, sheet, n_planted, n_found in rows:
        mark = "" if n_found == n_planted else "  <-"
        print(f"  {file[:42]:42} {sheet[:16]:16} {n_planted:7} {n_found:8}{mark}")
    exact = sum(1 for r in rows if r[2] == r[3])
    print(
        f"  total: {planted} planted, {found} findings ({found / max(planted, 1):.2f} per "
        f"mistake); {exact}/{len(rows)} regressions with exactly one finding per mistake; "
        f"{false_alarms} major/critical findings on clean regressions"
    )
    print(
        f"  (left out of the count: {judgement_count} design or calibration judgement(s) of "
        "the data on these regressions, which a policy decides)"
    )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--demo-only", action="store_true")
    parser.add_argument("--verbose", action="store_true")
    args = parser.parse_args()
    if not args.demo_only:
        real_world(args.verbose)
    demo(args.verbose)


if __name__ == "__main__":
    main()
