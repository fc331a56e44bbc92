"""File checks before any cell is read: magic bytes against the extension, zip-bomb and XML-entity
limits for zip workbooks, and the safety limits of the table reader (see :mod:`meterfix.readers.tables`).
"""

from __future__ import annotations

import codecs
import zipfile
from dataclasses import dataclass

from ..errors import InputError

TEXT_SUFFIXES = (".csv", ".txt", ".tsv", ".dat")
ZIP_SUFFIXES = (".xlsx", ".xlsm", ".ods")
WORKBOOK_SUFFIXES = ZIP_SUFFIXES + (".xls",)
_ZIP_MAGIC = b"PK\x03\x04"
_OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
_ENCRYPTED = "EncryptedPackage".encode("utf-16-le")
_DTD_MARKS = (b"<!DOCTYPE", b"<!ENTITY", "<!DOCTYPE".encode("utf-16-le"), "<!ENTITY".encode("utf-16-le"))


@dataclass(frozen=True)
class Limits:
    """Safety limits of the table reader.

    Attributes
    ----------
    max_unpacked_bytes : int [byte]   declared unpacked size of all members of a zip workbook
    max_ratio : float [-]             largest packing ratio of a member above 1 MiB unpacked
    max_members : int                 members of a zip workbook
    max_rows : int                    rows of one table
    max_text_bytes : int [byte]       size of a text table
    header_scan_rows : int            rows searched for the header
    verify_zip : bool                 inflate every member once to check its declared size
    """

    max_unpacked_bytes: int = 500 * 2**20
    max_ratio: float = 200.0
    max_members: int = 10_000
    max_rows: int = 5_000_000
    max_text_bytes: int = 1 * 2**30
    header_scan_rows: int = 40
    verify_zip: bool = True


DEFAULT_LIMITS = Limits()


def sniff_format(head: bytes, suffix: str, name) -> str:
    """'zip', 'ole', 'text' from the first bytes, checked against the extension.

    ``head`` may be the whole file: an encrypted workbook is an OLE2 compound file (the container
    of old .xls files too) whose directory names an ``EncryptedPackage`` stream anywhere in it.
    """
    suffix = suffix.lower()
    if head.startswith(_OLE_MAGIC) and _ENCRYPTED in head and suffix in WORKBOOK_SUFFIXES:
        raise InputError("the workbook is encrypted/password-protected (an OLE2 compound file holding an encrypted "
                         "package, not an old .xls)", file=name,
                         hint="open it in the spreadsheet program, remove the password and save a copy, "
                              "or export the log as CSV")
    head = head[:8192]
    if not head:
        raise InputError("the file is empty", file=name, hint="export the file again; it has no bytes")
    is_zip = head.startswith(_ZIP_MAGIC)
    is_ole = head.startswith(_OLE_MAGIC)
    if suffix in ZIP_SUFFIXES:
        if is_zip:
            return "zip"
        if is_ole:
            if _ENCRYPTED in head:
                raise InputError("the workbook is password-protected (encrypted)", file=name,
                                 hint="open it in the spreadsheet program, remove the password and save a copy")
            raise InputError(f"the file is an old binary .xls workbook saved with the '{suffix}' extension",
                             file=name, hint="rename it to .xls, or save it again as .xlsx")
        if _text_like(head):
            raise InputError(f"the file is text (CSV?) saved with the '{suffix}' extension", file=name,
                             hint="rename it to .csv, or open it and save it as a workbook")
        raise InputError(f"the file is not a '{suffix}' workbook (its first bytes do not match)", file=name,
                         hint="the file may be damaged: export it again")
    if suffix == ".xls":
        if is_ole:
            return "ole"
        if is_zip:
            raise InputError("the file is an .xlsx/.ods workbook saved with the '.xls' extension", file=name,
                             hint="rename it to .xlsx")
        if _text_like(head):
            raise InputError("the file is text (CSV?) saved with the '.xls' extension", file=name,
                             hint="rename it to .csv")
        raise InputError("the file is not an .xls workbook (its first bytes do not match)", file=name,
                         hint="the file may be damaged: export it again")
    if suffix in TEXT_SUFFIXES:
        if is_zip or is_ole:
            kind = "an .xlsx/.ods" if is_zip else "an .xls"
            raise InputError(f"the file is {kind} workbook saved with the '{suffix}' extension", file=name,
                             hint="rename it to " + (".xlsx" if is_zip else ".xls"))
        if not _text_like(head):
            raise InputError("not a text table (the file holds binary data)", file=name,
                             hint="give a CSV/TXT export or a workbook (.xlsx, .xls, .ods)")
        return "text"
    raise InputError(f"unsupported file type '{suffix or '(none)'}'", file=name,
                     hint="give a .csv, .txt, .tsv, .xlsx, .xlsm, .xls or .ods file")


def utf16_without_bom(head: bytes) -> str | None:
    """'utf-16-le' or 'utf-16-be' when the bytes are UTF-16 text without a byte-order mark (ASCII
    characters have a zero byte on one side: at least 30 % of the odd (LE) or even (BE) bytes are
    zero and almost none of the others), else None."""
    sample = head[:8192]
    if len(sample) < 8 or b"\x00" not in sample:
        return None
    even, odd = sample[0::2], sample[1::2]
    z_even, z_odd = even.count(0) / len(even), odd.count(0) / len(odd)
    if z_odd >= 0.3 and z_even <= 0.02:
        return "utf-16-le"
    if z_even >= 0.3 and z_odd <= 0.02:
        return "utf-16-be"
    return None


def _text_like(head: bytes) -> bool:
    if head.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        return True
    enc = utf16_without_bom(head)
    if enc is not None:
        try:
            head[: len(head) // 2 * 2].decode(enc)
            return True
        except UnicodeDecodeError:
            return False
    if b"\x00" in head:
        return False
    ctrl = sum(1 for b in head if b < 32 and b not in (9, 10, 13, 12))
    return ctrl <= max(2, len(head) // 200)


def check_zip(fileobj, name, limits: Limits = DEFAULT_LIMITS) -> None:
    """Refuse a zip workbook that is corrupt or would unpack to more than the limits allow."""
    try:
        zf = zipfile.ZipFile(fileobj)
    except (zipfile.BadZipFile, OSError, ValueError) as exc:
        raise InputError(f"the workbook is damaged (not a readable zip file: {exc})", file=name,
                         hint="open it in the spreadsheet program and save it again, or export a CSV") from None
    with zf:
        infos = zf.infolist()
        if len(infos) > limits.max_members:
            raise InputError(f"the workbook has {len(infos)} parts, more than {limits.max_members}", file=name,
                             hint="this does not look like a log workbook; export the sheet as CSV")
        total = sum(i.file_size for i in infos)
        if total > limits.max_unpacked_bytes:
            raise InputError(f"the workbook would unpack to {total / 2**20:.0f} MiB, more than the limit of "
                             f"{limits.max_unpacked_bytes / 2**20:.0f} MiB", file=name,
                             hint="split the log into monthly files, or export it as CSV")
        for i in infos:
            if i.file_size > 2**20 and i.file_size > limits.max_ratio * max(i.compress_size, 1):
                raise InputError(f"workbook part '{i.filename}' is packed {i.file_size / max(i.compress_size, 1):.0f}:1, "
                                 f"more than the limit of {limits.max_ratio:.0f}:1 (a zip bomb?)", file=name,
                                 hint="do not open this file; ask the sender for a plain export")
        buf = bytearray(2**20)
        for i in infos:
            try:
                with zf.open(i) as fh:
                    head = fh.read(65536)
                    if i.filename.lower().endswith((".xml", ".rels")) and any(m in head for m in _DTD_MARKS):
                        raise InputError(f"workbook part '{i.filename}' declares a DTD or entities, which no "
                                         "workbook needs (an XML entity attack?)", file=name,
                                         hint="do not open this file; ask the sender for a plain export")
                    if limits.verify_zip:
                        while fh.readinto(buf):
                            pass
            except InputError:
                raise
            except (zipfile.BadZipFile, NotImplementedError, RuntimeError, OSError, EOFError) as exc:
                raise InputError(f"the workbook is damaged or encrypted (part '{i.filename}': {exc})", file=name,
                                 hint="open it in the spreadsheet program and save it again") from None
            except Exception as exc:  # noqa: BLE001 - zlib.error and friends
                raise InputError(f"the workbook is damaged (part '{i.filename}': {exc})", file=name,
                                 hint="open it in the spreadsheet program and save it again") from None

