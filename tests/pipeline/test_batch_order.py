"""Workers take the largest files first (``largest_first``), and every result still comes back
under the index of its own path."""

from __future__ import annotations

import random
from pathlib import Path

from auditor.pipeline.batch import iter_audits, largest_first
from auditor.pipeline.limits import FileLimits
from auditor.policy import load_policy

BOOKS = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"


def test_largest_first_orders_by_size_with_ties_and_missing_files_in_input_order(
    tmp_path: Path,
) -> None:
    rng = random.Random(7)
    for trial in range(20):
        sizes = [rng.choice([0, 5, 10, 10, 300, 4096, 70000]) for _ in range(rng.randint(1, 12))]
        paths = []
        for index, size in enumerate(sizes):
            path = tmp_path / f"t{trial}_{index}.xlsx"
            path.write_bytes(b"x" * size)
            paths.append(path)
        missing = tmp_path / f"t{trial}_missing.xlsx"  # unreadable size: last, as if empty
        paths.insert(rng.randint(0, len(paths)), missing)
        order = largest_first(paths)
        expected = sorted(
            range(len(paths)),
            key=lambda i: (-(paths[i].stat().st_size if paths[i].exists() else 0), i),
        )
        assert order == expected


def test_results_come_back_under_their_own_index_and_the_largest_first() -> None:
    books = sorted(BOOKS.glob("*.xlsx"), key=lambda p: p.stat().st_size)[:6]
    assert len({p.stat().st_size for p in books}) == len(books)
    policy = load_policy("general")
    for jobs in (1, 2):
        runs = list(iter_audits(books, policy, jobs=jobs, limits=FileLimits()))
        assert sorted(index for index, *_ in runs) == list(range(len(books)))
        for index, result, *_ in runs:
            assert result.path == str(books[index])
        if jobs == 1:  # one worker takes them one by one: the largest (the last here) first
            assert [index for index, *_ in runs] == list(range(len(books)))[::-1]
