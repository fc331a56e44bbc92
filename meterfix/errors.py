"""Error types that carry the context a metering engineer needs to fix the input.

Every error the tool raises on purpose is a :class:`MeterfixError`. The CLI turns one into a
single-line message and exit code 2; anything else escaping is a bug.
"""

from __future__ import annotations


class MeterfixError(Exception):
    """Base class for every error meterfix raises on purpose.

    Parameters
    ----------
    message : str
        What is wrong, in plain words.
    file, sheet, row, column : optional
        Where it is. ``row`` is the 1-based row as a spreadsheet program shows it.
    hint : str, optional
        What to do about it.
    """

    def __init__(self, message: str, *, file=None, sheet=None, row=None, column=None, hint=None):
        super().__init__(message)
        self.message = message
        self.file = None if file is None else str(file)
        self.sheet = sheet
        self.row = row
        self.column = column
        self.hint = hint

    def where(self) -> str:
        parts = []
        if self.file:
            parts.append(self.file)
        if self.sheet is not None:
            parts.append(f"sheet '{self.sheet}'")
        if self.row is not None:
            parts.append(f"row {self.row}")
        if self.column is not None:
            parts.append(f"column '{self.column}'")
        return ", ".join(parts)

    def __str__(self) -> str:
        where = self.where()
        text = f"{where}: {self.message}" if where else self.message
        if self.hint:
            text += f" ({self.hint})"
        return text


class InputError(MeterfixError):
    """A file or value given to the tool cannot be used as it is."""


class UnitError(InputError):
    """A unit is unknown, or of the wrong kind for the quantity."""


class CompositionError(InputError):
    """A gas composition is invalid: unknown component, negative fraction, bad sum."""


class SettingsError(InputError):
    """A site setting is missing or invalid."""


class OutputError(MeterfixError):
    """An output cannot be written where asked: a read-only folder, a file in the way, a full disk."""


class RangeWarning(UserWarning):
    """Some points lie outside the validity range of the chosen method."""
