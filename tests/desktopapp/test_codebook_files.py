"""Codebook files from the codebook view: export, apply (one undoable step), bad files."""

from __future__ import annotations

import json

import pytest

from core.codebook import Codebook
from desktopapp.codebook_files import ApplyReport, apply_codebook_file, export_codebook
from desktopapp.project_tree import NodeType


@pytest.fixture
def opened(window, small_project_path):
    """The small hand-built project open in a synchronous window."""
    assert window.open_project(small_project_path)
    return window


def codebook_view(window):
    inst = window.project.instruments()[0]
    assert window.show_node(NodeType.CODEBOOK, instrument_id=inst.id)
    return window.view, inst.id


def test_export_then_apply_round_trips(opened, tmp_path):
    window = opened
    view, inst = codebook_view(window)
    project = window.project
    original = project.codebook(inst)
    target = tmp_path / "exported"
    view.file_actions.ask_export_path = lambda suggested: str(target)
    view.export_button.click()
    saved = tmp_path / "exported.json"  # ".json" added when the name has none
    assert Codebook.loads(saved.read_text(encoding="utf-8")) == original
    assert f"({len(original)} variables) as exported.json" in view.file_actions.last_message

    # Change two entries in the file, add one the project lacks, and apply it.
    data = json.loads(saved.read_text(encoding="utf-8"))
    for entry in data:
        if entry["name"] == "age":
            entry["range"] = [16, 70]
        if entry["name"] == "track":
            entry["question"] = "Which training track are you in?"
    data.append({"name": "shoe_size", "kind": "numeric"})
    saved.write_text(json.dumps(data), encoding="utf-8")
    view.file_actions.ask_apply_path = lambda: str(saved)
    view.apply_file_button.click()
    after = project.codebook(inst)
    assert after["age"].range == (16.0, 70.0)
    assert after["track"].question == "Which training track are you in?"
    assert "shoe_size" not in after
    message = view.file_actions.last_message
    # Named in the file's order, which is the codebook's: track comes before age.
    assert "Applied exported.json: 2 entries changed (track, age)." in message
    assert "1 name in the file is not in this codebook and was left alone: shoe_size." in message
    assert project.undo_label() == "Apply the codebook file exported.json"
    window.undo.undo()
    assert project.codebook(inst) == original

    # Applying the untouched export again changes nothing, and says so.
    export_codebook(project, inst, saved)
    report = apply_codebook_file(project, inst, saved)
    assert report == ApplyReport("exported.json", (), ())
    assert "nothing changed" in report.message()


def test_bad_files_give_the_plain_message_and_change_nothing(opened, tmp_path):
    window = opened
    view, inst = codebook_view(window)
    project = window.project
    original = project.codebook(inst)
    cases = {
        "broken.json": ('[{"name": "age", ', "is not a valid codebook file: Expecting"),
        "object.json": ('{"name": "age"}', "must hold a list of variable entries"),
        "kind.json": ('[{"name": "age", "kind": "colour"}]', "Unknown kind 'colour'"),
        "keys.json": ('[{"name": "age", "size": 3}]', "Unknown codebook keys: size."),
    }
    for name, (text, expected) in cases.items():
        path = tmp_path / name
        path.write_text(text, encoding="utf-8")
        view.file_actions.ask_apply_path = lambda p=path: str(p)
        view.apply_file_button.click()
        assert expected in view.file_actions.last_message, name
        assert view.file_actions.last_box.icon() == view.file_actions.last_box.Icon.Warning
        assert "Traceback" not in view.file_actions.last_message
        assert project.codebook(inst) == original
    binary = tmp_path / "picture.json"
    binary.write_bytes(b"\x89PNG\r\n\x1a\n\x00\xff\xfe")
    view.file_actions.ask_apply_path = lambda: str(binary)
    view.apply_file_button.click()
    assert "picture.json is not a codebook file: it is not text" in (view.file_actions.last_message)
    # Cancelling the file dialog does nothing at all.
    view.file_actions.last_message = ""
    view.file_actions.ask_apply_path = lambda: ""
    view.apply_file_button.click()
    assert view.file_actions.last_message == ""
