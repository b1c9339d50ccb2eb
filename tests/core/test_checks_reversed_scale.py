"""Reversed scale: contradicting keyed items, ratings against the comment's tone; tone words."""

from __future__ import annotations

import pandas as pd

from core.checks import CheckSettings, check_run
from core.checks.tone_words import NEGATIVE, POSITIVE, tone
from core.codebook import Variable
from core.kinds import Kind
from core.ledger import Action
from core.working import working_data
from tests.core.cleaning_support import AGREE, make_project

SD, D, N, A, SA = AGREE


def _project(tmp_path, answers, comments):
    data = {f"agree_{j}": [row[j - 1] for row in answers] for j in range(1, 5)}
    data["comment"] = comments
    book = [
        Variable(
            f"agree_{j}",
            kind=Kind.LIKERT,
            levels=AGREE,
            group="course",
            keying="negative" if j == 4 else "positive",
        )
        for j in range(1, 5)
    ] + [Variable("comment", kind=Kind.TEXT)]
    return make_project(tmp_path, pd.DataFrame(data), book)


def test_tone_counts_and_negation():
    t = tone("Loved it! The instructors were amazing, not boring at all.")
    assert (t.positive, t.negative) == (3, 0)  # "not boring" counts as positive
    assert t.words == ("loved", "amazing", "not boring")
    t = tone("The schedule wasn't helpful and the room was awful")
    assert (t.positive, t.negative) == (0, 2)
    assert tone(None).score == 0
    assert not POSITIVE & NEGATIVE


def test_contradicting_keyed_items_and_comment(tmp_path):
    answers = [
        (A, A, SA, A),  # 0: agrees with both kinds -> contradiction
        (SD, SD, SD, SA),  # 1: negative ratings, glowing comment -> reversed?
        (A, SA, A, D),  # 2: consistent and positive
        (SD, D, SD, A),  # 3: consistently negative, negative comment: fine
        (D, D, D, D),  # 4: disagrees with both kinds
    ]
    comments = [
        "ok",
        "Loved every class, the instructors were amazing!",
        "Great course, very helpful.",
        "Confusing and disorganized.",
        None,
    ]
    project, wave = _project(tmp_path, answers, comments)
    with project:
        flags = [
            f
            for f in check_run(working_data(project, wave), CheckSettings()).flags
            if f.check == "reversed_scale"
        ]
    by_row = {f.row: f for f in flags}
    assert sorted(by_row) == [0, 1, 4]
    assert by_row[0].detail["sign"] == "both_kinds" and by_row[0].value == "agrees"
    assert by_row[4].value == "disagrees"
    glowing = by_row[1]
    assert glowing.detail["sign"] == "comment"
    assert glowing.suggestion.action is Action.REVERSE
    assert glowing.suggestion.value == "course"
    assert "comment" in glowing.variables


def test_reversing_the_scale_answers_the_flag(tmp_path):
    from core.cleaning import decide

    answers = [(SD, SD, SD, SA), (A, A, A, D), (A, SA, A, D)]
    comments = ["Loved every class, the instructors were amazing!", "good", "fine"]
    project, wave = _project(tmp_path, answers, comments)
    with project:
        flags = [
            f
            for f in check_run(working_data(project, wave), CheckSettings()).flags
            if f.check == "reversed_scale"
        ]
        assert [f.row for f in flags] == [0]
        decide(project, wave, flags[0], None, "Comment and overall rating are glowing")
        wd = working_data(project, wave)
        assert list(wd.values.loc[0, ["agree_1", "agree_4"]]) == [SA, SD]
        assert not [f for f in check_run(wd, CheckSettings()).flags if f.check == "reversed_scale"]
