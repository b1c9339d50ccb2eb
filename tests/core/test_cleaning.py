"""Decisions on flags, batches, recode rules, the respondent row, refresh, and the CLI."""

from __future__ import annotations

import json

import pandas as pd
import pytest

from core import cleaning
from core.checks import CheckSettings, check_run, load_settings, save_settings
from core.cli.main import main
from core.errors import PlaincountError
from core.ledger import Action, entries_for, withdraw
from core.rules import add_rule
from core.working import working_data
from tests.core.cleaning_support import make_project, survey


@pytest.fixture
def wave(tmp_path):
    frame, variables = survey()
    project, wave_id = make_project(tmp_path, frame, variables)
    add_rule(
        project,
        project.wave(wave_id).instrument_id,
        "if completed is No then credential_earned must not be Yes",
    )
    yield project, wave_id
    project.close()


def _flag(run, check, row):
    return next(f for f in run.flags if f.check == check and f.row == row)


def test_flags_for_finds_each_planted_problem(wave):
    project, wave_id = wave
    run = cleaning.flags_for(project, wave_id)
    found = {(f.check, f.row) for f in run.flags}
    planted = {
        ("range", 3),
        ("wandering_zero", 5),
        ("range", 6),
        ("consistency", 8),
        ("straightlining", 10),
        ("reversed_scale", 12),
        ("speeder", 14),
        ("invalid", 15),
        ("duplicate_id", 39),
        ("duplicate_row", 39),
    }
    assert planted <= found
    groups = cleaning.grouped(run.flags)
    assert [g.check for g in groups] == [
        "invalid",
        "range",
        "wandering_zero",
        "outlier",
        "consistency",
        "duplicate_id",
        "duplicate_row",
        "straightlining",
        "reversed_scale",
        "speeder",
    ]
    assert sum(g.count for g in groups) == len(run.flags)
    # Flags are hashable values (a view may keep them in sets), keyed by check/row/variables.
    assert len(set(run.flags)) == len(run.flags) == len({f.key for f in run.flags})


def test_each_kind_of_decision(wave):
    project, wave_id = wave
    run = cleaning.flags_for(project, wave_id)
    # Correct to the suggested value (wandering zero 120 -> 12).
    ids, changes = cleaning.decide(
        project, wave_id, _flag(run, "wandering_zero", 5), None, "Checked the paper form"
    )
    assert changes.variables == {"credits_term"}
    wd = working_data(project, wave_id)
    assert wd.values.at[5, "credits_term"] == 12
    entry = entries_for(project, wave_id)[-1]
    assert (entry.old_value, entry.new_value, entry.check) == (120, 12, "wandering_zero")
    # Set missing with the reason code "set missing in cleaning".
    cleaning.decide(project, wave_id, _flag(run, "range", 3), "set_missing", "Impossible age")
    wd = working_data(project, wave_id)
    assert pd.isna(wd.values.at[3, "age"]) and wd.reasons.at[3, "age"] == "set_missing"
    # Keep as is: the flag stays but is marked decided.
    ids, _ = cleaning.decide(
        project, wave_id, _flag(run, "range", 6), Action.KEEP, "Confirmed with the participant"
    )
    again = cleaning.flags_for(project, wave_id)
    assert _flag(again, "range", 6).decided_by == ids[0]
    # Reverse a battery, exclude a respondent.
    cleaning.decide(project, wave_id, _flag(run, "reversed_scale", 12), None, "Glowing comment")
    cleaning.decide(project, wave_id, _flag(run, "speeder", 14), Action.EXCLUDE, "60 seconds")
    wd = working_data(project, wave_id)
    assert wd.values.at[12, "agree_1"] == "Strongly agree"
    assert 14 in wd.excluded
    assert project.raw_table(wave_id).at[5, "credits_term"] == 120  # raw never changes


def test_reason_and_value_are_required(wave):
    project, wave_id = wave
    run = cleaning.flags_for(project, wave_id)
    with pytest.raises(PlaincountError, match="reason"):
        cleaning.decide(project, wave_id, _flag(run, "range", 3), "set_missing", "  ")
    with pytest.raises(PlaincountError, match="not a valid answer"):
        cleaning.edit_cell(project, wave_id, 3, "age", "typo", value="old")
    with pytest.raises(PlaincountError, match="several variables"):
        cleaning.decide(project, wave_id, _flag(run, "consistency", 8), "correct", "x", value=1)
    with pytest.raises(PlaincountError, match="no suggested decision"):
        cleaning.decide(project, wave_id, _flag(run, "consistency", 8), None, "x")
    assert entries_for(project, wave_id) == []


def test_batch_is_one_transaction_and_one_undo_step(wave):
    project, wave_id = wave
    run = cleaning.flags_for(project, wave_id)
    chosen = [f for f in run.flags if f.suggestion and f.suggestion.action is Action.CORRECT]
    chosen += [_flag(run, "duplicate_id", 39), _flag(run, "duplicate_row", 39)]
    ids, _ = cleaning.decide_many(project, wave_id, chosen, None, "Batch after review")
    entries = entries_for(project, wave_id)
    assert len({e.batch for e in entries}) == 1 and entries[0].batch is not None
    # Two flags suggesting to exclude row 39 become one exclusion.
    assert sum(1 for e in entries if e.action is Action.EXCLUDE) == 1
    assert len(ids) == len(entries)
    project.undo()
    assert working_data(project, wave_id).edits == {}
    # A batch with one bad decision records nothing.
    bad = [_flag(run, "range", 3), _flag(run, "consistency", 8)]
    with pytest.raises(PlaincountError):
        cleaning.decide_many(project, wave_id, bad, "set_missing", "x")
    assert len(entries_for(project, wave_id)) == len(entries) + len(ids)  # only undo rows


def test_find_row_and_duplicate_ids(wave):
    project, wave_id = wave
    wd = working_data(project, wave_id)
    assert cleaning.find_row(wd, "R005") == 4
    with pytest.raises(PlaincountError, match="appears 2 times .*--row"):
        cleaning.find_row(wd, "R002")
    assert cleaning.find_row(wd, "R002", 40) == 39
    with pytest.raises(PlaincountError, match="belongs to respondent"):
        cleaning.find_row(wd, "R005", 40)
    with pytest.raises(PlaincountError, match="No respondent"):
        cleaning.find_row(wd, "nobody")


def test_respondent_row_marks_flagged_and_edited_cells(wave):
    project, wave_id = wave
    run = cleaning.flags_for(project, wave_id)
    cleaning.decide(project, wave_id, _flag(run, "wandering_zero", 5), None, "Paper form")
    run = cleaning.flags_for(project, wave_id)
    cells = cleaning.respondent_row(working_data(project, wave_id), 5, run.flags)
    by = {c.variable: c for c in cells}
    assert list(by) == [v.name for v in working_data(project, wave_id).codebook]
    assert by["credits_term"].edited and by["credits_term"].raw == "120"
    assert by["credits_term"].value == 12
    row3 = {
        c.variable: c for c in cleaning.respondent_row(working_data(project, wave_id), 3, run.flags)
    }
    assert row3["age"].flags == ("range",) and not row3["age"].edited
    note = cleaning.cell_note(working_data(project, wave_id), 5, "credits_term")
    lines = note.splitlines()
    assert lines[:2] == ["Original: 120", "Now: 12"]
    assert lines[2].startswith("Corrected (wandering zero): Paper form (entry 1, 20")
    assert cleaning.cell_note(working_data(project, wave_id), 3, "age") is None


def test_refresh_matches_a_full_run(wave):
    project, wave_id = wave
    settings = CheckSettings()
    run = cleaning.flags_for(project, wave_id, settings)
    steps = [
        lambda: cleaning.decide(project, wave_id, _flag(run, "wandering_zero", 5), None, "x"),
        lambda: cleaning.edit_cell(project, wave_id, 8, "completed", "form", value="Yes"),
        lambda: cleaning.decide(project, wave_id, _flag(run, "range", 6), Action.KEEP, "ok"),
        lambda: cleaning.exclude(project, wave_id, 39, "copy"),
        lambda: cleaning.reverse_battery(project, wave_id, 12, "agree", "comment"),
    ]
    current = run
    for step in steps:
        _, changes = step()
        current = cleaning.refresh_flags(project, wave_id, current, changes, settings)
        full = check_run(working_data(project, wave_id), current.settings)
        assert [(f.key, f.decided_by, f.message) for f in current.flags] == [
            (f.key, f.decided_by, f.message) for f in full.flags
        ]


def test_recode_all_is_a_rule_for_the_next_wave(tmp_path):
    frame = pd.DataFrame({"age": ["30", "-99", "41", "-99"], "q": ["1", "2", "3", "4"]})
    from core.codebook import Variable
    from core.kinds import Kind

    book = [Variable("age", kind=Kind.NUMERIC), Variable("q", kind=Kind.NUMERIC)]
    project, w1 = make_project(tmp_path, frame, book)
    with project:
        inst = project.wave(w1).instrument_id
        ids, _ = cleaning.recode_all(project, w1, ["age"], "-99", None, "Declined code")
        wd = working_data(project, w1)
        assert list(wd.reasons["age"].astype(object).fillna("")) == [
            "",
            "set_missing",
            "",
            "set_missing",
        ]
        assert entries_for(project, w1)[-1].scope == "rule"
        cleaning.edit_cell(project, w1, 0, "q", "typo", value="5")  # a cell: not a rule
        add_rule(project, inst, "age >= 16")
        items = cleaning.rules_for_next_wave(project, inst)
        assert [i["kind"] for i in items] == ["consistency", "recode"]
        assert items[1]["old_value"] == "-99" and items[1]["new_value"] is None
        w2 = project.add_wave(inst, "2027", "b.csv", b"b", frame).id
        new_ids, _ = cleaning.apply_rules_to_wave(project, w2)
        assert len(new_ids) == 1
        assert working_data(project, w2).reasons.at[1, "age"] == "set_missing"
        assert cleaning.apply_rules_to_wave(project, w2)[0] == []  # already applied
        withdraw(project, w1, ids, "wrong")
        assert [i["kind"] for i in cleaning.rules_for_next_wave(project, inst)] == [
            "consistency",
            "recode",  # still in force in wave 2027
        ]


def test_settings_saved_in_project(wave):
    project, _ = wave
    save_settings(project, CheckSettings(outlier_method="modified_z", speeder_fraction=0.3))
    loaded = load_settings(project)
    assert (loaded.outlier_method, loaded.speeder_fraction) == ("modified_z", 0.3)
    with pytest.raises(PlaincountError, match="outlier method"):
        CheckSettings(outlier_method="zscore")


def test_ledger_list_filters(wave):
    project, wave_id = wave
    run = cleaning.flags_for(project, wave_id)
    cleaning.decide(project, wave_id, _flag(run, "wandering_zero", 5), None, "Paper form")
    ids, _ = cleaning.decide(project, wave_id, _flag(run, "range", 3), "set_missing", "Impossible")
    withdraw(project, wave_id, ids, "Found the form")
    rows = cleaning.ledger_list(project, wave_id)
    assert [(e.action, active) for e, active in rows] == [
        (Action.CORRECT, True),
        (Action.SET_MISSING, False),
    ]
    assert len(cleaning.ledger_list(project, wave_id, variable="age")) == 1
    assert len(cleaning.ledger_list(project, wave_id, check="wandering_zero")) == 1
    assert len(cleaning.ledger_list(project, wave_id, reason="paper")) == 1
    assert cleaning.ledger_list(project, wave_id, include_withdrawn=False)[0][1]


# ---------------------------------------------------------------------- command line


@pytest.fixture
def project_file(wave):
    project, _ = wave
    path = project.path
    project.close()
    return str(path)


def _json(capsys, argv):
    assert main(argv) == 0
    return json.loads(capsys.readouterr().out)


def test_cli_flags_json_shape(project_file, capsys):
    data = _json(capsys, ["flags", project_file, "--wave", "2026", "--json"])
    assert data["wave"] == "2026"
    assert data["counts"]["speeder"] == 1
    flag = next(f for f in data["flags"] if f["check"] == "wandering_zero")
    assert {
        "check",
        "respondent",
        "variables",
        "value",
        "severity",
        "message",
        "suggestion",
    } <= set(flag)
    assert flag["respondent"] == "R006" and flag["row"] == 6
    assert flag["value"] == 120 and flag["variables"] == ["credits_term"]
    assert flag["suggestion"] == {
        "action": "correct",
        "value": 12,
        "text": "Correct to 12 after checking the source.",
    }
    only = _json(
        capsys, ["flags", project_file, "--json", "--check", "speeder", "--speeder-fraction", "0.3"]
    )
    assert [f["check"] for f in only["flags"]] == ["speeder"]
    assert only["settings"]["speeder_fraction"] == 0.3
    # Overrides are for one run unless saved.
    again = _json(
        capsys, ["flags", project_file, "--json", "--outlier-method", "modified_z", "--save"]
    )
    assert again["settings"]["speeder_fraction"] == 0.5
    saved = _json(capsys, ["flags", project_file, "--json"])
    assert saved["settings"]["outlier_method"] == "modified_z"
    assert main(["flags", project_file, "--speeder-fraction", "2"]) == 2
    assert "between 0 and 1" in capsys.readouterr().err


def test_cli_edit_ledger_and_rules(project_file, capsys):
    assert (
        main(
            [
                "edit",
                project_file,
                "--wave",
                "2026",
                "--respondent",
                "R002",
                "--variable",
                "age",
                "--value",
                "31",
                "--reason",
                "x",
            ]
        )
        == 2
    )
    assert "--row" in capsys.readouterr().err
    out = _json(
        capsys,
        [
            "edit",
            project_file,
            "--wave",
            "2026",
            "--respondent",
            "R006",
            "--variable",
            "credits_term",
            "--value",
            "12",
            "--reason",
            "Paper form",
            "--check",
            "wandering_zero",
            "--json",
        ],
    )
    assert out["entry"]["new_value"] == 12 and out["entry"]["row"] == 6
    _json(
        capsys,
        [
            "edit",
            project_file,
            "--wave",
            "2026",
            "--respondent",
            "R002",
            "--row",
            "40",
            "--exclude",
            "--reason",
            "Second submission",
            "--json",
        ],
    )
    _json(
        capsys,
        [
            "edit",
            project_file,
            "--wave",
            "2026",
            "--respondent",
            "R013",
            "--reverse-battery",
            "agree",
            "--reason",
            "Glowing comment",
            "--json",
        ],
    )
    _json(
        capsys,
        [
            "edit",
            project_file,
            "--wave",
            "2026",
            "--row",
            "4",
            "--variable",
            "age",
            "--missing",
            "--reason",
            "Impossible",
            "--json",
        ],
    )
    ledger = _json(capsys, ["ledger", project_file, "--json"])
    assert [e["action"] for e in ledger["entries"]] == [
        "correct",
        "exclude",
        "reverse",
        "set_missing",
    ]
    assert all(e["active"] for e in ledger["entries"])
    first = ledger["entries"][0]["id"]
    ledger = _json(
        capsys,
        ["ledger", project_file, "--withdraw", str(first), "--reason", "wrong row", "--json"],
    )
    assert ledger["entries"][0]["active"] is False
    assert ledger["entries"][-1]["action"] == "withdraw"
    rules = _json(capsys, ["rules", project_file, "--add", "age >= 16", "--json"])
    assert [r["text"] for r in rules["rules"]][-1] == "age >= 16"
    rid = rules["added"]
    rules = _json(capsys, ["rules", project_file, "--remove", str(rid), "--json"])
    assert rid not in [r["id"] for r in rules["rules"]]
    assert main(["rules", project_file, "--add", "if agee > 3 then age < 2"]) == 2
    assert "not a variable" in capsys.readouterr().err
    assert main(["flags", project_file]) == 0
    text = capsys.readouterr().out
    assert "Speeder (speeder): 1" in text
