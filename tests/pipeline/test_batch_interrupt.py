"""A Ctrl-C while the parent records a result (not while it waits for one) stops the audit
workers before ``audit_batch`` lets the interrupt go: no worker outlives the run."""

from __future__ import annotations

import multiprocessing
from pathlib import Path

import pytest

from auditor.pipeline.batch import audit_batch
from auditor.pipeline.ledger import Ledger
from auditor.policy import load_policy

BOOKS = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"


def _interrupt() -> None:
    raise KeyboardInterrupt


@pytest.mark.parametrize("ledger", [False, True])
def test_an_interrupt_between_results_stops_the_workers(tmp_path: Path, ledger: bool) -> None:
    paths = sorted(BOOKS.glob("*.xlsx"))[:6]
    book = Ledger(tmp_path / "ledger.sqlite") if ledger else None
    with pytest.raises(KeyboardInterrupt) as raised:
        # ``meanwhile`` runs when the first result is in, the others still being audited.
        audit_batch(paths, load_policy("general"), jobs=2, ledger=book, meanwhile=_interrupt)
    assert raised.traceback  # the frames stay referenced, as in a caller handling the interrupt
    assert multiprocessing.active_children() == []
