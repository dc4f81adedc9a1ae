"""Digits on the NIST StRD linear datasets, false alarms on their LINEST workbooks, and the cost.

    python benchmarks/strd_accuracy.py                    # LRE table and false alarms
    python benchmarks/strd_accuracy.py --before db42477   # … beside an earlier revision,
                                                          # with the fit timings of both

The LRE (log relative error: digits agreeing with NIST's certified values, capped at 15) is the
minimum over each dataset's certified coefficients, their standard errors, the residual SD and
R², for:

* ``exact``: exact rational arithmetic on the stored doubles, the ceiling no engine can pass;
* ``regaudit``: the intended fit (``auditor.fit.fit_ols``), and at ``--before`` that revision's;
* ``numpy``: ``numpy.linalg.lstsq`` on the raw design [1, x, x², …], SEs from its SVD;
* ``LibreOffice``: the LINEST values LibreOffice stored in fixtures/strd/.

False alarms: major or critical findings when auditing fixtures/strd/ (every stored value there
is LibreOffice's correct computation). Timings interleave the two revisions in fresh processes
(median of several runs each), since the machine's load moves between them. Never part of the
test suite.
"""

from __future__ import annotations

import argparse
import json
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np
import openpyxl

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests"))
sys.path.insert(0, str(ROOT / "fixtures"))
import strd_reference as strd  # noqa: E402
from make_strd_workbooks import DATASETS as LAYOUTS  # noqa: E402
from make_strd_workbooks import FIRST_ROW, workbook_name  # noqa: E402

# Run inside a child process with PYTHONPATH at a revision: the LRE of each dataset.
FIT_SCRIPT = """
import json, sys
sys.path.insert(0, {tests!r})
import strd_reference as strd
try:
    from auditor.fit.ols import fit_ols
except ImportError:  # a revision before the stage subpackages
    from auditor.fit import fit_ols
out = {{}}
for name in strd.DATASETS:
    d = strd.load(name)
    f = fit_ols(d.x, d.y, intercept=d.intercept)
    v = {{"residual_sd": f.residual_sd, "r_squared": f.r_squared}}
    if d.intercept:
        v["b0"], v["se0"] = f.intercept_value, float(f.se_intercept or 0.0)
    for j, (b, se) in enumerate(zip(f.slopes, f.se_slopes), start=1):
        v[f"b{{j}}"], v[f"se{{j}}"] = float(b), float(se)
    out[name] = min(strd.lre_of(v, d).values())
print(json.dumps(out))
"""

TIMING_SCRIPT = """
import json, time
import numpy as np
try:
    from auditor.fit.ols import fit_ols
except ImportError:  # a revision before the stage subpackages
    from auditor.fit import fit_ols
rng = np.random.default_rng(7)
cases = {{}}
x = rng.normal(size=200_000) * 10 + 50
cases["200,000 rows, one x"] = (x, 2 * x + rng.normal(size=x.size), 3)
x = rng.normal(size=(30, 3))
cases["30 rows, 3 x, well conditioned"] = (x, x.sum(1) + rng.normal(size=30), 300)
u = np.arange(21.0)
x = np.column_stack([u ** p for p in range(1, 6)])
cases["21 rows, x..x^5 (Wampler)"] = (x, x.sum(1) + 1 + rng.normal(size=21), 300)
out = {{}}
for name, (x, y, reps) in cases.items():
    fit_ols(x, y)
    start = time.perf_counter()
    for _ in range(reps):
        fit_ols(x, y)
    out[name] = (time.perf_counter() - start) / reps
print(json.dumps(out))
"""


def _values_from_fit(data: strd.Dataset) -> dict[str, float]:
    """numpy's lstsq on the raw design, standard errors from its singular value decomposition."""
    columns = [data.x] if not data.intercept else [np.ones((len(data.y), 1)), data.x]
    design = np.hstack(columns)
    coef, _, _, _ = np.linalg.lstsq(design, data.y, rcond=None)
    residuals = data.y - design @ coef
    df = len(data.y) - design.shape[1]
    s2 = float(residuals @ residuals) / df
    _, sv, vt = np.linalg.svd(design, full_matrices=False)
    se = np.sqrt(s2 * np.sum((vt.T / sv) ** 2, axis=1))
    centred = data.y - data.y.mean() if data.intercept else data.y
    out = {"residual_sd": float(np.sqrt(s2))}
    out["r_squared"] = 1.0 - float(residuals @ residuals) / float(centred @ centred)
    first = 0 if data.intercept else 1
    for j, (b, e) in enumerate(zip(coef, se, strict=True), start=first):
        out[f"b{j}"], out[f"se{j}"] = float(b), float(e)
    return out


def _values_from_libreoffice(name: str, data: strd.Dataset) -> dict[str, float]:
    """LINEST's stored array: coefficients last x first, then the intercept; SEs below."""
    sheet = openpyxl.load_workbook(
        ROOT / "fixtures" / "strd" / workbook_name(name), data_only=True
    )["Data"]
    k = data.x.shape[1]
    left = k + 4  # 1-based column of the array: data, a gap, the labels, then LINEST
    rows = [[sheet.cell(FIRST_ROW + r, left + c).value for c in range(k + 1)] for r in range(3)]
    out: dict[str, float] = {"r_squared": rows[2][0], "residual_sd": rows[2][1]}
    for j in range(1, k + 1):
        out[f"b{j}"], out[f"se{j}"] = rows[0][k - j], rows[1][k - j]
    if data.intercept:
        out["b0"], out["se0"] = rows[0][k], rows[1][k]
    return out


def _child(code: str, pythonpath: Path) -> dict[str, float]:
    # Run from the revision's own folder: "-c" puts the working folder first on sys.path.
    done = subprocess.run(
        [sys.executable, "-c", code],
        capture_output=True,
        text=True,
        check=True,
        env={"PYTHONPATH": str(pythonpath), "PATH": "/usr/bin:/bin"},
        cwd=pythonpath,
    )
    result: dict[str, float] = json.loads(done.stdout)
    return result


def _false_alarms(pythonpath: Path) -> tuple[int, int]:
    """(major or critical findings, all findings) auditing fixtures/strd/ at a revision."""
    with tempfile.TemporaryDirectory(prefix="strd-audit-") as out:
        subprocess.run(
            [
                sys.executable,
                "-m",
                "auditor",
                "audit",
                str(ROOT / "fixtures" / "strd"),
                "--out",
                out,
            ],
            capture_output=True,
            check=False,
            env={"PYTHONPATH": str(pythonpath), "PATH": "/usr/bin:/bin"},
            cwd=out,
        )
        report = json.loads((Path(out) / "audit.json").read_text())
    severe = total = 0
    for book in report["workbooks"]:
        findings = book["findings"] + [f for r in book["regressions"] for f in r["findings"]]
        total += len(findings)
        severe += sum(f["severity"] in ("major", "critical") for f in findings)
    return severe, total


def _checkout(revision: str, into: Path) -> Path:
    archive = subprocess.run(
        ["git", "-C", str(ROOT), "archive", revision, "auditor", "rules", "fixtures"],
        capture_output=True,
        check=True,
    )
    subprocess.run(["tar", "-x", "-C", str(into)], input=archive.stdout, check=True)
    return into


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--before", help="a git revision to compare with (e.g. db42477)")
    parser.add_argument("--repeat", type=int, default=5, help="timing runs per revision")
    args = parser.parse_args()

    now = _child(FIT_SCRIPT.format(tests=str(ROOT / "tests")), ROOT)
    with tempfile.TemporaryDirectory(prefix="strd-before-") as tmp:
        before_root = _checkout(args.before, Path(tmp)) if args.before else None
        before = (
            _child(FIT_SCRIPT.format(tests=str(ROOT / "tests")), before_root)
            if before_root
            else None
        )
        header = f"{'dataset':<9} {'exact':>6} {'regaudit':>9}"
        header += f" {'before':>7}" if before else ""
        print(header + f" {'numpy':>6} {'LibreOffice':>12}")
        for name in strd.DATASETS:
            data = strd.load(name)
            ceiling = min(
                strd.lre_of(strd.exact_fit(data.x, data.y, data.intercept), data).values()
            )
            numpy_lre = min(strd.lre_of(_values_from_fit(data), data).values())
            lo_lre = min(strd.lre_of(_values_from_libreoffice(name, data), data).values())
            line = f"{name:<9} {ceiling:6.1f} {now[name]:9.1f}"
            line += f" {before[name]:7.1f}" if before else ""
            print(line + f" {numpy_lre:6.1f} {lo_lre:12.1f}")
        assert set(LAYOUTS) == set(strd.DATASETS)

        severe, total = _false_alarms(ROOT)
        print(f"\nfalse alarms on fixtures/strd/ (major or critical): {severe} of {total} findings")
        if before_root:
            severe_b, total_b = _false_alarms(before_root)
            print(f"  at {args.before}: {severe_b} of {total_b} findings")

            print(f"\nfit_ols time, median of {args.repeat} runs each (interleaved processes)")
            runs: dict[str, list[dict[str, float]]] = {"now": [], "before": []}
            for _ in range(args.repeat):
                runs["before"].append(_child(TIMING_SCRIPT.format(), before_root))
                runs["now"].append(_child(TIMING_SCRIPT.format(), ROOT))
            print(f"{'case':<34} {'before ms':>10} {'now ms':>8} {'ratio':>6}")
            for case in runs["now"][0]:
                b = statistics.median(r[case] for r in runs["before"]) * 1000
                n = statistics.median(r[case] for r in runs["now"]) * 1000
                print(f"{case:<34} {b:10.3f} {n:8.3f} {n / b:6.2f}")


if __name__ == "__main__":
    main()
