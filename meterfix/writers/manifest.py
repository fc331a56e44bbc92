"""The run manifest: everything needed to run a month again exactly, and to prove it is the same.

``<stem>_manifest.json`` is written beside the outputs. It records the tool version, the full
settings in SI (``Settings.to_record()``, so a re-run does not depend on re-reading the site file),
the Z method and edition, every input file with its absolute path, its path relative to the
manifest and its sha256, the options as given, and the sha256 of the JSON summary.

``meterfix correct --manifest FILE --out DIR`` (:func:`rerun`) finds each input (relative path
first, so a folder moved as a whole still works; then the absolute path), refuses any whose
sha256 differs, and runs the month again with the recorded settings: the JSON summary comes out
byte-identical. The manifest itself holds no time stamp, so the same run gives the same bytes.
"""

from __future__ import annotations

import hashlib
import json
import os
from pathlib import Path

from .. import __version__
from ..errors import InputError

MANIFEST_VERSION = 1


def sha256_file(path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def _file_entry(path, role: str, base_dir: Path) -> dict:
    p = Path(path).resolve()
    try:
        rel = os.path.relpath(p, base_dir)
    except ValueError:  # another drive on Windows
        rel = None
    return {"role": role, "file": p.name, "path": str(p), "relative_path": None if rel is None else Path(rel).as_posix(),
            "sha256": sha256_file(p)}


def _jsonable(obj):
    from .summary import _clean

    return _clean(obj)


def build_manifest(result, run: dict | None, manifest_path, *, outputs: dict | None = None,
                   summary_text: str | None = None) -> dict:
    """The manifest dict of a month run.

    Parameters
    ----------
    result : MonthResult
    run : dict or None
        How the month was run from files: ``logs`` (list of paths), ``composition``, ``gas``,
        ``invoice``, ``site_file`` (paths or None), ``uncertainty`` (bool), ``options`` (the raw
        options as given). None for a month given in memory (recorded, but not re-runnable).
    manifest_path : path      where the manifest will be written (relative paths start there)
    outputs : dict            kind → output path
    summary_text : str        the JSON summary as written (its sha256 is recorded)
    """
    base = Path(manifest_path).resolve().parent
    s = result.settings
    man = {
        "manifest_version": MANIFEST_VERSION,
        "tool": {"name": "meterfix", "version": __version__},
        "meter": s.meter,
        "months": [str(m) for m in result.months.index],
        "method": {k: result.method.get(k) for k in ("name", "edition", "range")},
        "settings": _jsonable(s.to_record()),
    }
    if run is None:
        man["run"] = {"kind": "memory"}
        man["inputs"] = []
    else:
        inputs = [_file_entry(p, "log", base) for p in run.get("logs") or []]
        for key in ("composition", "invoice", "site_file"):
            if run.get(key):
                inputs.append(_file_entry(run[key], key if key != "composition" else "analysis", base))
        man["run"] = {"kind": "files", "gas": None if run.get("gas") is None else str(run["gas"]),
                      "uncertainty": bool(run.get("uncertainty", True)),
                      "options": _jsonable({k: (str(v) if isinstance(v, Path) else v)
                                            for k, v in sorted((run.get("options") or {}).items()) if v is not None})}
        man["inputs"] = inputs
    if outputs:
        man["outputs"] = {k: Path(v).name for k, v in sorted(outputs.items()) if k != "manifest"}
    if summary_text is not None:
        man["summary_sha256"] = hashlib.sha256(summary_text.encode("utf-8")).hexdigest()
    return man


def manifest_json(man: dict) -> str:
    from .summary import json_safe

    return json.dumps(json_safe(man), indent=2, sort_keys=True, ensure_ascii=False, allow_nan=False) + "\n"


# ---------------------------------------------------------------------------------------------
def load_manifest(path) -> dict:
    """Read and check a manifest file; errors name the file and say what to do."""
    p = Path(path)
    if not p.exists():
        raise InputError("manifest not found", file=p, hint="give the <meter>_<month>_manifest.json written by a run")
    if p.is_dir():
        raise InputError("the manifest is a folder, not a file", file=p)
    try:
        man = json.loads(p.read_text(encoding="utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise InputError(f"the manifest is not valid JSON: {exc}", file=p,
                         hint="give the <meter>_<month>_manifest.json written by a run") from None
    if not isinstance(man, dict) or "manifest_version" not in man or "settings" not in man:
        raise InputError("this JSON file is not a meterfix run manifest", file=p,
                         hint="give the <meter>_<month>_manifest.json written by a run")
    if man["manifest_version"] != MANIFEST_VERSION:
        raise InputError(f"manifest version {man['manifest_version']} is not supported (this meterfix reads "
                         f"version {MANIFEST_VERSION})", file=p)
    return man


def settings_from_record(record: dict, manifest_file=None):
    """Settings exactly as recorded (SI values, sources), refusing unknown fields; a record of an
    earlier version is read under today's setting names (meterfix.engine.settings.RECORD_RENAMES)."""
    from ..engine.settings import settings_from_record as from_record

    return from_record(record, manifest_file)


def locate_inputs(man: dict, manifest_file) -> dict:
    """role → list of verified paths. A missing or changed input raises InputError naming it."""
    base = Path(manifest_file).resolve().parent
    found: dict = {}
    for e in man.get("inputs", []):
        candidates = []
        if e.get("relative_path"):
            candidates.append(base / e["relative_path"])
        if e.get("path"):
            candidates.append(Path(e["path"]))
        path = next((c.resolve() for c in candidates if c.is_file()), None)
        if path is None:
            raise InputError(f"input file of the run not found ({e.get('role')})", file=e.get("path") or e.get("file"),
                             hint="put it back where the manifest says, or beside the manifest as "
                                  f"'{e.get('relative_path')}'")
        digest = sha256_file(path)
        if digest != e.get("sha256"):
            raise InputError(f"input file has changed since the run (sha256 {digest[:12]}..., recorded "
                             f"{str(e.get('sha256'))[:12]}...)", file=path,
                             hint="restore the original file, or run the month anew without --manifest")
        found.setdefault(e["role"], []).append(path)
    return found


def rerun(manifest_file):
    """Run the month recorded in a manifest again; returns (result, run dict for the new manifest)."""
    from ..month import run_files

    man = load_manifest(manifest_file)
    run = man.get("run") or {}
    if run.get("kind") != "files":
        raise InputError("this manifest records a month given in memory, not from files: it cannot be re-run",
                         file=manifest_file, hint="re-run the program that made it, or run the month from files")
    settings = settings_from_record(man["settings"], manifest_file)
    files = locate_inputs(man, manifest_file)
    if not files.get("log"):
        raise InputError("the manifest lists no log file", file=manifest_file)
    one = lambda role: files[role][0] if files.get(role) else None  # noqa: E731
    result = run_files(files["log"], settings, composition=one("analysis"), gas=run.get("gas"),
                       invoice=one("invoice"), uncertainty=run.get("uncertainty", True))
    new_run = {"logs": files["log"], "composition": one("analysis"), "gas": run.get("gas"),
               "invoice": one("invoice"), "site_file": one("site_file"), "uncertainty": run.get("uncertainty", True),
               "options": run.get("options") or {}}
    return result, new_run, man
