"""``regaudit plan``: choose the x design before collecting data.

    regaudit plan --n 6-12 --x-low 10 --x-high 40 --sd 0.41 --detect-slope 0.02
    regaudit plan --from lab.xlsx --regression "Cal/E4" --target-se 0.001 --json

Prints a table of candidate designs (auditor.design.planner) with their Sxx, predicted SE, CI
half-width, power, and whether they meet the target and the policy; ``--json`` prints the same
as JSON. The command line calls :func:`add_plan_parser`; :func:`run_plan` runs it.
"""

from __future__ import annotations

import argparse
import json
import math
import re
import sys
from pathlib import Path
from typing import TYPE_CHECKING, Any

from auditor.errors import UsageError
from auditor.policy import Policy, load_policy

if TYPE_CHECKING:  # the planner (scipy) is imported when a plan is made, not at start-up
    from auditor.design.planner import PlanRequest

MAX_N = 100_000
MAX_N_VALUES = 60

HELP = "plan an x design: candidate layouts with their Sxx, SE, power and policy verdict"
EXAMPLES = """examples:
  regaudit plan --n 8 --x-low 10 --x-high 40 --sd 0.41 --detect-slope 0.02
  regaudit plan --n 5-12 --x-low 0 --x-high 5 --sd 0.003 --target-se 0.0005 --policy calibration
  regaudit plan --from lab.xlsx --regression "Cal/E4" --target-half-width 0.002 --json
"""


def parse_n(text: str) -> list[int]:
    """'8' -> [8]; '6-12' or '6:12' -> [6, …, 12]."""
    match = re.fullmatch(r"\s*(\d+)\s*(?:[-:]|\.\.)?\s*(\d+)?\s*", text)
    if match is None:
        raise UsageError(f"--n {text!r} is not a number of points; give e.g. 8 or a range 6-12")
    first = int(match.group(1))
    last = int(match.group(2)) if match.group(2) else first
    if first > last:
        first, last = last, first
    if first < 3 or last > MAX_N:
        raise UsageError(
            f"--n {text!r}: n must lie between 3 (a slope with a standard error) and {MAX_N:,}"
        )
    values = list(range(first, last + 1))
    if len(values) > MAX_N_VALUES:
        raise UsageError(f"--n {text!r} spans {len(values)} values; give at most {MAX_N_VALUES}")
    return values


def _positive(name: str, value: float | None) -> None:
    if value is not None and not (math.isfinite(value) and value > 0.0):
        raise UsageError(f"{name} {value!r} must be a positive number")


def request_from_args(args: argparse.Namespace, policy: Policy) -> PlanRequest:
    """The plan's inputs: the options, filled in from --from WORKBOOK --regression ID."""
    from auditor.design.planner import PlanRequest

    n_values = parse_n(args.n) if args.n else None
    low, high, sigma, origin = args.x_low, args.x_high, args.sd, ""
    if args.source:
        found = regression_from_workbook(args.source, args.regression, policy)
        low = found["x_min"] if low is None else low
        high = found["x_max"] if high is None else high
        sigma = found["residual_sd"] if sigma is None else sigma
        n_values = n_values or [int(found["n"])]
        origin = f"regression {found['id']!r} of {args.source}"
    missing = [
        name
        for name, value in (
            ("--n", n_values),
            ("--x-low", low),
            ("--x-high", high),
            ("--sd", sigma),
        )
        if value is None
    ]
    if missing:
        raise UsageError(
            f"plan needs {', '.join(missing)} (or --from WORKBOOK --regression ID to take them "
            "from an existing regression)"
        )
    assert n_values is not None and low is not None and high is not None and sigma is not None
    if not (math.isfinite(low) and math.isfinite(high)) or not high > low:
        raise UsageError(f"--x-high {high!r} must be greater than --x-low {low!r}")
    _positive("--sd", sigma)
    for name, value in (
        ("--target-se", args.target_se),
        ("--target-half-width", args.target_half_width),
        ("--detect-slope", args.detect_slope),
    ):
        _positive(name, value)
    return PlanRequest(
        n_values=n_values,
        x_low=low,
        x_high=high,
        sigma=sigma,
        target_se=args.target_se,
        target_half_width=args.target_half_width,
        detect_slope=args.detect_slope,
        origin=origin,
    )


def regression_from_workbook(path: str, regression: str | None, policy: Policy) -> dict[str, Any]:
    """n, x range and residual SD of one audited regression (by its id, as audit.json shows)."""
    from auditor.pipeline.audit import audit_workbook

    if not Path(path).is_file():
        raise UsageError(f"--from {path!r} is not a file; give the path of an .xlsx workbook")
    result = audit_workbook(path, policy)
    if result.status == "unreadable":
        raise UsageError(f"--from {path!r} cannot be read: {result.error}")
    ids = [r.id for r in result.regressions]
    if regression is None and len(ids) == 1:
        regression = ids[0]
    chosen = [r for r in result.regressions if r.id == regression]
    if not chosen:
        known = ", ".join(repr(i) for i in ids) or "none found"
        raise UsageError(
            f"--regression {regression!r} is not in {path!r}; its regressions: {known}"
        )
    found = chosen[0]
    sd = found.intended.get("residual_sd")
    if found.x_columns != 1 or sd is None or not sd > 0.0:
        raise UsageError(
            f"regression {found.id!r} has no usable residual SD (or several x columns); give --sd"
        )
    return {
        "id": found.id,
        "n": found.n,
        "x_min": found.design.get("x_min"),
        "x_max": found.design.get("x_max"),
        "residual_sd": float(sd),
    }


def _g(value: float | None) -> str:
    return "—" if value is None else f"{value:.4g}"


def _x_text(x: list[float]) -> str:
    levels: dict[float, int] = {}
    for value in x:
        levels[value] = levels.get(value, 0) + 1
    parts = [f"{v:.4g}" + (f"×{c}" if c > 1 else "") for v, c in levels.items()]
    return " ".join(parts) if len(parts) <= 7 else " ".join(parts[:3] + ["…"] + parts[-2:])


def render(request: PlanRequest, policy: Policy) -> str:
    from auditor.design.planner import best, candidates, needed_sxx, reach_hint

    found = candidates(request, policy)
    power_pct = f"{100 * policy.get('power'):.0f} %"
    lines = [
        f"Straight-line designs over x = {request.x_low:g}–{request.x_high:g}, expected residual "
        f"SD {request.sigma:g}" + (f" (from {request.origin})" if request.origin else "") + ".",
        f"Policy {policy.name!r}: α = {policy.alpha:g}, power {power_pct}, at least "
        f"{int(policy.get('min_levels'))} levels"
        + (", lack of fit testable" if policy.find("require_linearity_evidence") else "")
        + ".",
    ]
    targets = request.targets()
    if targets:
        first = request.n_values[0]
        need = needed_sxx(request, policy, first)
        lines.append(
            f"Target: {'; '.join(targets)} (needs Sxx ≥ {_g(need)} at n = {first})."
            if need is not None
            else f"Target: {'; '.join(targets)}."
        )
    rows = [
        (
            c.design,
            c.n,
            c.levels,
            _x_text(c.x),
            _g(c.sxx),
            _g(c.se),
            _g(c.half_width),
            "—" if c.power is None else f"{100 * c.power:.1f} %",
            "—" if c.meets_target is None else ("yes" if c.meets_target else "no"),
            "yes" if c.meets_policy else "no",
            "; ".join(c.notes),
        )
        for c in found
    ]
    headers = ["design", "n", "levels", "x values", "Sxx", "SE(b1)", "CI ±", "power"]
    headers += ["meets target", "meets policy", "notes"]
    from tabulate import tabulate  # imported here: the audit's start-up does not need it

    lines += ["", tabulate(rows, headers=headers, tablefmt="simple", disable_numparse=True), ""]
    pick = best(found)
    if pick is None:
        lines.append("No candidate meets both the target and the policy.")
        hint = reach_hint(request, policy)
        if hint:
            lines.append(hint)
    else:
        lines.append(
            f"Smallest design meeting {'the target and ' if targets else ''}the policy: "
            f"{pick.design}, n = {pick.n} (Sxx = {_g(pick.sxx)}, SE(b1) = {_g(pick.se)})."
        )
    lines.append(
        "Trade-off: the two-end design minimises the SE but cannot show curvature; keep at least "
        "3 levels (5 for a calibration) and replicate some of them so that lack of fit can be "
        "tested."
    )
    return "\n".join(lines) + "\n"


def as_json(request: PlanRequest, policy: Policy) -> dict[str, Any]:
    from auditor.design.planner import best, candidates

    found = candidates(request, policy)
    pick = best(found)
    return {
        "policy": policy.name,
        "x_low": request.x_low,
        "x_high": request.x_high,
        "sigma": request.sigma,
        "origin": request.origin,
        "targets": {
            "se": request.target_se,
            "ci_half_width": request.target_half_width,
            "detect_slope": request.detect_slope,
        },
        "candidates": [c.to_dict() for c in found],
        "recommended": None if pick is None else {"design": pick.design, "n": pick.n},
    }


def add_plan_parser(subparsers: Any) -> None:
    """Register ``plan`` on the CLI's subparsers (``parser.add_subparsers(...)``)."""
    plan = subparsers.add_parser(
        "plan",
        help=HELP,
        description=HELP + ".",
        epilog=EXAMPLES,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    plan.add_argument("--n", default=None, metavar="N|LOW-HIGH", help="points, e.g. 8 or 6-12")
    plan.add_argument("--x-low", type=float, default=None, metavar="X", help="lowest x")
    plan.add_argument("--x-high", type=float, default=None, metavar="X", help="highest x")
    plan.add_argument("--sd", type=float, default=None, metavar="S", help="expected residual SD")
    plan.add_argument(
        "--target-se",
        type=float,
        default=None,
        metavar="SE",
        help="largest acceptable SE of the slope",
    )
    plan.add_argument(
        "--target-half-width",
        type=float,
        default=None,
        metavar="W",
        help="largest acceptable half-width of the slope's CI",
    )
    plan.add_argument(
        "--detect-slope",
        type=float,
        default=None,
        metavar="B",
        help="slope to detect with the policy's power at its alpha",
    )
    plan.add_argument(
        "--from",
        dest="source",
        default=None,
        metavar="WORKBOOK",
        help="take n, x range and residual SD from a regression in this workbook",
    )
    plan.add_argument(
        "--regression",
        default=None,
        metavar="ID",
        help="the regression's id as the audit shows it (e.g. 'Cal/E4')",
    )
    plan.add_argument("--policy", default="general", help="policy name or TOML file")
    plan.add_argument("--json", action="store_true", help="print JSON instead of a table")
    plan.set_defaults(handler=run_plan)


def run_plan(args: argparse.Namespace) -> int:
    """Print the plan; usage errors raise UsageError (exit 2 in the CLI)."""
    policy = load_policy(args.policy)
    request = request_from_args(args, policy)
    if args.json:
        sys.stdout.write(json.dumps(as_json(request, policy), indent=2) + "\n")
    else:
        sys.stdout.write(render(request, policy))
    return 0
