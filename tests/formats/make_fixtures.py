"""Make the fixtures of tests/formats.rs: one daily ledger as CSV, as
workbooks (.xlsx in the 1900 and the 1904 date systems, .ods) and broken
workbooks. Deterministic: no clock, no randomness; run it again and
commit the files only when they change on purpose.

    python3 -m venv /tmp/venv && /tmp/venv/bin/pip install openpyxl odfpy msoffcrypto-tool
    /tmp/venv/bin/python tests/formats/make_fixtures.py

Written with openpyxl (xlsx), odfpy (ods) and msoffcrypto-tool (an
encrypted copy); `expected-serials.csv` lists each date with the serial
number openpyxl stored for it in each date system, for the test that
checks our reading of serials against the library that wrote them.
"""

import csv
import datetime as dt
import io
import re
import os
import zipfile

import msoffcrypto
import pyarrow as pa
import pyarrow.parquet as pq
from decimal import Decimal
from msoffcrypto.format.ooxml import OOXMLFile
import openpyxl
from openpyxl.utils.datetime import CALENDAR_MAC_1904, to_excel
from odf.opendocument import OpenDocumentSpreadsheet
from odf.table import Table, TableCell, TableRow
from odf.text import P

HERE = os.path.dirname(os.path.abspath(__file__))
FIXED = dt.datetime(2024, 1, 1)  # document timestamps, so bytes repeat

BRANCHES = ["North", "Harbour", "Old Town"]


def rows():
    """3 branches over 80 days across a year end and a leap day."""
    start = dt.date(2023, 12, 20)
    out = []
    for i in range(80):
        day = start + dt.timedelta(days=i)
        for j, branch in enumerate(BRANCHES):
            amount = ((i * 37 + j * 101) % 250) + 50 + (j * 0.25)
            if (i + j) % 29 == 7:
                amount = None  # a missing cell
            out.append((day, branch, amount))
    return out


def write_csv(path, data):
    with open(path, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["day", "branch", "amount"])
        for day, branch, amount in data:
            w.writerow([day.isoformat(), branch, "" if amount is None else repr_number(amount)])


def repr_number(x):
    return str(int(x)) if float(x).is_integer() else repr(x)


def fixed_props(wb):
    wb.properties.created = FIXED
    wb.properties.modified = FIXED


def write_xlsx(path, data, epoch=None, mutate=None):
    wb = openpyxl.Workbook()
    if epoch is not None:
        wb.epoch = epoch
    fixed_props(wb)
    ws = wb.active
    ws.title = "Ledger"
    ws.append(["day", "branch", "amount"])
    for day, branch, amount in data:
        ws.append([day, branch, amount])
    for row in ws.iter_rows(min_row=2, max_col=1):
        row[0].number_format = "yyyy-mm-dd"
    notes = wb.create_sheet("Notes")
    notes.append(["Invented figures for tests."])
    if mutate:
        mutate(wb, ws)
    wb.save(path)
    normalise_zip(path)


def normalise_zip(path):
    """Rewrite the zip with fixed entry times, so the bytes repeat."""
    with zipfile.ZipFile(path) as z:
        entries = [(i.filename, z.read(i.filename)) for i in z.infolist()]
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for name, data in entries:
            if name == "docProps/core.xml":
                # openpyxl stamps the save time; keep the fixed one
                data = re.sub(rb"(<dcterms:modified[^>]*>)[^<]*", rb"\g<1>2024-01-01T00:00:00Z", data)
            info = zipfile.ZipInfo(name, date_time=(2024, 1, 1, 0, 0, 0))
            # an OpenDocument `mimetype` entry is stored uncompressed
            info.compress_type = zipfile.ZIP_STORED if name == "mimetype" else zipfile.ZIP_DEFLATED
            z.writestr(info, data)


def write_ods(path, data):
    doc = OpenDocumentSpreadsheet()
    table = Table(name="Ledger")
    def text_cell(s):
        c = TableCell(valuetype="string")
        c.addElement(P(text=s))
        return c
    header = TableRow()
    for h in ["day", "branch", "amount"]:
        header.addElement(text_cell(h))
    table.addElement(header)
    for day, branch, amount in data:
        tr = TableRow()
        d = TableCell(valuetype="date", datevalue=day.isoformat())
        d.addElement(P(text=day.isoformat()))
        tr.addElement(d)
        tr.addElement(text_cell(branch))
        if amount is None:
            tr.addElement(TableCell())
        else:
            a = TableCell(valuetype="float", value=repr_number(amount))
            a.addElement(P(text=repr_number(amount)))
            tr.addElement(a)
        table.addElement(tr)
    doc.spreadsheet.addElement(table)
    doc.save(path)
    normalise_zip(path)


def write_parquet(data):
    """The ledger as Parquet: dates, strings, doubles in row groups of 50
    rows (Snappy); the same with decimal amounts and timestamps; a file
    with a nested column; a cut-short copy."""
    days = pa.array([d for d, _, _ in data], type=pa.date32())
    branches = pa.array([b for _, b, _ in data], type=pa.string())
    amounts = pa.array([a for _, _, a in data], type=pa.float64())
    table = pa.table({"day": days, "branch": branches, "amount": amounts})
    pq.write_table(table, os.path.join(HERE, "ledger.parquet"), row_group_size=50,
                   compression="snappy")
    decimals = pa.array([None if a is None else Decimal(repr_number(a)) for _, _, a in data],
                        type=pa.decimal128(9, 2))
    stamps = pa.array([dt.datetime(d.year, d.month, d.day, 13, 30) for d, _, _ in data],
                      type=pa.timestamp("ms", tz="UTC"))
    pq.write_table(pa.table({"day": stamps, "branch": branches, "amount": decimals}),
                   os.path.join(HERE, "ledger-decimal.parquet"), row_group_size=64,
                   compression="none")
    nested = pa.array([{"name": b, "code": i} for i, (_, b, _) in enumerate(data)])
    pq.write_table(pa.table({"day": days, "branch": nested, "amount": amounts}),
                   os.path.join(HERE, "nested.parquet"))
    with open(os.path.join(HERE, "ledger.parquet"), "rb") as f:
        whole = f.read()
    with open(os.path.join(HERE, "truncated.parquet"), "wb") as f:
        f.write(whole[: len(whole) * 2 // 3])


def main():
    # encrypted.xlsx differs on each run (the encryption's random salt)
    data = rows()
    write_csv(os.path.join(HERE, "ledger.csv"), data)
    write_xlsx(os.path.join(HERE, "ledger.xlsx"), data)
    write_xlsx(os.path.join(HERE, "ledger-1904.xlsx"), data, epoch=CALENDAR_MAC_1904)
    write_ods(os.path.join(HERE, "ledger.ods"), data)

    # the serial each date got, as the writing library computes it
    with open(os.path.join(HERE, "expected-serials.csv"), "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["day", "serial_1900", "serial_1904"])
        days = [dt.date(1900, 1, 1), dt.date(1900, 2, 28), dt.date(1900, 3, 1),
                dt.date(1904, 1, 1), dt.date(2000, 2, 29), dt.date(2023, 12, 31),
                dt.date(2024, 2, 29), dt.date(2024, 3, 1)]
        for d in days:
            day = dt.datetime(d.year, d.month, d.day)
            s1904 = to_excel(day, epoch=CALENDAR_MAC_1904) if d >= dt.date(1904, 1, 1) else ""
            w.writerow([d.isoformat(), repr_number(to_excel(day)), repr_number(s1904) if s1904 != "" else ""])

    write_parquet(data)

    # broken workbooks
    def text_in_date(wb, ws):
        ws["A9"] = "soon"
    write_xlsx(os.path.join(HERE, "text-in-date.xlsx"), data[:20], mutate=text_in_date)

    def merged_header(wb, ws):
        ws.insert_rows(1)
        ws["A1"] = "when"
        ws.merge_cells("B1:C1")
        ws["B1"] = "takings"
    write_xlsx(os.path.join(HERE, "merged-header.xlsx"), data[:20], mutate=merged_header)

    with open(os.path.join(HERE, "ledger.xlsx"), "rb") as f:
        whole = f.read()
    with open(os.path.join(HERE, "truncated.xlsx"), "wb") as f:
        f.write(whole[: len(whole) // 2])

    plain = io.BytesIO(whole)
    office = OOXMLFile(plain)
    with open(os.path.join(HERE, "encrypted.xlsx"), "wb") as f:
        office.encrypt("invented-password", f)


if __name__ == "__main__":
    main()
