"""Which text encoding a CSV or TSV export uses, decided from its bytes.

Survey platforms and spreadsheets write UTF-8 (sometimes with a byte-order mark), and older
Windows programs write Windows-1252. Latin-1 reads the same bytes as Windows-1252 except
0x80-0x9F, where Windows-1252 has curly quotes, dashes and the euro sign. The choice made is
always reported, so the evaluator can see it and override it.
"""

from __future__ import annotations

import codecs

# Bytes 0x80-0x9F that Windows-1252 leaves undefined; text holding them is not Windows-1252.
_CP1252_UNDEFINED = frozenset({0x81, 0x8D, 0x8F, 0x90, 0x9D})
_C1 = frozenset(range(0x80, 0xA0))

LABELS = {
    "utf-8": "UTF-8",
    "utf-8-sig": "UTF-8 with byte-order mark",
    "utf-16": "UTF-16",
    "cp1252": "Windows-1252",
    "latin-1": "Latin-1 (ISO 8859-1)",
}

ALIASES = {
    "utf8": "utf-8",
    "utf-8": "utf-8",
    "utf_8": "utf-8",
    "utf-8-sig": "utf-8-sig",
    "utf8-sig": "utf-8-sig",
    "utf-8 with bom": "utf-8-sig",
    "utf-16": "utf-16",
    "utf16": "utf-16",
    "cp1252": "cp1252",
    "windows-1252": "cp1252",
    "windows1252": "cp1252",
    "win1252": "cp1252",
    "latin-1": "latin-1",
    "latin1": "latin-1",
    "iso-8859-1": "latin-1",
    "iso8859-1": "latin-1",
}


def canonical(name: str) -> str:
    """Our name for an encoding the user typed; other Python codec names pass through."""
    key = name.strip().lower()
    if key in ALIASES:
        return ALIASES[key]
    codecs.lookup(key)  # raises LookupError for a name Python does not know
    return key


def label(encoding: str) -> str:
    return LABELS.get(encoding, encoding)


def detect(data: bytes) -> str:
    """Best encoding for ``data``: a byte-order mark, else UTF-8 if it decodes, else the
    single-byte encoding its bytes fit."""
    if data.startswith(codecs.BOM_UTF8):
        return "utf-8-sig"
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        return "utf-16"
    try:
        data.decode("utf-8")
        return "utf-8"
    except UnicodeDecodeError:
        pass
    c1 = _C1.intersection(data)
    if c1 and not (c1 & _CP1252_UNDEFINED):
        return "cp1252"
    return "latin-1"


def looks_binary(data: bytes) -> bool:
    """NUL bytes (outside UTF-16 text) mean a binary file, not a text export."""
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        return False
    return b"\x00" in data[:65536]
