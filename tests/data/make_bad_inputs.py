"""Write the bad-input files the import tests feed to the reader.

Run from the repository root: ``python tests/data/make_bad_inputs.py``. The output is
deterministic (fixed zip times, a seeded random generator) and committed beside this script,
so the tests never depend on re-running it. Each file stands for one way a real upload goes
wrong; the tests check that each gives its own clear message and stores nothing.
"""

from __future__ import annotations

import io
import random
import struct
import zipfile
from datetime import datetime
from pathlib import Path

import openpyxl

HERE = Path(__file__).resolve().parent
BAD = HERE / "bad_inputs"
FIXED = (2026, 1, 1, 0, 0, 0)


def _zip(parts: dict[str, bytes]) -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as z:
        for name, data in parts.items():
            info = zipfile.ZipInfo(name, date_time=FIXED)
            info.compress_type = zipfile.ZIP_DEFLATED
            z.writestr(info, data)
    return buf.getvalue()


def small_workbook_parts(rows: list[list[object]]) -> dict[str, bytes]:
    """The parts of a small, valid .xlsx written by openpyxl, by part name."""
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Responses"
    wb.properties.created = wb.properties.modified = datetime(*FIXED)
    for row in rows:
        ws.append(row)
    buf = io.BytesIO()
    wb.save(buf)
    with zipfile.ZipFile(io.BytesIO(buf.getvalue())) as z:
        parts = {name: z.read(name) for name in z.namelist()}
    # openpyxl stamps the save time into the document properties: fix it for stable bytes.
    parts["docProps/core.xml"] = (
        b'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        b'<cp:coreProperties xmlns:cp="http://schemas.openxmlformats.org/package/2006/'
        b'metadata/core-properties" xmlns:dc="http://purl.org/dc/elements/1.1/">'
        b"<dc:creator>Plaincount tests</dc:creator></cp:coreProperties>"
    )
    return parts


def cfb_container(streams: dict[str, bytes]) -> bytes:
    """A minimal OLE compound file (version 3) holding the given streams.

    Every stream is padded to at least 4096 bytes so it lives in ordinary 512-byte sectors
    (no mini stream is needed). This is the container a password-protected workbook is
    stored in: an "EncryptionInfo" stream and an "EncryptedPackage" stream.
    """
    sector = 512
    end, free, fatsect, nostream = 0xFFFFFFFE, 0xFFFFFFFF, 0xFFFFFFFD, 0xFFFFFFFF
    names = list(streams)
    blobs = [streams[n].ljust(4096, b"\0") for n in names]
    blobs = [b.ljust(-(-len(b) // sector) * sector, b"\0") for b in blobs]
    fat = [fatsect, end]  # sector 0: the FAT itself; sector 1: the directory
    starts = []
    for blob in blobs:
        count = len(blob) // sector
        first = len(fat)
        starts.append(first)
        fat.extend(first + i + 1 for i in range(count - 1))
        fat.append(end)
    assert len(fat) <= 128, "one FAT sector is enough for these small files"
    fat_sector = struct.pack("<128I", *(fat + [free] * (128 - len(fat))))

    def entry(name: str, kind: int, left: int, right: int, child: int, start: int, size: int):
        raw = name.encode("utf-16-le") + b"\0\0"
        return (
            raw.ljust(64, b"\0")
            + struct.pack("<HBB", len(raw), kind, 1)
            + struct.pack("<III", left, right, child)
            + b"\0" * 16  # class id
            + b"\0" * 4  # state bits
            + b"\0" * 16  # creation and modification times
            + struct.pack("<IQ", start, size)
        )

    # Siblings form a chain ordered by (name length, upper-case name), as the format wants.
    order = sorted(range(len(names)), key=lambda i: (len(names[i]), names[i].upper()))
    entries = [entry("Root Entry", 5, nostream, nostream, 1, end, 0)]
    for pos, i in enumerate(order):
        right = pos + 2 if pos + 1 < len(order) else nostream
        entries.append(
            entry(names[i], 2, nostream, right, nostream, starts[i], len(streams[names[i]]))
        )
    directory = b"".join(entries)
    directory = directory.ljust(-(-len(directory) // sector) * sector, b"\0")
    assert len(directory) == sector, "the directory fits one sector"
    difat = [0] + [free] * 108
    header = (
        b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
        + b"\0" * 16
        + struct.pack("<HHHHH", 0x3E, 3, 0xFFFE, 9, 6)
        + b"\0" * 6
        + struct.pack("<IIIIIIIII", 0, 1, 1, 0, 0x1000, end, 0, end, 0)
        + struct.pack("<109I", *difat)
    )
    assert len(header) == sector
    return header + fat_sector + directory + b"".join(blobs)


def entity_bomb_sheet() -> bytes:
    """A worksheet whose text cell would expand to 10^9 copies of "lol" if entities ran."""
    lines = ['<!ENTITY lol "lol">']
    for i in range(1, 10):
        ref = "&lol;" if i == 1 else f"&lol{i - 1};"
        lines.append(f'<!ENTITY lol{i} "{ref * 10}">')
    dtd = "<!DOCTYPE worksheet [\n" + "\n".join(lines) + "\n]>\n"
    body = (
        '<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
        '<sheetData><row r="1"><c r="A1" t="inlineStr"><is><t>name</t></is></c></row>'
        '<row r="2"><c r="A2" t="inlineStr"><is><t>&lol9;</t></is></c></row>'
        "</sheetData></worksheet>"
    )
    return ('<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n' + dtd + body).encode()


def build() -> dict[str, bytes]:
    rng = random.Random(2026)
    good = small_workbook_parts([["resp_id", "age"], ["R1", 34], ["R2", 51]])
    good_bytes = _zip(good)
    files: dict[str, bytes] = {}
    files["zero_bytes.csv"] = b""
    files["only_blank_lines.csv"] = b"\n\n   \n\r\n"
    files["header_only.csv"] = b"resp_id,age,gender\n"
    files["header_only.xlsx"] = _zip(small_workbook_parts([["resp_id", "age", "gender"]]))
    files["empty_sheet.xlsx"] = _zip(small_workbook_parts([]))
    files["password_protected.xlsx"] = cfb_container(
        {
            "EncryptionInfo": b"\x04\x00\x04\x00\x40\x00\x00\x00"
            + b'<?xml version="1.0" encoding="UTF-8"?><encryption '
            b'xmlns="http://schemas.microsoft.com/office/2006/encryption">'
            b'<keyData saltSize="16" blockSize="16" keyBits="256" hashSize="64" '
            b'cipherAlgorithm="AES" cipherChaining="ChainingModeCBC" hashAlgorithm="SHA512" '
            b'saltValue="AAAAAAAAAAAAAAAAAAAAAA=="/></encryption>',
            "EncryptedPackage": struct.pack("<Q", 6000)
            + bytes(rng.randrange(256) for _ in range(6000)),
        }
    )
    corrupt = dict(good)
    corrupt["xl/workbook.xml"] = b"<workbook><sheets><sheet name='Responses' sheetId="
    corrupt["xl/worksheets/sheet1.xml"] = b"\x00\x01 this is not XML at all <<<<"
    files["corrupt_workbook.xlsx"] = _zip(corrupt)
    files["truncated.xlsx"] = good_bytes[: len(good_bytes) // 2]
    bomb = dict(good)
    bomb["xl/worksheets/sheet1.xml"] = entity_bomb_sheet()
    files["entity_bomb.xlsx"] = _zip(bomb)
    files["binary_renamed.csv"] = bytes(rng.randrange(256) for _ in range(4096))
    noise = bytes(rng.randrange(256) for _ in range(512))
    files["image_renamed.csv"] = b"\x89PNG\r\n\x1a\n" + noise
    files["not_a_table.csv"] = (
        b"Dear colleagues, thank you for taking part in this year's survey of our program.\n"
        b"We will share a summary of the findings with everyone at the spring meeting.\n"
        b"If you have questions, please write to the evaluation team.\n"
    )
    files["web_page.csv"] = b"<!DOCTYPE html>\n<html><body><p>Session expired</p></body></html>\n"
    return files


def main() -> None:
    BAD.mkdir(exist_ok=True)
    for name, data in build().items():
        (BAD / name).write_bytes(data)
        print(f"wrote {BAD.name}/{name} ({len(data)} bytes)")


if __name__ == "__main__":
    main()
