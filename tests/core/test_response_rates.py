"""AAPOR outcome rates against the outcomerate test vector (METHODS §9) and their invariants."""

from __future__ import annotations

from fractions import Fraction

import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from core.codebook import Codebook, Variable
from core.errors import PlaincountError
from core.kinds import Kind, MissingReason
from core.project import Project
from core.response_rates import (
    RATE_DEFINITIONS,
    RATE_NAMES,
    Dispositions,
    caption_rate,
    count_completes,
    default_e,
    outcome_rates,
    rates_json,
    save_dispositions,
    wave_dispositions,
    wave_rates,
)
from core.working import working_data

# rOpenSci outcomerate, tests/testthat/test-rate.R (METHODS §9, check value 1):
# I=5, P=3, R=2, NC=1, O=2, UH=1, UO=1, NE=1 with e = 0.5.
VECTOR = Dispositions(I=5, P=3, R=2, NC=1, O=2, UH=1, UO=1, NE=1)
EXPECTED = {
    "RR1": Fraction(1, 3), "RR2": Fraction(8, 15), "RR3": Fraction(5, 14),
    "RR4": Fraction(4, 7), "RR5": Fraction(5, 13), "RR6": Fraction(8, 13),
    "COOP1": Fraction(5, 12), "COOP2": Fraction(2, 3), "COOP3": Fraction(1, 2),
    "COOP4": Fraction(4, 5), "REF1": Fraction(2, 15), "REF2": Fraction(1, 7),
    "REF3": Fraction(2, 13), "CON1": Fraction(4, 5), "CON2": Fraction(6, 7),
    "CON3": Fraction(12, 13),
}  # fmt: skip


@pytest.mark.parametrize("name", RATE_NAMES)
def test_outcomerate_vector(name):
    rate = outcome_rates(VECTOR, e=0.5)[name]
    assert rate.value == pytest.approx(float(EXPECTED[name]), rel=1e-12)
    assert rate.formula == RATE_DEFINITIONS[name][0]
    assert rate.definition


def test_all_sixteen_rates_in_order():
    assert list(outcome_rates(VECTOR, 0.5)) == list(EXPECTED)


def test_default_e_is_eligible_share_of_known_cases():
    # (I+P+R+NC+O) / (I+P+R+NC+O+NE) = 13 / 14 (METHODS §9).
    assert default_e(VECTOR) == pytest.approx(13 / 14)
    rates = outcome_rates(VECTOR)
    assert rates["RR3"].value == pytest.approx(5 / (13 + 13 / 14 * 2))
    data = rates_json(VECTOR)
    assert data["e"] == pytest.approx(13 / 14)
    assert data["e_source"].startswith("default")
    assert data["rates"]["RR2"]["percent"] == pytest.approx(800 / 15)


counts = st.integers(0, 500)


@settings(max_examples=300, deadline=None)
@given(
    i=st.integers(1, 500), p=counts, r=counts, nc=counts, o=counts, uh=counts, uo=counts,
    ne=counts, e=st.floats(0, 1),
)  # fmt: skip
def test_rate_invariants(i, p, r, nc, o, uh, uo, ne, e):
    d = Dispositions(I=i, P=p, R=r, NC=nc, O=o, UH=uh, UO=uo, NE=ne)
    rt = {k: v.value for k, v in outcome_rates(d, e).items()}
    eps = 1e-12
    # METHODS §9: RR1 ≤ RR3 ≤ RR5 and RR2 ≤ RR4 ≤ RR6 whenever 0 ≤ e ≤ 1.
    assert rt["RR1"] <= rt["RR3"] + eps <= rt["RR5"] + 2 * eps
    assert rt["RR2"] <= rt["RR4"] + eps <= rt["RR6"] + 2 * eps
    # Partials only add: each even-numbered rate is at least its odd partner.
    assert rt["RR1"] <= rt["RR2"] + eps and rt["COOP1"] <= rt["COOP2"] + eps
    for v in rt.values():
        assert v is None or 0 <= v <= 1
    at_one = {k: v.value for k, v in outcome_rates(d, 1.0).items()}
    at_zero = {k: v.value for k, v in outcome_rates(d, 0.0).items()}
    assert at_one["RR3"] == pytest.approx(at_one["RR1"])  # RR3 = RR1 at e = 1
    assert at_zero["RR3"] == pytest.approx(at_zero["RR5"])  # RR3 = RR5 at e = 0
    assert at_one["REF2"] == pytest.approx(at_one["REF1"])
    assert at_zero["CON2"] == pytest.approx(at_zero["CON3"])


def test_empty_denominators_are_not_defined_rather_than_errors():
    rates = outcome_rates(Dispositions(UH=3), e=0.0)
    assert rates["RR5"].value is None
    assert "not defined" in rates["RR5"].percent_text
    assert rates["RR1"].value == 0.0


def test_bad_counts_and_e_get_plain_messages():
    with pytest.raises(PlaincountError, match="cannot be negative"):
        Dispositions(I=-1)
    with pytest.raises(PlaincountError, match="whole number"):
        Dispositions(I=2.5)
    with pytest.raises(PlaincountError, match="between 0 and 1"):
        outcome_rates(VECTOR, e=1.5)
    with pytest.raises(PlaincountError, match="Enter e yourself"):
        default_e(Dispositions(UH=4))
    with pytest.raises(PlaincountError, match="Unknown disposition codes: X"):
        Dispositions.from_json({"I": 1, "X": 2})


# ------------------------------------------------------------------ project storage
AGREE = ("Disagree", "Neutral", "Agree")


def make_project(tmp_path, raw: pd.DataFrame, codebook: Codebook):
    proj = Project.create(tmp_path / "rates.plaincount")
    inst = proj.add_instrument("Participant survey", codebook)
    wave = proj.add_wave(inst.id, "2026", "survey.csv", raw.to_csv().encode(), raw)
    return proj, wave.id


def test_dispositions_and_caption_rate_stored_with_the_wave(tmp_path):
    raw = pd.DataFrame({"q1": ["Yes"]})
    codebook = Codebook([Variable("q1", "Finished?", Kind.CATEGORICAL, ("Yes", "No"))])
    proj, wave_id = make_project(tmp_path, raw, codebook)
    with proj:
        assert caption_rate(proj, wave_id) is None
        d = Dispositions(I=70, P=6, R=10, NC=10, O=4)
        save_dispositions(proj, wave_id, d)
        assert wave_dispositions(proj, wave_id) == d
        # RR2 = (70 + 6) / 100
        assert caption_rate(proj, wave_id) == "Response rate (AAPOR RR2): 76.0 %"
        save_dispositions(proj, wave_id, d, e=0.5, caption_rate="COOP1")
        # COOP1 = 70 / (76 + 10 + 4)
        assert caption_rate(proj, wave_id) == "Cooperation rate (AAPOR COOP1): 77.8 %"
        assert wave_rates(proj, wave_id)["CON1"].value == pytest.approx(0.9)
        with pytest.raises(PlaincountError, match="not an AAPOR rate"):
            save_dispositions(proj, wave_id, d, caption_rate="RR9")
        # The population setting stored by the import is left alone.
        assert proj.wave(wave_id).settings["population"] is True


def test_count_completes_from_answers(tmp_path):
    # Six questions: a 3-item battery, a numeric item with -99 = declined, a two-column
    # ranking that counts as one question, and a follow-up that can be "N/A". Rows:
    #   r1 answers all six -> complete; r2 five of six -> complete;
    #   r3 three of the five that apply to them (60 %) -> partial;
    #   r4 one of six -> break-off;
    #   r5 declines the numeric item and answers the rest -> complete (declining is answering);
    #   r6 ranks only one option (the ranking still counts as answered) -> complete.
    raw = pd.DataFrame(
        {
            "id": ["r1", "r2", "r3", "r4", "r5", "r6"],
            "a1": ["Agree", "Agree", "Agree", "Agree", "Neutral", "Agree"],
            "a2": ["Agree", "Neutral", "Agree", None, "Agree", "Agree"],
            "a3": ["Disagree", None, None, None, "Agree", "Agree"],
            "age": ["30", "41", None, None, "-99", "22"],
            "rank_x": ["1", "2", "1", None, "1", "1"],
            "rank_y": ["2", "1", "2", None, "2", None],
            "comment": [None, None, None, None, None, "Great"],
            # Not applicable to r3 (still in school): left out of r3's questions.
            "after": ["Yes", "No", "N/A", None, "Yes", "No"],
        }
    )
    codebook = Codebook(
        [
            Variable("id", kind=Kind.IDENTIFIER),
            *(Variable(f"a{k}", kind=Kind.LIKERT, levels=AGREE, group="course") for k in (1, 2, 3)),
            Variable("age", kind=Kind.NUMERIC, missing_codes={"-99": MissingReason.DECLINED}),
            Variable("rank_x", kind=Kind.RANKING, group="supports", option="X"),
            Variable("rank_y", kind=Kind.RANKING, group="supports", option="Y"),
            Variable("comment", kind=Kind.TEXT),
            Variable(
                "after",
                kind=Kind.CATEGORICAL,
                levels=("Yes", "No"),
                missing_codes={"N/A": MissingReason.NOT_APPLICABLE},
            ),
        ]
    )
    proj, wave_id = make_project(tmp_path, raw, codebook)
    with proj:
        working = working_data(proj, wave_id)
    result = count_completes(working, threshold=0.8)
    assert result.n_questions == 6
    # r3: 3 of 5 applicable (the N/A question is left out); r4: 1 of 6.
    assert result.shares == pytest.approx([1.0, 5 / 6, 0.6, 1 / 6, 1.0, 1.0])
    assert (result.completes, result.partials, result.breakoffs) == (4, 1, 1)
    stricter = count_completes(working, threshold=1.0, partial_threshold=0.7)
    assert (stricter.completes, stricter.partials, stricter.breakoffs) == (3, 1, 2)
    with pytest.raises(PlaincountError, match="thresholds"):
        count_completes(working, 0.5, 0.9)


# ------------------------------------------------------------------ command line
def test_cli_rates_json_matches_the_vector(capsys):
    import json

    from core.cli.main import main

    args = [
        "rates", "--completes", "5", "--partials", "3", "--refusals", "2", "--noncontacts",
        "1", "--other", "2", "--unknown-household", "1", "--unknown-other", "1",
        "--ineligible", "1", "--e", "0.5", "--json",
    ]  # fmt: skip
    assert main(args) == 0
    data = json.loads(capsys.readouterr().out)
    assert list(data["rates"]) == list(EXPECTED)
    for name, value in EXPECTED.items():
        assert data["rates"][name]["value"] == pytest.approx(float(value), rel=1e-12)
    assert data["e_source"] == "entered"


def test_cli_rates_text_and_errors(capsys):
    from core.cli.main import main

    base = ["rates", "--completes", "70", "--partials", "6", "--refusals", "10",
            "--noncontacts", "10", "--other", "4", "--unknown-household", "0",
            "--unknown-other", "0"]  # fmt: skip
    assert main(base) == 0
    out = capsys.readouterr().out
    assert "RR2    76.0 %" in out
    assert main([*base, "--e", "2"]) == 2
    assert "between 0 and 1" in capsys.readouterr().err
    assert main([*base[:2], "-3", *base[3:]]) == 2
    assert "cannot be negative" in capsys.readouterr().err
