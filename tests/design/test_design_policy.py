"""The design thresholds of the policies (auditor.policy, rules/*.toml).

Sources are the guidelines named in the files (ICH Q2(R1) and ISO 8466-1, from memory) and
common practice; here only that every threshold carries one, that bad values stop with the key
named, and that a policy file may leave the design keys out.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from auditor.errors import PolicyError
from auditor.policy import DEFAULTS, load_policy

RULES = Path(__file__).resolve().parents[2] / "rules"
DESIGN_KEYS = (
    "max_leverage",
    "leverage_multiple",
    "max_sxx_share",
    "relevant_elasticity",
    "lack_of_fit_alpha",
    "require_linearity_evidence",
    "extrapolation_tolerance",
)


@pytest.mark.parametrize("name", ["general", "calibration"])
def test_builtin_policies_state_every_design_threshold_with_a_source(name: str) -> None:
    policy = load_policy(name)
    for key in DESIGN_KEYS:
        threshold = policy.thresholds[key]
        assert threshold.source and "regaudit default (key absent)" not in threshold.source, key


def test_calibration_asks_for_five_levels_and_linearity_evidence() -> None:
    # ICH Q2(R1): at least 5 concentrations (from memory); ISO 8466-1: replicates (from memory).
    calibration = load_policy("calibration")
    assert calibration.get("min_levels") == 5 and calibration.find("require_linearity_evidence")
    assert load_policy("general").find("require_linearity_evidence") == 0.0


def _with(tmp_path: Path, extra: str) -> str:
    text = (RULES / "general.toml").read_text(encoding="utf-8")
    kept = text.split("# --- design judgement")[0]  # the keys before the design block only
    path = tmp_path / "custom.toml"
    path.write_text(kept + extra, encoding="utf-8")
    return str(path)


def test_a_file_without_design_keys_gets_the_defaults(tmp_path: Path) -> None:
    policy = load_policy(_with(tmp_path, ""))
    for key, default in DEFAULTS.items():
        if key != "max_leverage":  # stated before the design block, so kept in the file
            assert policy.thresholds[key] == default, key
    assert policy.find("slope_that_matters") is None


def _entry(key: str, value: str) -> str:
    return f'[{key}]\nvalue = {value}\nsource = "a test"\n'


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (
            _entry("require_linearity_evidence", "2"),
            "[require_linearity_evidence] value 2 is outside 0–1",
        ),
        (_entry("max_sxx_share", "1.5"), "[max_sxx_share] value 1.5 is outside 0.0–1.0"),
        (_entry("slope_that_matters", '"big"'), "[slope_that_matters] value 'big' is not a number"),
        (_entry("slope_that_matter", "1"), "unknown key 'slope_that_matter'"),
    ],
)
def test_bad_design_values_name_the_key(tmp_path: Path, extra: str, message: str) -> None:
    with pytest.raises(PolicyError) as raised:
        load_policy(_with(tmp_path, extra))
    assert message in str(raised.value)
