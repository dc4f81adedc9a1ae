"""Review policies: thresholds as data, loaded from ``rules/*.toml``.

A policy file holds ``[key] value = … source = "…"`` tables; every threshold carries its source.
No check reads a global: the :class:`Policy` is passed in.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import Any

from auditor.errors import PolicyError

# key -> (type, lower bound, upper bound) of every threshold a policy may set.
KNOWN: dict[str, tuple[type, float, float]] = {
    "alpha": (float, 1e-6, 0.5),
    "confidence": (float, 0.5, 0.999999),
    "power": (float, 0.05, 0.9999),
    "stored_relative_tolerance": (float, 0.0, 1e-3),
    "min_levels": (int, 2, 1000),
    "recommended_levels": (int, 2, 1000),
    "max_leverage": (float, 0.0, 1.0),
    # Design judgement (auditor.design.metrics, auditor.checks.design).
    "leverage_multiple": (float, 1.0, 100.0),
    "max_sxx_share": (float, 0.0, 1.0),
    "relevant_elasticity": (float, 0.0, 1e6),
    "slope_that_matters": (float, 0.0, math.inf),
    "max_ci_relative_half_width": (float, 0.0, 1e6),
    "lack_of_fit_alpha": (float, 1e-6, 0.5),
    "curvature_major_alpha": (float, 1e-9, 0.5),
    "require_linearity_evidence": (int, 0, 1),
    "extrapolation_tolerance": (float, 0.0, 10.0),
    # Calibration curves (auditor.design.calibration, auditor.checks.calibration): set only by a
    # policy that judges calibrations; absent, those checks are off.
    "standards_tolerance": (float, 0.0, 100.0),
    "lowest_standard_tolerance": (float, 0.0, 100.0),
    "standards_min_share": (float, 0.0, 1.0),
    "standards_min_count": (int, 1, 1000),
    "spread_alpha": (float, 1e-6, 0.5),
    "shape_alpha": (float, 1e-6, 0.5),
    "lod_factor": (float, 0.1, 100.0),
    "loq_factor": (float, 0.1, 100.0),
    "read_off_tolerance": (float, 0.0, 0.1),
    "curvature_sd_ratio": (float, 1.0, 100.0),
}

# Keys a policy file may leave out: the value used then, with its source. Keys absent from both a
# file and this table are simply unset (``Policy.find`` returns None): that part of a check is off.
DEFAULTS: dict[str, Threshold] = {}


@dataclass(frozen=True)
class Threshold:
    value: float
    source: str


@dataclass(frozen=True)
class Policy:
    name: str
    description: str = ""
    thresholds: dict[str, Threshold] = field(default_factory=dict)

    def get(self, key: str) -> float:
        return self.thresholds[key].value

    def find(self, key: str) -> float | None:
        """The value of an optional threshold, or None when the policy does not set it."""
        found = self.thresholds.get(key)
        return None if found is None else found.value

    @property
    def alpha(self) -> float:
        return self.get("alpha")


DEFAULTS.update(
    {
        "max_leverage": Threshold(
            0.5, "regaudit default (key absent): common practice, leverage above 0.5 dominates"
        ),
        "leverage_multiple": Threshold(
            3.0, "regaudit default (key absent): common practice, leverage above 3p/n is high"
        ),
        "max_sxx_share": Threshold(
            0.6, "regaudit default (key absent): one point carrying 60 % or more of Sxx"
        ),
        "relevant_elasticity": Threshold(
            0.5, "regaudit default (key absent): a 10 % change in x moving y by 5 % of its mean"
        ),
        "lack_of_fit_alpha": Threshold(
            0.05, "regaudit default (key absent): common practice, lack-of-fit F test at 5 %"
        ),
        "curvature_major_alpha": Threshold(
            0.01,
            "regaudit default (key absent): a bend named at the 5 % level is major only at 1 %; "
            "a 5 % test fires on one straight curve in twenty by chance",
        ),
        "require_linearity_evidence": Threshold(
            0.0, "regaudit default (key absent): linearity need not be demonstrated"
        ),
        "extrapolation_tolerance": Threshold(
            0.0, "regaudit default (key absent): no prediction beyond the x range"
        ),
    }
)


AUTO_DESCRIPTION = (
    "Per regression: 'calibration' for a curve recognised as a calibration by its words and "
    "layout, 'general' for the rest (thresholds of 'general' for workbook-level checks)."
)


def builtin_names() -> list[str]:
    folder = resources.files("auditor.rules")
    return sorted(p.name[:-5] for p in folder.iterdir() if p.name.endswith(".toml"))


def _parse(data: dict[str, Any], origin: str) -> Policy:
    thresholds: dict[str, Threshold] = {}
    for key, entry in data.items():
        if key in ("name", "description"):
            continue
        if key not in KNOWN:
            raise PolicyError(
                f"{origin}: unknown key {key!r}; allowed keys are {', '.join(sorted(KNOWN))}"
            )
        if not isinstance(entry, dict) or "value" not in entry or "source" not in entry:
            raise PolicyError(
                f"{origin}: [{key}] needs both 'value' and 'source' (a guideline, "
                "'common practice' or 'from memory')"
            )
        kind, low, high = KNOWN[key]
        value = entry["value"]
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise PolicyError(f"{origin}: [{key}] value {value!r} is not a number")
        if kind is int and int(value) != value:
            raise PolicyError(f"{origin}: [{key}] value {value!r} must be a whole number")
        if not low <= value <= high:
            raise PolicyError(f"{origin}: [{key}] value {value!r} is outside {low}–{high}")
        thresholds[key] = Threshold(float(value), str(entry["source"]))
    for key in ("alpha", "confidence", "power", "stored_relative_tolerance", "min_levels"):
        if key not in thresholds:
            raise PolicyError(f"{origin}: the required key [{key}] is missing")
    for key, default in DEFAULTS.items():
        thresholds.setdefault(key, default)
    return Policy(str(data.get("name", origin)), str(data.get("description", "")), thresholds)


def load_policy(name_or_file: str = "general") -> Policy:
    """A built-in policy by name (``general``, ``calibration``) or a TOML file by path."""
    if name_or_file == "auto":  # per regression: calibration curves by their words, else general
        general = load_policy("general")
        return Policy("auto", AUTO_DESCRIPTION, general.thresholds)
    path = Path(name_or_file)
    if name_or_file.endswith(".toml") or path.is_file():
        if not path.is_file():
            raise PolicyError(f"policy file {name_or_file!r} does not exist")
        text, origin = path.read_text(encoding="utf-8"), str(path)
    else:
        names = builtin_names()
        if name_or_file not in names:
            raise PolicyError(
                f"unknown policy {name_or_file!r}; choose auto, {', '.join(names)} "
                "or give the path of a .toml file"
            )
        text = resources.files("auditor.rules").joinpath(f"{name_or_file}.toml").read_text("utf-8")
        origin = name_or_file
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise PolicyError(f"{origin}: not valid TOML ({exc})") from exc
    return _parse(data, origin)
