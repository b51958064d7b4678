"""Make two small workbooks for tests/formats.rs, written as Office Open
XML (ECMA-376) parts with Python's zipfile alone, so every cell is exactly
as written here: no library decides how formulas or errors are stored.
Deterministic (fixed entry times); run it again and commit the files only
when they change on purpose.

    python3 tests/formats/make_cells.py

- formulas.xlsx: sheet "Ledger" with `amount` typed and `double` a formula
  column (=B2*2 ...) whose cells carry the value the workbook cached when it
  was last saved (<f> and <v>), plus a total row made by SUM and a text
  formula (=A2&"!") with its cached text. Invented figures.
- bad-cells.xlsx: sheet "Few" with three bad cells (a #DIV/0! error value,
  a text in a declared date column, a text in a declared number column) and
  sheet "Many" with 30 error cells (#N/A), more than one read reports.
"""

import os
import zipfile

HERE = os.path.dirname(os.path.abspath(__file__))

CONTENT_TYPES = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">
<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>
<Default Extension="xml" ContentType="application/xml"/>
<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>
{sheets}
</Types>"""

RELS = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">
<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/>
</Relationships>"""

WORKBOOK = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships">
<sheets>{sheets}</sheets>
</workbook>"""

WORKBOOK_RELS = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">
{rels}
</Relationships>"""

SHEET = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">
<sheetData>{rows}</sheetData>
</worksheet>"""


def esc(s):
    return s.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;").replace('"', "&quot;")


def cell(ref, v):
    """One cell: a number, an inline text, ('f', formula, cached number),
    ('fs', formula, cached text) or ('e', error)."""
    if v is None:
        return ""
    if isinstance(v, (int, float)):
        return f'<c r="{ref}"><v>{v}</v></c>'
    if isinstance(v, str):
        return f'<c r="{ref}" t="inlineStr"><is><t>{esc(v)}</t></is></c>'
    kind = v[0]
    if kind == "f":
        return f'<c r="{ref}"><f>{esc(v[1])}</f><v>{v[2]}</v></c>'
    if kind == "fs":
        return f'<c r="{ref}" t="str"><f>{esc(v[1])}</f><v>{esc(v[2])}</v></c>'
    if kind == "e":
        return f'<c r="{ref}" t="e"><v>{esc(v[1])}</v></c>'
    raise ValueError(v)


def sheet_xml(rows):
    out = []
    for i, row in enumerate(rows, start=1):
        cells = "".join(cell(f"{chr(65 + j)}{i}", v) for j, v in enumerate(row))
        out.append(f'<row r="{i}">{cells}</row>')
    return SHEET.format(rows="".join(out))


def write(path, sheets):
    names = [n for n, _ in sheets]
    parts = {
        "[Content_Types].xml": CONTENT_TYPES.format(sheets="\n".join(
            f'<Override PartName="/xl/worksheets/sheet{i}.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
            for i in range(1, len(names) + 1))),
        "_rels/.rels": RELS,
        "xl/workbook.xml": WORKBOOK.format(sheets="".join(
            f'<sheet name="{esc(n)}" sheetId="{i}" r:id="rId{i}"/>' for i, n in enumerate(names, start=1))),
        "xl/_rels/workbook.xml.rels": WORKBOOK_RELS.format(rels="\n".join(
            f'<Relationship Id="rId{i}" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet{i}.xml"/>'
            for i in range(1, len(names) + 1))),
    }
    for i, (_, rows) in enumerate(sheets, start=1):
        parts[f"xl/worksheets/sheet{i}.xml"] = sheet_xml(rows)
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for name, data in parts.items():
            info = zipfile.ZipInfo(name, date_time=(2024, 1, 1, 0, 0, 0))
            info.compress_type = zipfile.ZIP_DEFLATED
            z.writestr(info, data.encode("utf-8"))


def main():
    ledger = [["branch", "amount", "double", "tag"]]
    amounts = [("North", 12), ("Harbour", 7.5), ("Old Town", 30)]
    for r, (branch, amount) in enumerate(amounts, start=2):
        # the cached values are what a spreadsheet program computes
        ledger.append([branch, amount, ("f", f"B{r}*2", amount * 2), ("fs", f'A{r}&"!"', branch + "!")])
    ledger.append(["Total", ("f", "SUM(B2:B4)", 49.5), ("f", "SUM(C2:C4)", 99), None])
    write(os.path.join(HERE, "formulas.xlsx"), [("Ledger", ledger)])

    few = [["day", "branch", "amount"],
           ["2024-01-02", "North", 10],
           ["2024-01-03", "North", ("e", "#DIV/0!")],
           ["soon", "Harbour", 12],
           ["2024-01-05", "Harbour", "12 units"]]
    many = [["day", "branch", "amount"]]
    for i in range(30):
        many.append([f"2024-02-{i + 1:02d}" if i < 29 else "2024-03-01", "North", ("e", "#N/A")])
    write(os.path.join(HERE, "bad-cells.xlsx"), [("Few", few), ("Many", many)])


if __name__ == "__main__":
    main()
