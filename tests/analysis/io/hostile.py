"""Builders of hostile files for the import bounds tests (zip bombs, huge tables, long cells)."""

from __future__ import annotations

import io
import zipfile

_CT = (
    '<?xml version="1.0"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
    '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
    '<Default Extension="xml" ContentType="application/xml"/>'
    '<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>'
    '<Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
    '<Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"/>'
    "</Types>"
)
_RELS = (
    '<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
    '<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" '
    'Target="xl/workbook.xml"/></Relationships>'
)
_WB = (
    '<?xml version="1.0"?><workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" '
    'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets>'
    '<sheet name="Breaths" sheetId="1" r:id="rId1"/></sheets></workbook>'
)
_WB_RELS = (
    '<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
    '<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" '
    'Target="worksheets/sheet1.xml"/>'
    "{shared}</Relationships>"
)
_SHARED_REL = (
    '<Relationship Id="rId2" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/sharedStrings" '
    'Target="sharedStrings.xml"/>'
)
NS = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"'


def workbook(sheet_xml: bytes | str, shared_strings: bytes | str | None = None, *, filler_bytes: int = 0) -> bytes:
    """An .xlsx with one sheet; ``filler_bytes`` > 0 adds one shared string of that many 'A's
    (deflated, so a few hundred bytes per megabyte: a decompression bomb)."""
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as z:
        z.writestr("[Content_Types].xml", _CT)
        z.writestr("_rels/.rels", _RELS)
        z.writestr("xl/workbook.xml", _WB)
        z.writestr("xl/_rels/workbook.xml.rels", _WB_RELS.format(shared=_SHARED_REL))
        z.writestr("xl/worksheets/sheet1.xml", sheet_xml)
        if filler_bytes:
            with z.open("xl/sharedStrings.xml", "w", force_zip64=True) as f:
                f.write(f'<?xml version="1.0"?><sst {NS} count="1" uniqueCount="1"><si><t>'.encode())
                chunk = b"A" * (1 << 20)
                left = filler_bytes
                while left > 0:
                    f.write(chunk[: min(left, len(chunk))])
                    left -= len(chunk)
                f.write(b"</t></si></sst>")
        else:
            z.writestr("xl/sharedStrings.xml", shared_strings or f'<?xml version="1.0"?><sst {NS} count="0" uniqueCount="0"/>')
    return buf.getvalue()


def one_string_sheet() -> str:
    return f'<?xml version="1.0"?><worksheet {NS}><sheetData><row r="1"><c r="A1" t="s"><v>0</v></c></row></sheetData></worksheet>'


def entity_sheet() -> str:
    """A sheet whose XML declares nested entities (the "billion laughs" pattern)."""
    ents = '<!ENTITY a0 "laugh">' + "".join(f'<!ENTITY a{i} "{("&a" + str(i - 1) + ";") * 10}">' for i in range(1, 10))
    return (
        f'<?xml version="1.0"?><!DOCTYPE worksheet [{ents}]><worksheet {NS}><sheetData>'
        '<row r="1"><c r="A1" t="inlineStr"><is><t>&a9;</t></is></c></row></sheetData></worksheet>'
    )


def far_row_sheet() -> str:
    """A tiny sheet that declares the largest size and puts one cell in the last row."""
    return (
        f'<?xml version="1.0"?><worksheet {NS}><dimension ref="A1:XFD1048576"/><sheetData>'
        '<row r="1"><c r="A1" t="inlineStr"><is><t>Time</t></is></c></row>'
        '<row r="1048576"><c r="A1048576"><v>1</v></c></row></sheetData></worksheet>'
    )
