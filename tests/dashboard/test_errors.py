"""User-facing errors: a Tidemark error is shown as written, anything else without internals."""

from __future__ import annotations

import logging

from analysis.errors import ImportRejected, InvalidParameter, Problem
from dashboard.errors import describe


def _error_script() -> None:
    from dashboard.errors import user_errors

    with user_errors("Review"):
        raise KeyError("internal_column_name")


def test_describe_keeps_lab_messages_and_hides_internals():
    rejected = ImportRejected([Problem("text in a numeric column", "fix the cell", file="a.csv", row=12, column="VO2")])
    assert describe(rejected) == "- file 'a.csv', line 12, column 'VO2': text in a numeric column — fix the cell"
    assert describe(InvalidParameter("size", "an odd number", 4)) == "'size' must be an odd number; received 4."
    text = describe(KeyError("internal_column_name"))
    assert "internal_column_name" not in text and "Nothing was changed" in text


def test_unexpected_error_is_a_plain_message_with_a_log_reference(page_test, caplog):
    with caplog.at_level(logging.ERROR, logger="tidemark.dashboard"):
        at = page_test(_error_script).run()
    assert not at.exception
    (shown,) = [e.value.replace("\\", "") for e in at.error]  # shown escaped (markdown)
    assert shown.startswith("Review: Something went wrong on the server.")
    assert "internal_column_name" not in shown and "Traceback" not in shown
    ref = shown.split("reference ")[1].split(" ")[0]
    assert any(ref in r.getMessage() and r.exc_info for r in caplog.records)
