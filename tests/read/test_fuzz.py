"""Seeded mutations of real workbooks: every case must end audited (or with no regressions), or
unreadable with a reason in words; never a crash, never a changed input.

Half the cases damage the file's bytes (flips, cuts, insertions: mostly the zip layer), half
rewrite one XML part and re-zip it with valid checksums, so that the XML parser and the reader's
own logic meet broken markup, wrong types, absurd references and missing parts. The cases run in
two worker processes under regaudit's own per-file limits (auditor.pipeline.limits). A failing case
names
its seed; ``fuzz_case(seed)`` rebuilds and audits exactly that file again.

REGAUDIT_FUZZ_CASES raises the number of cases (default 2,000).
"""

from __future__ import annotations

import hashlib
import os
import random
import tempfile
import traceback
import zipfile
from collections import Counter
from pathlib import Path

import pytest
from package_builders import read_parts

from auditor.errors import RegauditError
from auditor.pipeline.audit import audit_workbook
from auditor.pipeline.limits import Failure, FileLimits, run_limited
from auditor.policy import Policy, load_policy

ROOT = Path(__file__).resolve().parents[2]
_CANDIDATES = [
    ROOT / "fixtures" / "workbooks" / f"{name}.xlsx"
    for name in (
        "lab_recovery_through_origin",
        "lab_nitrate_calibration_beside",
        "script_written_no_cached_values",
        "lab_linest_curve_and_blend",
        "functions_coverage",
        "lab_detector_named_ranges",
        "lab_external_links",
    )
] + [ROOT / "fixtures" / "edge" / "lab_sulfate_bench_damaged.xlsx"]
SOURCES = [path for path in _CANDIDATES if path.is_file()]  # small, varied fixtures
CASES = int(os.environ.get("REGAUDIT_FUZZ_CASES", "2000"))
TOKENS = [
    "", "0", "-1", "1.5", "99999999999", "1E400", "nan", "A0", "XFD1048577", "ZZZZ1",
    "A1:XFD1048576", "$A$1", "s", "str", "e", "b", "n", "d", "inlineStr", "array", "shared",
    "dataTable", "#REF!",
    "#N/A", "&amp;", "&lt;", "Sheet1!A1", "'My Data'!B2:B9", "SLOPE(", "=", ")", "\u00e9", "\x7f",
]  # fmt: skip
_POLICY: Policy | None = None


def _mutate_bytes(rng: random.Random, data: bytes) -> bytes:
    buffer = bytearray(data)
    kind = rng.randrange(5)
    if kind == 0:
        for _ in range(rng.randint(1, 8)):
            buffer[rng.randrange(len(buffer))] ^= 1 << rng.randrange(8)
    elif kind == 1:
        del buffer[rng.randrange(len(buffer)) :]
    elif kind == 2:
        at = rng.randrange(len(buffer))
        buffer[at:at] = rng.randbytes(rng.randint(1, 64))
    elif kind == 3:
        at = rng.randrange(len(buffer))
        buffer[at : at + rng.randint(1, 256)] = bytes(rng.randint(1, 256))
    else:
        at, size = rng.randrange(len(buffer)), rng.randint(16, 512)
        buffer[at:at] = buffer[max(0, at - size) : at]
    return bytes(buffer)


def _mutate_text(rng: random.Random, text: str) -> str:
    kind = rng.randrange(8)
    at = rng.randrange(max(1, len(text)))
    if kind == 0:  # delete a span
        return text[:at] + text[at + rng.randint(1, 200) :]
    if kind == 1:  # repeat a span
        size = rng.randint(1, 400)
        return text[:at] + text[max(0, at - size) : at] + text[at:]
    if kind == 2:  # an attribute value replaced
        starts = [i for i in range(len(text)) if text.startswith('="', i)]
        if starts:
            begin = rng.choice(starts) + 2
            end = text.find('"', begin)
            return text[:begin] + rng.choice(TOKENS).replace('"', "") + text[end:]
    if kind == 3:  # an element's text replaced
        starts = [i for i in range(len(text) - 1) if text[i] == ">" and text[i + 1] != "<"]
        if starts:
            begin = rng.choice(starts) + 1
            end = text.find("<", begin)
            if end > begin:
                token = rng.choice(TOKENS).replace("<", "&lt;").replace("&", "&amp;")
                return text[:begin] + token + text[end:]
    if kind == 4:  # a tag renamed
        starts = [i for i in range(len(text) - 1) if text[i] == "<" and text[i + 1].isalpha()]
        if starts:
            begin = rng.choice(starts) + 1
            end = begin
            while end < len(text) and (text[end].isalnum() or text[end] in ":_"):
                end += 1
            new = rng.choice(["c", "v", "f", "row", "si", "t", "is", "sheet", "xf", "x"])
            return text[:begin] + new + text[end:]
    if kind == 5:  # raw junk, possibly not UTF-8 once encoded back
        return text[:at] + "".join(chr(rng.randrange(1, 0x2FF)) for _ in range(8)) + text[at:]
    if kind == 6:  # a reference stretched
        return (
            text.replace('ref="', 'ref="A1:', 1)
            if rng.random() < 0.5
            else text.replace(":", ":XFD", 1)
        )
    return text[:at]  # cut short


def mutate(rng: random.Random, source: Path) -> bytes:
    """The bytes of one fuzz case built from ``source`` (deterministic for a given ``rng``)."""
    data = source.read_bytes()
    if rng.random() < 0.5:
        return _mutate_bytes(rng, data)
    parts = read_parts(source)
    names = sorted(parts)
    weights = [
        8 if "worksheets/" in n else 4 if n.endswith((".xml", ".rels")) else 1 for n in names
    ]
    target = rng.choices(names, weights)[0]
    if rng.random() < 0.05:
        del parts[target]
    else:
        text = parts[target].decode("utf-8", errors="replace")
        for _ in range(rng.randint(1, 3)):
            text = _mutate_text(rng, text)
        parts[target] = text.encode("utf-8", errors="surrogatepass")
    out = tempfile.SpooledTemporaryFile()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as archive:
        for name in names:
            if name in parts:
                archive.writestr(name, parts[name])
    out.seek(0)
    return out.read()


def fuzz_case(seed: int) -> tuple[int, str, str]:
    """(seed, outcome, detail): outcome is a status, "bug", or "input changed"."""
    global _POLICY
    if _POLICY is None:
        _POLICY = load_policy("general")
    rng = random.Random(seed)
    source = SOURCES[seed % len(SOURCES)]
    data = mutate(rng, source)
    with tempfile.TemporaryDirectory(prefix="regaudit-fuzz-") as folder:
        path = Path(folder) / f"case_{seed}{source.suffix}"
        path.write_bytes(data)
        digest = hashlib.sha256(data).hexdigest()
        try:
            result = audit_workbook(path, _POLICY)
            outcome, detail = result.status, result.error or ""
        except RegauditError as exc:
            outcome, detail = "unreadable", str(exc)
        except MemoryError:  # what the batch's per-file memory limit turns into a reason
            outcome, detail = "stopped (memory)", "ran out of memory under the per-file limit"
        except Exception:  # a bug: the file must have come back in words
            outcome, detail = "bug", traceback.format_exc(limit=6)
        if hashlib.sha256(path.read_bytes()).hexdigest() != digest:
            outcome = "input changed"
    return seed, outcome, detail


def _stopped(seed: int, failure: Failure) -> tuple[int, str, str]:
    """A case stopped by the pool: "memory" is the designed ending for a file that asks for
    too much; a time-out or a crash is a failure of the test."""
    return seed, f"stopped ({failure.kind})", failure.reason


@pytest.mark.skipif(not hasattr(os, "fork"), reason="the fuzz pool forks its workers")
def test_every_mutated_workbook_ends_in_words() -> None:
    assert len(SOURCES) >= 4, "the fuzz sources are missing from fixtures/"
    limits = FileLimits(seconds=60.0, memory_bytes=3 * 1024**3)
    outcomes = [r for _, r in run_limited(fuzz_case, list(range(CASES)), 2, limits, _stopped)]
    assert len(outcomes) == CASES
    counts = Counter(outcome for _, outcome, _ in outcomes)
    endings = ("audited", "no-regressions", "unreadable", "stopped (memory)")
    bad = [(s, o, d) for s, o, d in outcomes if o not in endings or (o == "unreadable" and not d)]
    assert not bad, f"{len(bad)} of {CASES} cases failed; first: {bad[:3]}; all: {dict(counts)}"
    # Both kinds of ending occur, so the mutations neither all break nor all pass harmlessly.
    assert counts["unreadable"] > CASES // 10
    assert counts["audited"] + counts["no-regressions"] > CASES // 10
    internal = [
        d
        for _, o, d in outcomes
        if o == "unreadable" and ("internal error" in d or "regaudit failed" in d)
    ]
    assert not internal, internal[:3]
