"""audit.json: the machine-readable contract (see "Contracts other tools rely on" in the design).

The document is exactly ``AuditResult.to_dict()``, made JSON-safe, in the model's own key order
(sorted keys would scatter related fields), indented by 2, UTF-8 with a trailing newline.
Non-finite numbers become null first; ``allow_nan=False`` then guarantees that nothing slips
through as the ``NaN`` token, which is not JSON and which other tools reject.
The schema of the contract lives in tests/schema/audit.schema.json.
"""

from __future__ import annotations

from typing import Any, BinaryIO

from auditor.model import AuditResult
from auditor.report.common import plain
from auditor.report.json_text import plain_indented_json


def audit_document(result: AuditResult) -> dict[str, Any]:
    """The audit.json document as plain data."""
    document: dict[str, Any] = plain(result.to_dict())
    return document


def render_json(result: AuditResult) -> str:
    # json.dumps(audit_document(result), indent=2, …), faster: see report.json_text
    return plain_indented_json(result.to_dict()) + "\n"


class JsonReporter:
    """Writes audit.json."""

    filename = "audit.json"

    def write(self, result: AuditResult, handle: BinaryIO) -> None:
        handle.write(render_json(result).encode("utf-8"))
