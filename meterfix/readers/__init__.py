"""Readers: files → canonical SI frames plus metadata (logs, gas analyses, invoices)."""

from .analyses import parse_analyses, read_analyses
from .invoices import read_invoice
from .logs import LogMetadata, parse_log, read_log
from .tables import parse_table, read_table

__all__ = ["read_log", "parse_log", "LogMetadata", "read_analyses", "parse_analyses", "read_table", "parse_table",
           "read_invoice"]
