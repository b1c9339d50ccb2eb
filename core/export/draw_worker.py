"""A helper process that draws chart images for an export (see :mod:`core.export.drawing`).

It reads pickled ``(result, chart_type, options)`` jobs from standard input (``options``:
the keywords of :func:`core.export.drawing.entry_images`) and writes pickled
``(True, (png, svg, picture))`` or ``(False, message)`` answers to standard output, until
its input ends. Only Plaincount itself talks to it, over a private pipe.
"""

from __future__ import annotations

import pickle
import sys


def main() -> int:
    source = sys.stdin.buffer
    sink = sys.stdout.buffer
    sys.stdout = sys.stderr  # a stray print must never corrupt the answers
    from core.export.drawing import entry_images

    while True:
        try:
            result, chart_type, options = pickle.load(source)
        except EOFError:
            return 0
        try:
            answer = (True, entry_images(result, chart_type, **options))
        except Exception as exc:  # noqa: BLE001 - the parent redraws it and reports the error
            answer = (False, str(exc))
        pickle.dump(answer, sink)
        sink.flush()


if __name__ == "__main__":
    sys.exit(main())
