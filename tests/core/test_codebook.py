"""Codebook entries: JSON round trip, partial apply, validation messages."""

from __future__ import annotations

import pytest

from core.codebook import Codebook, Variable
from core.errors import CodebookError
from core.kinds import Kind, MissingReason


def sample() -> Codebook:
    return Codebook(
        [
            Variable("resp_id", kind=Kind.IDENTIFIER),
            Variable(
                "agree_1",
                "The course was well organised",
                Kind.LIKERT,
                levels=("Disagree", "Neutral", "Agree"),
                group="agree",
                keying="positive",
            ),
            Variable("age", "Age", Kind.NUMERIC, missing_codes={"-99": "declined"}, range=(16, 80)),
        ]
    )


def test_json_round_trip_keeps_every_field():
    book = sample()
    again = Codebook.loads(book.dumps())
    assert again == book
    entry = again["age"].to_json()
    assert entry["missing_codes"] == {"-99": "declined"}
    assert entry["range"] == [16.0, 80.0]
    assert entry["kind"] == "numeric"
    assert entry["personal"] is False


def test_apply_changes_only_the_given_keys():
    book, changed = sample().applied(
        [{"name": "age", "range": [18, 64]}, {"name": "not_here", "kind": "text"}]
    )
    assert changed == ["age"]
    assert book["age"].range == (18.0, 64.0)
    assert book["age"].missing_codes == {"-99": MissingReason.DECLINED}
    assert book["agree_1"] == sample()["agree_1"]


@pytest.mark.parametrize(
    "change, message",
    [
        ({"name": "age", "kind": "number"}, "Unknown kind"),
        ({"name": "age", "range": [80, 16]}, "minimum must not be larger"),
        ({"name": "age", "missing_codes": {"-99": "refused"}}, "unknown reason"),
        ({"name": "age", "colour": "red"}, "Unknown codebook keys"),
        ({"name": "agree_1", "keying": "backwards"}, "Keying"),
    ],
)
def test_bad_changes_get_plain_messages(change, message):
    with pytest.raises(CodebookError, match=message):
        sample().applied([change])


def test_groups_and_identifier():
    book = sample()
    assert [v.name for v in book.members("agree")] == ["agree_1"]
    assert book.identifier().name == "resp_id"
    with pytest.raises(CodebookError, match="no question group"):
        book.members("nothing")
