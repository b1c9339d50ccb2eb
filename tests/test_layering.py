"""core/ must stay GUI-free: importing every core module loads no Qt at all."""

from __future__ import annotations

import pkgutil
import subprocess
import sys
from pathlib import Path

import core

ROOT = Path(core.__file__).resolve().parent.parent


def core_modules() -> list[str]:
    return sorted(
        m.name for m in pkgutil.walk_packages(core.__path__, prefix="core.") if not m.ispkg
    ) + ["core"]


def test_core_imports_no_qt():
    script = (
        "import importlib, sys\n"
        f"for name in {core_modules()!r}:\n"
        "    importlib.import_module(name)\n"
        "bad = sorted(m for m in sys.modules if m.startswith(('PySide6', 'shiboken6', "
        "'desktopapp')) or m in ('matplotlib.backends.backend_qtagg', "
        "'matplotlib.backends.backend_qt'))\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run(
        [sys.executable, "-c", script], cwd=ROOT, capture_output=True, text=True, check=True
    )
    assert out.stdout.strip() == ""


def test_core_sources_do_not_mention_qt_imports():
    for path in (ROOT / "core").rglob("*.py"):
        text = path.read_text(encoding="utf-8")
        for line in text.splitlines():
            stripped = line.strip()
            assert not stripped.startswith(("import PySide6", "from PySide6")), path
            assert not stripped.startswith(("import desktopapp", "from desktopapp")), path
