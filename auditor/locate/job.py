"""Know the job: is a regression a calibration curve, and which policy judges it?

A calibration curve shows itself by its words and its layout. The words are the trade's: the x
column holds the concentration (amount, level) of standards, the y column an instrument's response
(absorbance, signal, peak area, intensity, counts), and the surroundings speak of calibration,
blanks, detection limits or samples. The layout: standards at a few ascending levels, often
replicated, starting at or near zero; and the workbook reads sample responses back through the
line ((y − b0)/b1). Words on both axes decide alone; words on one side need a second sign (the
context's words, a read-back, standards with replicates). Layout alone never decides: many a
regression has replicated ascending x.

``--policy auto`` (the default) applies the ``calibration`` policy to curves recognised so and the
``general`` policy to the rest, and says why for each; an explicit ``--policy`` wins, and the
reason then says what the words would have chosen.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np

from auditor.formula.syntax import Ref
from auditor.read.workbook import Workbook

AUTO = "auto"
CALIBRATION = "calibration"
GENERAL = "general"

# Stems of the trade's words (several languages): matched at the start of a word.
_X_WORDS = re.compile(
    r"\b(conc\w*|standard\w*|std\b|stds\b|nominal|spiked?|amount|calibrant\w*|"
    r"konz\w*|gehalt|sollwert|teneur|étalon\w*|patr[oó]n\w*)",
    re.I,
)
# Units of concentration: alone they are weak (a dose in mg/kg is not a standard), so they count
# for the x side only together with a response on the y side.
_X_UNITS = re.compile(
    r"(mg/l|µg/ml|ug/ml|ng/ml|mg/kg|µg/l|ug/l|ng/l|\bppm\b|\bppb\b|mmol|µmol|mol/l|\bmm\b|µm\b)",
    re.I,
)
_Y_WORDS = re.compile(
    r"\b(response\w*|absorb\w*|abs\b|signal\w*|peak\s*(area|height)|area\b|area\s*ratio|"
    r"intensit\w*|counts?\b|cps\b|fluoresc\w*|emission|mau\b|au\b|rfu\b|extinktion|"
    r"fl[äa]che|se[ñn]al|r[ée]ponse|reading\w*|detector)",
    re.I,
)
_CONTEXT_WORDS = re.compile(
    r"\b(calibrat\w*|standard curve|linearity|working range|lod\b|loq\b|blank\w*|"
    r"detection limit|limit of (detection|quantitation|quantification)|kalibr\w*|"
    r"étalonnage|calibraci[oó]n|back[- ]?calc\w*|read[- ]?back|recovery)",
    re.I,
)
# An x that is time makes a trend (drift, stability, a process over time), not a calibration.
_TIME_WORDS = re.compile(
    r"\b(hours?|h\b|days?|weeks?|months?|years?|minutes?|min\b|time|date|elapsed|since|"
    r"run order|injection (no|number|order)|sequence|age|storage|shelf)",
    re.I,
)
HEADER_ROWS_ABOVE = 3


@dataclass(frozen=True)
class JobSigns:
    """What the workbook shows about a regression's job."""

    x_words: list[str] = field(default_factory=list)
    x_units: list[str] = field(default_factory=list)
    x_time: str = ""  # the x header when it names time
    y_words: list[str] = field(default_factory=list)
    context_words: list[str] = field(default_factory=list)
    levels: int = 0
    replicated_levels: int = 0
    ascending: bool = False
    reads_back: bool = False  # a (y − b0)/b1 cell reads a response through the line


@dataclass(frozen=True)
class JobDecision:
    policy: str  # the policy that judges the regression
    is_calibration: bool  # what the signs say, whatever the policy
    why: str


def header_rows(workbook: Workbook, ref: Ref) -> list[str]:
    """The texts of each row within a few rows above a column range, nearest first: the column
    header (all columns of the range together), then a title above it."""
    sheet = workbook.sheet(ref.sheet)
    if sheet is None:
        return []
    rows = []
    for row in range(ref.r1 - 1, max(0, ref.r1 - 1 - HEADER_ROWS_ABOVE), -1):
        texts = [sheet.value(row, col) for col in range(ref.c1, ref.c2 + 1)]
        found = [v.strip() for v in texts if isinstance(v, str) and v.strip()]
        if found:
            rows.append(" ".join(found))
    return rows


def _matches(pattern: re.Pattern[str], texts: Iterable[str]) -> list[str]:
    out: list[str] = []
    for text in texts:
        for match in pattern.finditer(text):
            word = match.group(0).strip()
            if word.lower() not in (w.lower() for w in out):
                out.append(word)
    return out


def read_signs(
    workbook: Workbook,
    x: Ref,
    y: Ref,
    x_values: np.ndarray,
    context_texts: Iterable[str] = (),
    reads_back: bool = False,
    counted: tuple[np.ndarray, np.ndarray] | None = None,
) -> JobSigns:
    """The signs of a calibration curve around a regression; ``counted``: the distinct x values
    and their counts when the caller has them (auditor.design.lackfit.level_counts of x)."""
    x_rows, y_rows = header_rows(workbook, x), header_rows(workbook, y)
    # The axis words come from the column header itself (the nearest text above); a title
    # further up speaks for the sheet, not for one axis.
    x_header, y_header = (x_rows or [""])[0], (y_rows or [""])[0]
    xs = np.asarray(x_values, dtype=float).reshape(-1)
    xs = xs[np.isfinite(xs)]
    levels, counts = counted if counted is not None else np.unique(xs, return_counts=True)
    ascending = bool(xs.size >= 3 and np.all(np.diff(xs) >= 0) and xs.min() >= 0)
    return JobSigns(
        x_words=_matches(_X_WORDS, [x_header]),
        x_units=_matches(_X_UNITS, [x_header]),
        y_words=_matches(_Y_WORDS, [y_header]),
        x_time=x_header if _TIME_WORDS.search(x_header) else "",
        context_words=_matches(_CONTEXT_WORDS, [*x_rows, *y_rows, x.sheet, *context_texts]),
        levels=int(levels.size),
        replicated_levels=int(np.count_nonzero(counts >= 2)),
        ascending=ascending,
        reads_back=reads_back,
    )


def _quoted(words: list[str]) -> str:
    return ", ".join(f"'{w}'" for w in words[:3])


def judge_signs(signs: JobSigns) -> tuple[bool, str]:
    """Whether the signs make a calibration curve, and the evidence in words."""
    said: list[str] = []
    if signs.x_words or signs.x_units:
        said.append(f"x header says {_quoted(signs.x_words + signs.x_units)}")
    if signs.y_words:
        said.append(f"y header says {_quoted(signs.y_words)}")
    if signs.context_words:
        said.append(f"the sheet speaks of {_quoted(signs.context_words)}")
    standards = signs.ascending and signs.replicated_levels >= 2
    if standards:
        said.append(
            f"{signs.levels} ascending levels, {signs.replicated_levels} of them replicated"
        )
    if signs.reads_back:
        said.append("responses are read back through the line ((y − b0)/b1)")
    context, x_named, y_named = bool(signs.context_words), bool(signs.x_words), bool(signs.y_words)
    layout = standards or signs.reads_back
    is_calibration = (
        (y_named and (x_named or bool(signs.x_units)))  # words on both axes
        or (x_named and (context or layout))  # standards on x, and a second sign
        or (y_named and context and layout)  # a response against unnamed levels in a calibration
        or (context and signs.reads_back)
    )
    if signs.x_time:
        said.insert(0, f"x is time ('{signs.x_time}'): a trend, not a calibration")
        is_calibration = False
    evidence = "; ".join(said) if said else "no word or layout of a calibration"
    return is_calibration, evidence


def decide(requested: str, signs: JobSigns) -> JobDecision:
    """The policy for one regression: the recognised job under ``auto``, else the one asked for."""
    is_calibration, evidence = judge_signs(signs)
    if requested != AUTO:
        looks = "looks like a calibration curve" if is_calibration else "not a calibration curve"
        return JobDecision(
            requested, is_calibration, f"policy '{requested}' given; the words: {looks}"
        )
    if is_calibration:
        return JobDecision(CALIBRATION, True, f"a calibration curve: {evidence}")
    return JobDecision(GENERAL, False, f"general: {evidence}")
