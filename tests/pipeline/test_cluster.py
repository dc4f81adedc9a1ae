"""Batches on Dask (auditor.pipeline.cluster): a real LocalCluster of 2 worker processes must give
the
same per-file results as the local run, whether workers read the files or get their bytes.

The corpus is the fixture folder plus one unreadable file, so error texts (which name the file)
are compared too. The LocalCluster tests skip when dask.distributed is not installed; the CI
installs the ``cluster`` extra.
"""

from __future__ import annotations

import builtins
import json
import shutil
from pathlib import Path
from typing import Any

import pytest

from auditor.errors import UsageError
from auditor.model import AuditResult, WorkbookResult
from auditor.pipeline.audit import collect_inputs
from auditor.pipeline.batch import audit_batch
from auditor.pipeline.cluster import INSTALL_HINT, ClusterTarget, audit_on_cluster, parse_cluster
from auditor.policy import load_policy

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        ("local:2", ClusterTarget(local_workers=2)),
        (" LOCAL:16 ", ClusterTarget(local_workers=16)),
        ("tcp://10.1.2.3:8786", ClusterTarget(address="tcp://10.1.2.3:8786")),
        ("scheduler:8786", ClusterTarget(address="scheduler:8786")),
    ],
)
def test_cluster_values(value: str, expected: ClusterTarget) -> None:
    assert parse_cluster(value) == expected


@pytest.mark.parametrize("value", ["local", "local:0", "local:two", "", "tcp://a b:1"])
def test_bad_cluster_values_are_explained(value: str) -> None:
    with pytest.raises(UsageError, match=repr(value).replace("\\", "\\\\").replace("[", r"\[")):
        parse_cluster(value)


def test_without_dask_the_message_says_how_to_install_it(monkeypatch: pytest.MonkeyPatch) -> None:
    real_import = builtins.__import__

    def no_distributed(name: str, *args: Any, **kwargs: Any) -> Any:
        if name == "distributed" or name.startswith("distributed."):
            raise ImportError(f"No module named {name!r}")
        return real_import(name, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", no_distributed)
    with pytest.raises(UsageError) as caught:
        audit_on_cluster([FIXTURES / "functions_coverage.xlsx"], load_policy("general"))
    assert INSTALL_HINT in str(caught.value)
    assert INSTALL_HINT == "pip install 'regaudit[cluster]'"


@pytest.fixture(scope="module")
def corpus(tmp_path_factory: pytest.TempPathFactory) -> list[Path]:
    folder = tmp_path_factory.mktemp("corpus")
    shutil.copytree(FIXTURES, folder / "books")
    (folder / "books" / "truncated.xlsx").write_bytes(b"PK\x03\x04 cut short")
    (folder / "books" / "vanished.xlsx").write_bytes(b"")
    paths = collect_inputs([folder / "books"])
    (folder / "books" / "vanished.xlsx").unlink()  # gone between collecting and auditing
    return paths


def _document(workbooks: list[WorkbookResult]) -> str:
    # Nothing in a per-file result is a timing; the run's date is fixed here.
    result = AuditResult("0.1.0", "general", workbooks, "2024-05-03")
    return json.dumps(result.to_dict(), sort_keys=True)


@pytest.mark.parametrize("ship_bytes", [False, True], ids=["shared-path", "ship-bytes"])
def test_local_cluster_gives_the_local_results(corpus: list[Path], ship_bytes: bool) -> None:
    pytest.importorskip("distributed")
    policy = load_policy("general")
    local = audit_batch(corpus, policy)
    remote = audit_on_cluster(corpus, policy, cluster="local:2", ship_bytes=ship_bytes)
    assert [w.path for w in remote] == [str(p) for p in corpus]
    assert [w.status for w in remote].count("unreadable") == 2
    assert _document(remote) == _document(local)
