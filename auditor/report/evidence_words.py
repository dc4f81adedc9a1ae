"""A finding's evidence in words, for people: "reported 0.0213; recomputed 0.0426; judged: the
same to 9 significant digits". audit.json keeps the evidence as data, every digit included.

Keys a check uses are named in EVIDENCE_WORDS; any other key is read with its underscores as
spaces. Lists become "a, b, c" (long ones shortened, with the count), nested records "(key value,
…)". Numbers get six significant digits, p-values three (the tables' format).
"""

from __future__ import annotations

from typing import Any

from auditor.report.common import format_value, plain, stat_label

LIST_SHOWN = 8  # items of a list written out before "… (N in all)"

EVIDENCE_WORDS: dict[str, str] = {
    "key": "statistic",
    "reported": "reported",
    "as_written": "its formula computes",
    "intended": "the data give",
    "tolerance": "judged",
    "typed": "typed value",
    "computed": "computed",
    "reproduced": "reproduced by",
    "reproduced_by": "reproduced by",
    "also_reproduced_by": "also reproduced by",
    "formula": "formula",
    "function": "function",
    "cells": "cells",
    "count": "count",
    "link": "link in the formula",
    "target": "linked file",
    "n": "points",
    "p": "p-value",
    "f": "F",
    "df_lack_of_fit": "lack-of-fit degrees of freedom",
    "df_pure_error": "pure-error degrees of freedom",
    "sxx": "Sxx (spread of x)",
    "sxx_needed": "Sxx needed",
    "sxx_share": "share of Sxx",
    "power": "power",
    "min_detectable_slope": "smallest detectable slope",
    "slope_that_matters": "slope that matters",
    "slope_that_matters_source": "slope that matters from",
    "slope_without": "slope without the row",
    "p_without": "p-value without the row",
    "rows_that_cross": "rows that change the conclusion",
    "leverage": "leverage",
    "leverage_bound": "leverage limit",
    "levels": "distinct x levels",
    "min_levels": "levels the policy asks for",
    "n_even_needed": "evenly spaced points needed",
    "residual_sd": "residual SD",
    "row": "row",
    "rows": "rows",
    "rows_left_out": "rows left out",
    "row_offset": "rows shifted by",
    "first_row": "first row",
    "last_row": "last row",
    "table_first_row": "table's first row",
    "table_last_row": "table's last row",
    "x_min": "smallest x",
    "x_max": "largest x",
    "working_low": "working range from",
    "working_high": "working range to",
    "outside": "outside the data",
    "far": "farthest",
    "blank": "blank cells",
    "used": "used",
    "block": "block",
    "example": "for example",
    "values": "values",
}


def _words(key: str, value: Any) -> str:
    if isinstance(value, dict):
        inner = ", ".join(f"{_label(k)} {_words(k, v)}" for k, v in value.items())
        return f"({inner})"
    if isinstance(value, list):
        shown = [_words(key, item) for item in value[:LIST_SHOWN]]
        more = f", … ({len(value)} in all)" if len(value) > LIST_SHOWN else ""
        return ", ".join(shown) + more
    if isinstance(value, bool):
        return "yes" if value else "no"
    if key == "key" and isinstance(value, str):
        return stat_label(value)
    return format_value("p_" if key == "p" or key.startswith("p_") else "", value)


def _label(key: str) -> str:
    return EVIDENCE_WORDS.get(key, key.replace("_", " "))


def evidence_words(evidence: dict[str, Any]) -> str:
    """``{"reported": 0.0213, "intended": 0.0426}`` -> "reported 0.0213; the data give 0.0426"."""
    parts = []
    for key, value in plain(evidence).items():
        if value is None or value == "" or value == []:
            continue
        parts.append(f"{_label(key)}: {_words(key, value)}")
    return "; ".join(parts)
