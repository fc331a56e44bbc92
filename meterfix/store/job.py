"""A month run that closes into the store: the order that keeps outputs and store consistent.

1. the store is checked (reachable, a meterfix store of a schema we know, write lock available)
   before anything is computed;
2. the month is computed;
3. the closing is planned from the store as it stands: version, and a reason required when
   the month is already closed (refused here, before any output is written); the workbook's
   History sheet (``result.history``) is filled;
4. the outputs are written (a complete set or nothing);
5. the closing is committed in one transaction. Should that fail, the outputs just written are
   removed again and the error is raised: outputs and store stay as they were.

:class:`Closer` is plain data, so the fleet runner can hand it to worker processes.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from .db import StoreError, check_store, display_name, open_store


@dataclass(frozen=True)
class Closer:
    """Where and as whom months are closed.

    Attributes
    ----------
    target : str or None   ``--store`` as given (wins over a site file's ``store``)
    by : str or None       who closes (``--by``)
    reason : str or None   why (``--reason``; required once a version of the month exists)
    """

    target: str | None = None
    by: str | None = None
    reason: str | None = None

    def store_for(self, settings, base_dir=None):
        """The store of a meter: the option, else the site file's ``store`` (relative to the
        site file's folder), else None."""
        if self.target:
            return open_store(self.target)
        if settings.store:
            return open_store(settings.store, base_dir=base_dir)
        return None

    def run(self, settings, compute, write, *, base_dir=None):
        """``compute()`` → (result, frame); ``write(result)`` → {kind: path}.

        Returns (result, written, closing) where closing is None without a store, else a dict
        with store, meter, month, version, closed_at and closing_hash.
        """
        store = self.store_for(settings, base_dir)
        if store is None:
            if self.by or self.reason:
                raise StoreError("--by and --reason go with a store", hint="add --store FILE_OR_URL, or drop them")
            result, _ = compute()
            return result, write(result), None
        from . import close as C
        from .history import month_history

        check_store(store)
        result, frame = compute()
        draft = C.prepare(result, frame, by=self.by, reason=self.reason)
        C.plan(store, draft)
        result.history = month_history(store, draft)
        written = write(result)
        try:
            row = C.commit(store, draft)
        except BaseException:
            _remove(written)
            raise
        return result, written, {"store": display_name(store.target), "meter": draft.meter, "month": draft.month,
                                 "version": row["version"], "closed_at": row["closed_at"],
                                 "closing_hash": row["closing_hash"]}


def _remove(written: dict):
    for p in (written or {}).values():
        try:
            Path(p).unlink()
        except OSError:
            pass
