"""Table reader: delimiters, decimal marks, encodings, title rows, row numbers, sheets, and safety."""

import codecs
import datetime as dt
import io
import zipfile

import numpy as np
import pytest

from meterfix.errors import InputError
from meterfix.readers.tables import Limits, parse_table, read_table, to_numbers


def _bytes(text, enc="utf-8"):
    return io.BytesIO(text.encode(enc))


@pytest.mark.parametrize("delim", [",", ";", "\t", "|"])
def test_delimiter_sniffed_under_title_rows(delim):
    text = (f"Heron Fen M4 export (invented){delim}\nsecond note line\n\n"
            f"Interval end{delim}Line pressure [bar(g)]{delim}Line temperature [degC]\n"
            f"2026-10-01 07:00{delim}4.5{delim}12.5\n2026-10-01 08:00{delim}4.6{delim}12.0\n")
    t = parse_table(_bytes(text), name="log.csv")
    assert t.delimiter == delim
    assert t.header == ["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]"]
    assert t.header_row == 4  # 1-based, as a spreadsheet shows it
    assert list(t.rows) == [5, 6]
    assert t.notes[0].startswith("Heron Fen M4 export") and len(t.notes) == 2


def test_blank_rows_keep_source_row_numbers():
    text = "A,B,C\n1,2,3\n\n,,\n4,5,6\n"
    t = parse_table(_bytes(text), name="x.csv")
    assert list(t.rows) == [2, 5]
    assert list(t.cells[0]) == ["1", "4"]


@pytest.mark.parametrize("enc", ["utf-8", "utf-8-sig", "cp1252", "utf-16"])
def test_encodings(enc):
    text = "Interval end;Temp (°F);Volume (ft3)\n2026-10-01 07:00;55,5;1.234,5\n"
    t = parse_table(io.BytesIO(text.encode(enc)), name="x.txt")
    assert t.header[1] == "Temp (°F)"
    assert t.decimal == ","
    v, empty, bad = to_numbers(t.cells[2], t.decimal)
    assert v[0] == 1234.5 and not bad.any()


def test_decimal_comma_and_thousands():
    # decimal comma with '.' or space thousands; decimal point with ',' or apostrophe thousands
    v, empty, bad = to_numbers(["1.234,5", "2,5", "1 234,5", "-0,75", ""], ",")
    assert v[:4].tolist() == [1234.5, 2.5, 1234.5, -0.75] and empty.tolist() == [False] * 4 + [True]
    v, empty, bad = to_numbers(["1,234.5", "1'234.5", "12", "2,5", "ERR", "-", 7.25, None], ".")
    assert v[:3].tolist() == [1234.5, 1234.5, 12.0]
    assert bad.tolist() == [False, False, False, True, True, False, False, False]  # '2,5' is not read as 25
    assert empty.tolist() == [False] * 5 + [True, False, True]
    assert v[6] == 7.25


def test_empty_and_header_only(tmp_path):
    p = tmp_path / "empty.csv"
    p.write_bytes(b"")
    with pytest.raises(InputError, match="empty") as e:
        read_table(p)
    assert e.value.file.endswith("empty.csv")
    p = tmp_path / "head.csv"
    p.write_text("Interval end,Line pressure [bar(g)]\n\n")
    with pytest.raises(InputError, match="no data rows") as e:
        read_table(p)
    assert e.value.row == 1


def test_binary_garbage_is_not_a_text_table(tmp_path):
    p = tmp_path / "log.csv"
    p.write_bytes(bytes(range(256)) * 40)
    with pytest.raises(InputError, match="not a text table"):
        read_table(p)


def test_csv_renamed_xlsx_and_workbook_renamed_csv(tmp_path):
    p = tmp_path / "log.xlsx"
    p.write_text("Interval end,P [bar(g)]\n2026-10-01 07:00,1\n")
    with pytest.raises(InputError, match="text .*'.xlsx' extension"):
        read_table(p)
    q = tmp_path / "book.csv"
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as z:
        z.writestr("[Content_Types].xml", "<x/>")
    q.write_bytes(buf.getvalue())
    with pytest.raises(InputError, match="workbook saved with the '.csv' extension"):
        read_table(q)


def test_password_protected_and_corrupt_workbooks(tmp_path):
    # an encrypted workbook is an OLE2 compound file holding an 'EncryptedPackage' stream
    ole = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + b"\x00" * 500 + "EncryptedPackage".encode("utf-16-le") + b"\x00" * 500
    p = tmp_path / "locked.xlsx"
    p.write_bytes(ole)
    with pytest.raises(InputError, match="password-protected") as e:
        read_table(p)
    assert "remove the password" in e.value.hint
    p = tmp_path / "broken.xlsx"
    p.write_bytes(b"PK\x03\x04" + b"\x17" * 300)
    with pytest.raises(InputError, match="damaged"):
        read_table(p)


def test_zip_bomb_refused(tmp_path):
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", compression=zipfile.ZIP_DEFLATED) as z:
        z.writestr("xl/worksheets/sheet1.xml", b"\x00" * (4 * 2**20))  # 4 MiB of zeros packs ~1000:1
    p = tmp_path / "bomb.xlsx"
    p.write_bytes(buf.getvalue())
    with pytest.raises(InputError, match="packed .*:1"):
        read_table(p)
    with pytest.raises(InputError, match="would unpack to"):
        read_table(p, limits=Limits(max_unpacked_bytes=2**20))


def test_zip_member_lying_about_its_size(tmp_path):
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", compression=zipfile.ZIP_DEFLATED) as z:
        z.writestr("xl/worksheets/sheet1.xml", b"<row>" * 20000)
    data = bytearray(buf.getvalue())
    # shrink the declared size in the local header and the central directory to 100 bytes
    real = 5 * 20000
    for off in (22, data.rfind(b"PK\x01\x02") + 24):
        assert int.from_bytes(data[off:off + 4], "little") == real
        data[off:off + 4] = (100).to_bytes(4, "little")
    p = tmp_path / "liar.xlsx"
    p.write_bytes(bytes(data))
    with pytest.raises(InputError, match="damaged"):
        read_table(p)


def test_row_cap(tmp_path):
    p = tmp_path / "long.csv"
    p.write_text("A,B\n" + "1,2\n" * 50)
    with pytest.raises(InputError, match="more than the limit"):
        read_table(p, limits=Limits(max_rows=10))


def _workbook(path, sheets):
    import openpyxl

    wb = openpyxl.Workbook()
    wb.remove(wb.active)
    for name, rows in sheets.items():
        ws = wb.create_sheet(name)
        for r in rows:
            ws.append(r)
    wb.save(path)


def test_workbook_sheet_found_by_content_and_by_name(tmp_path):
    p = tmp_path / "book.xlsx"
    rows = [["Tallow Bridge B2 (invented)"], [], ["Interval end", "Line pressure [bar(g)]", "Line temperature [degC]"],
            [dt.datetime(2026, 10, 1, 7), 4.5, 12.5], [dt.datetime(2026, 10, 1, 8), "4,6", 12.0]]
    _workbook(p, {"Cover": [["Read me"], ["nothing here"]], "Data": rows})
    t = read_table(p)
    assert t.sheet == "Data" and t.kind == "workbook" and t.header_row == 3 and list(t.rows) == [4, 5]
    assert t.sheets == ["Cover", "Data"]
    assert t.cells[0].iat[0] == dt.datetime(2026, 10, 1, 7)
    v, _, bad = to_numbers(t.cells[1], t.decimal)
    assert v.tolist() == [4.5, 4.6] and not bad.any()
    t = read_table(p, sheet="cover", header_score=lambda cells: 1.0 if cells and cells[0] == "Read me" else 0.0)
    assert t.sheet == "Cover"
    with pytest.raises(InputError, match="no sheet named 'Nope'") as e:
        read_table(p, sheet="Nope")
    assert "Cover, Data" in e.value.hint


def test_workbook_empty_sheet(tmp_path):
    p = tmp_path / "empty.xlsx"
    _workbook(p, {"Log": []})
    with pytest.raises(InputError, match="empty"):
        read_table(p)


def test_input_file_not_modified(tmp_path):
    p = tmp_path / "log.csv"
    data = "A,B\n1,2\n".encode()
    p.write_bytes(data)
    before = p.stat().st_mtime_ns
    t = read_table(p)
    assert p.read_bytes() == data and p.stat().st_mtime_ns == before
    import hashlib

    assert t.sha256 == hashlib.sha256(data).hexdigest()


def test_utf16_bom_is_text():
    t = parse_table(io.BytesIO(codecs.BOM_UTF16_LE + "A\tB\n1\t2\n".encode("utf-16-le")), name="x.txt")
    assert t.encoding == "utf-16" and t.header == ["A", "B"]
    assert np.array_equal(t.rows, [2])


def test_rows_wider_than_the_header_are_noted():
    t = parse_table(_bytes("A,B\n1,2\n3,4,99\n5,6\n"), name="w.csv")
    assert list(t.cells[0]) == ["1", "3", "5"] and list(t.rows) == [2, 3, 4]
    assert any("beyond the last header column (first: row 3)" in n for n in t.notes)
