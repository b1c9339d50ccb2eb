"""Keep ``None`` alive under a Qt binding that drops references to it.

PySide6 6.12.0 on Python 3.11 loses one reference to ``None`` on every call that passes it
(every Qt method returning nothing, every empty item value). A long session would then free
``None`` and abort with "deallocating None". Python 3.12 and later make ``None`` immortal, so
nothing is needed there; on older Pythons we give ``None`` a reference count so large that no
session can wear it down, which is what 3.12 does natively.
"""

from __future__ import annotations

import ctypes
import sys

HEADROOM = 1 << 40  # ~10**12 lost references before anything could go wrong


def keep_none_alive() -> bool:
    """Apply the guard once; returns True when it was needed (Python before 3.12)."""
    if sys.version_info >= (3, 12) or getattr(keep_none_alive, "applied", False):
        return False
    ctypes.c_ssize_t.from_address(id(None)).value += HEADROOM
    keep_none_alive.applied = True  # type: ignore[attr-defined]
    return True
