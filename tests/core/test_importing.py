"""Importing into a project: lossless storage, reports, cancel, reuse, and the CLI."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

from core.cli.main import main
from core.codebook import Codebook
from core.errors import ImportFailed
from core.importing import default_wave_label, import_file
from core.kinds import Kind
from core.progress import Cancelled, Progress
from core.project import Project

BAD = Path(__file__).resolve().parent.parent / "data" / "bad_inputs"

SURVEY_CSV = (
    "resp_id,age,zip,pet,agree_1,agree_2,agree_3,note\n"
    "R01,34,007,None,Agree,Agree,Disagree,\n"
    "R02,-99,02134,Cat,Strongly agree,Disagree,Agree,fine\n"
    "R03,51,10001,NA,Disagree,Strongly disagree,Agree,null\n"
    "R04,28,2019,Dog,Strongly disagree,Agree,Strongly agree,\n"
    "R05,45,94110,Cat,Agree,Strongly agree,Disagree,ok\n"
    "R06,38,60601,None,Agree,Disagree,Strongly disagree,\n"
)


@pytest.fixture
def project(tmp_path):
    proj = Project.create(tmp_path / "p.plaincount")
    yield proj
    proj.close()


@pytest.fixture
def survey(tmp_path) -> Path:
    path = tmp_path / "survey_2026.csv"
    path.write_text(SURVEY_CSV, encoding="utf-8")
    return path


def same_cells(a: pd.Series, b: pd.Series) -> bool:
    left = [None if pd.isna(v) else v for v in a.tolist()]
    right = [None if pd.isna(v) else v for v in b.tolist()]
    return left == right


def test_import_stores_source_bytes_raw_table_and_codebook(project, survey, tmp_path):
    result = import_file(project, survey)
    wave = result.wave
    assert wave.label == "2026"  # the year in the file name
    assert (wave.n_rows, wave.n_columns) == (6, 8)
    name, blob = project.source_file(wave.id)
    assert name == "survey_2026.csv" and blob == survey.read_bytes()
    assert wave.source_sha256 == hashlib.sha256(survey.read_bytes()).hexdigest()
    cb = result.codebook
    assert cb["resp_id"].kind is Kind.IDENTIFIER
    assert cb["age"].missing_codes == {"-99": "declined"}
    assert cb["agree_1"].group == "agree"
    report = result.report
    assert report["encoding"] == "utf-8" and report["delimiter"] == ","
    assert report["n_rows"] == 6 and report["n_columns"] == 8
    assert report["kinds"]["likert"] == 3
    assert report["new_variables"] == list(cb.names)

    # Reopened, every cell reads back exactly as imported.
    raw = project.raw_table(wave.id).copy()
    project.close()
    with Project.open(tmp_path / "p.plaincount") as again:
        stored = again.raw_table(wave.id)
        assert list(stored.columns) == list(raw.columns)
        for col in raw.columns:
            assert same_cells(stored[col], raw[col]), col
        assert stored["zip"].tolist() == ["007", "02134", "10001", "2019", "94110", "60601"]
        assert stored["pet"].tolist()[:3] == ["None", "Cat", "NA"]
        assert again.codebook(wave.instrument_id) == cb


def test_workbook_cells_survive_the_project_file(project, tmp_path):
    import datetime as dt

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["id", "when", "score", "mixed"])
    ws.append(["A", dt.datetime(2026, 5, 1, 8, 15, 30), 3.25, 12])
    ws.append(["B", None, None, "n/a"])
    path = tmp_path / "w.xlsx"
    wb.save(path)
    wave = import_file(project, path, wave="exit").wave
    raw = project.raw_table(wave.id)
    project._raw_cache.clear()  # read the stored blob, not the cached frame
    stored = project.raw_table(wave.id)
    for col in raw.columns:
        assert same_cells(stored[col], raw[col]), col
    assert stored["when"].iloc[0] == pd.Timestamp("2026-05-01 08:15:30")
    assert stored["score"].iloc[0] == 3.25
    assert stored["mixed"].tolist() == ["12", "n/a"]


def test_cancel_leaves_the_project_unchanged(project, survey):
    before = (project.version, project.instruments(), project.waves())
    progress = Progress()

    def cancel_midway(done, total, label):
        if done >= 60:
            progress.cancel()

    progress.on_update = cancel_midway
    with pytest.raises(Cancelled):
        import_file(project, survey, progress=progress)
    assert (project.version, project.instruments(), project.waves()) == before


@pytest.mark.parametrize("bad", ["truncated.xlsx", "header_only.csv", "entity_bomb.xlsx"])
def test_failed_import_leaves_the_project_unchanged(project, bad):
    before = (project.version, project.instruments(), project.waves())
    with pytest.raises(ImportFailed):
        import_file(project, BAD / bad)
    assert (project.version, project.instruments(), project.waves()) == before


def test_failure_while_storing_removes_the_new_instrument(project, survey, monkeypatch):
    def broken(*args, **kwargs):
        raise OSError("disk full")

    monkeypatch.setattr(project, "add_wave", broken)
    with pytest.raises(OSError):
        import_file(project, survey, instrument="Exit survey")
    assert project.instruments() == []


def test_progress_reaches_the_end(project, survey):
    seen = []
    import_file(project, survey, progress=Progress(on_update=lambda d, t, lbl: seen.append(d)))
    assert seen[-1] == 100 and seen == sorted(seen)


def test_second_wave_reuses_the_codebook_and_appends_new_columns(project, survey, tmp_path):
    first = import_file(project, survey, wave="2026")
    inst = first.wave.instrument_id
    edited = first.codebook["pet"].updated({"question": "Which pet do you have?"})
    project.set_codebook(inst, first.codebook.with_variable(edited))
    nxt = tmp_path / "next.csv"
    nxt.write_text(
        "resp_id,age,pet,agree_1,agree_2,agree_3,note,visits\n"
        "R01,35,Cat,Agree,Agree,Agree,,3\nR09,22,Fish,Disagree,Agree,Agree,x,1\n"
        "R10,40,Dog,Agree,Disagree,Agree,,2\n",
        encoding="utf-8",
    )
    second = import_file(project, nxt, wave="2027")
    cb = second.codebook
    assert cb["pet"].question == "Which pet do you have?"  # the evaluator's edit is kept
    assert cb["visits"].position == 9  # appended after the eight known variables
    assert second.report["new_variables"] == ["visits"]
    assert "zip" in cb  # a column the new wave lacks keeps its entry
    with pytest.raises(ImportFailed, match="already has a wave labelled '2027'"):
        import_file(project, nxt, wave="2027")


def test_column_map_and_level_maps_line_up_a_renamed_wave(project, survey, tmp_path):
    import_file(project, survey, wave="2026")
    nxt = tmp_path / "renamed.csv"
    nxt.write_text(
        "respondent,age,pet,agree_1,agree_2,agree_3,note\nR01,35,Kitty,Agree,Agree,Agree,\n",
        encoding="utf-8",
    )
    result = import_file(
        project,
        nxt,
        wave="2027",
        column_map={"respondent": "resp_id"},
        level_maps={"pet": {"Kitty": "Cat"}},
    )
    raw = project.raw_table(result.wave.id)
    assert "resp_id" in raw.columns and "respondent" not in raw.columns
    assert result.codebook["pet"].value_labels["Kitty"] == "Cat"
    assert result.report["renamed_columns"] == [{"from": "respondent", "to": "resp_id"}]
    assert result.report["new_variables"] == []


def test_a_given_codebook_is_used_for_matching_columns(project, survey):
    given = Codebook.from_json(
        [
            {
                "name": "age",
                "kind": "numeric",
                "range": [16, 80],
                "missing_codes": {"-99": "declined"},
            }
        ]
    )
    result = import_file(project, survey, codebook=given)
    assert result.codebook["age"].range == (16.0, 80.0)
    assert "age" in result.report["reused_variables"]


def test_default_wave_labels():
    assert default_wave_label(Path("participant_survey_2027.xlsx"), []) == "2027"
    assert default_wave_label(Path("exit.csv"), ["exit"]) == "exit (2)"


# ---------------------------------------------------------------------------- CLI
def test_cli_import_and_codebook_json(tmp_path, survey, capsys):
    path = str(tmp_path / "cli.plaincount")
    assert main(["new", path]) == 0
    capsys.readouterr()
    assert main(["import", path, str(survey), "--wave", "2026", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["instrument"] == "Participant survey"
    assert out["wave"]["label"] == "2026" and out["wave"]["n_rows"] == 6
    assert out["report"]["encoding"] == "utf-8"
    assert out["report"]["kinds"]["likert"] == 3

    assert main(["codebook", path, "--json"]) == 0
    entries = json.loads(capsys.readouterr().out)
    assert isinstance(entries, list) and len(entries) == 8
    required = {"name", "question", "kind", "levels", "missing_codes", "group", "keying"}
    required |= {"range", "personal"}
    assert all(required <= set(e) for e in entries)
    age = next(e for e in entries if e["name"] == "age")
    assert age["missing_codes"] == {"-99": "declined"} and age["range"] is None
    agree = next(e for e in entries if e["name"] == "agree_1")
    assert agree["levels"] == ["Strongly disagree", "Disagree", "Agree", "Strongly agree"]


def test_cli_codebook_apply_and_export(tmp_path, survey, capsys):
    path = str(tmp_path / "cli.plaincount")
    main(["new", path])
    main(["import", path, str(survey)])
    changes = tmp_path / "changes.json"
    changes.write_text(
        json.dumps(
            [
                {"name": "age", "range": [16, 80]},
                {"name": "agree_3", "keying": "negative"},
                {"name": "not_here", "kind": "text"},
            ]
        ),
        encoding="utf-8",
    )
    capsys.readouterr()
    assert main(["codebook", path, "--apply", str(changes)]) == 0
    out = capsys.readouterr().out
    assert "Changed 2 variable(s): age, agree_3" in out and "not_here" in out
    exported = tmp_path / "cb.json"
    assert main(["codebook", path, "--export", str(exported), "--json"]) == 0
    entries = json.loads(exported.read_text(encoding="utf-8"))
    age = next(e for e in entries if e["name"] == "age")
    assert age["range"] == [16.0, 80.0] and age["kind"] == "numeric"  # other keys kept
    with Project.open(path) as proj:
        assert proj.undo_label() == "Apply codebook file changes.json"
        proj.undo()
        assert proj.codebook(proj.instruments()[0].id)["age"].range is None


def test_cli_errors_are_plain_words(tmp_path, survey, capsys):
    path = str(tmp_path / "cli.plaincount")
    main(["new", path])
    assert main(["import", path, str(BAD / "password_protected.xlsx")]) == 2
    err = capsys.readouterr().err
    assert "protected with a password" in err and "Traceback" not in err
    main(["import", path, str(survey)])
    bad = tmp_path / "bad.json"
    bad.write_text("[{", encoding="utf-8")
    capsys.readouterr()
    assert main(["codebook", path, "--apply", str(bad)]) == 2
    assert "not valid JSON" in capsys.readouterr().err
    bad.write_text(json.dumps([{"name": "age", "kind": "colour"}]), encoding="utf-8")
    assert main(["codebook", path, "--apply", str(bad)]) == 2
    assert "Unknown kind 'colour'" in capsys.readouterr().err
