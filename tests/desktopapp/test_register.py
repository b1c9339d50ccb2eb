"""--register / --unregister install and remove the desktop entry, file type and icon."""

from __future__ import annotations

import configparser
import os
import shutil
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from core.project import APPLICATION_ID
from desktopapp.app import main
from desktopapp.register import RESOURCES, _quote, installed_files, register, unregister


def _home() -> Path:
    return Path(os.environ["XDG_DATA_HOME"])  # a temporary folder (tests/conftest.py)


def test_register_installs_and_unregister_removes(capsys):
    assert main(["--register"]) == 0
    files = installed_files(_home())
    for path in files.values():
        assert path.is_file(), path
    entry = configparser.ConfigParser(interpolation=None)
    entry.optionxform = str
    entry.read(files["desktop"])
    section = entry["Desktop Entry"]
    assert section["MimeType"] == "application/x-plaincount;"
    assert section["Exec"].endswith(" %f")
    assert section["Icon"] == "plaincount"
    printed = capsys.readouterr().out
    assert "Double-clicking a .plaincount file now opens it in Plaincount." in printed
    if shutil.which("update-mime-database"):
        # The mime database was rebuilt from our XML: the glob and the type are known.
        globs = (_home() / "mime" / "globs2").read_text()
        assert "application/x-plaincount:*.plaincount" in globs
        assert (_home() / "mime" / "application" / "x-plaincount.xml").is_file()
    assert main(["--unregister"]) == 0
    for path in files.values():
        assert not path.exists()
    assert "nothing to remove" in unregister(_home(), run_tools=False)[0]


def test_mime_magic_matches_the_project_file_header(tmp_path):
    # The magic in the XML must be the application id core.project writes (PRAGMA
    # application_id stores it big-endian at byte offset 68 of the SQLite header).
    tree = ET.parse(RESOURCES / "plaincount-mime.xml")
    ns = {"m": "http://www.freedesktop.org/standards/shared-mime-info"}
    inner = tree.find(".//m:magic/m:match/m:match", ns)
    assert inner.get("offset") == "68"
    assert inner.get("value").encode() == APPLICATION_ID.to_bytes(4, "big")
    from core.project import Project

    with Project.create(tmp_path / "x.plaincount"):
        pass
    head = (tmp_path / "x.plaincount").read_bytes()[:72]
    assert head.startswith(b"SQLite format 3") and head[68:72] == b"PLCT"


@pytest.mark.parametrize(
    ("arg", "quoted"),
    [
        ("/usr/bin/plaincount", "/usr/bin/plaincount"),
        ("/home/a b/venv/bin/plaincount", '"/home/a b/venv/bin/plaincount"'),
    ],
)
def test_exec_paths_are_quoted_for_the_desktop_entry(arg, quoted):
    assert _quote(arg) == quoted


def test_register_is_repeatable(tmp_path):
    register(tmp_path, run_tools=False)
    register(tmp_path, run_tools=False)
    assert len(unregister(tmp_path, run_tools=False)) == 4
