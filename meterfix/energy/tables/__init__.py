"""Published ISO 6976 tables kept as data (each module cites its source and has a checksum)."""
