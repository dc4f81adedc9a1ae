"""ProtectedFiles (the audited files resolved once) answers as the straightforward test does:
for each input in order, the same resolved path, or ``os.path.samefile`` when both exist."""

from __future__ import annotations

import os
import random
from pathlib import Path

import pytest

from auditor.report.output import ProtectedFiles


def first_match_straightforward(target: Path, inputs: list[Path | str]) -> Path | str | None:
    for source in inputs:
        if target.resolve() == Path(source).resolve():
            return source
        try:
            if os.path.samefile(target, source):
                return source
        except OSError:
            pass
    return None


def _folder_of_aliases(root: Path, rng: random.Random) -> list[Path]:
    """Files, a missing name, symbolic links, hard links and relative spellings of them."""
    names = [root / f"book{i}.xlsx" for i in range(4)]
    for path in names[:3]:  # the last one is never created
        path.write_bytes(b"workbook")
    aliases: list[Path] = list(names)
    (root / "sub").mkdir()
    for index, path in enumerate(names[:3]):
        if rng.random() < 0.7:
            link = root / "sub" / f"sym{index}.xlsx"
            link.symlink_to(path)
            aliases.append(link)
        if hasattr(os, "link") and rng.random() < 0.7:
            hard = root / f"hard{index}.xlsx"
            os.link(path, hard)
            aliases.append(hard)
    aliases.append(root / "sub" / ".." / names[0].name)  # a spelling that resolves to book0
    aliases.append(root / "sub" / "dangling.xlsx")
    (root / "sub" / "dangling.xlsx").symlink_to(root / "nowhere.xlsx")
    return aliases


@pytest.mark.parametrize("seed", range(12))
def test_same_answer_as_the_straightforward_test(tmp_path: Path, seed: int) -> None:
    rng = random.Random(seed)
    aliases = _folder_of_aliases(tmp_path, rng)
    inputs: list[Path | str] = [str(p) if rng.random() < 0.5 else p for p in aliases]
    inputs = rng.sample(inputs, rng.randint(1, len(inputs)))
    protected = ProtectedFiles(inputs)
    for target in [*aliases, tmp_path / "audit.json", tmp_path / "sub" / "summary.txt"]:
        assert protected.matching(target) == first_match_straightforward(target, inputs)


def test_names_the_first_matching_input_in_order(tmp_path: Path) -> None:
    book = tmp_path / "book.xlsx"
    book.write_bytes(b"workbook")
    link = tmp_path / "link.xlsx"
    link.symlink_to(book)
    protected = ProtectedFiles(["elsewhere.xlsx", str(link), str(book)])
    assert protected.matching(book) == str(link)
    assert protected.matching(tmp_path / "other.xlsx") is None
