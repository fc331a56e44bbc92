"""`meterfix balance` at scale: a balance of 1,000 meters over one gas month whose months are
already run, with the meter search and the VDI 2048 reconciliation, beside the fleet run of meters.

In one run, on the invented demo zone (fixtures/zone):

- fleet      the zone's seven meter folders, copied to --fleet-meters folders, run through the
             fleet machinery (meterfix.fleet.local.run_fleet, --workers processes, every default
             output, uncertainty on): seconds per meter
- balance    the balance of --meters meters over the zone's 30 gas days from their written
             summaries (the work of `meterfix balance --from-store` once the months are read):
             read the summary JSON files, assemble (rules, restatement, linepack with Z), UFG and
             its uncertainty, the meter search (every meter, every onset), the reconciliation
             with the full covariance matrix, and the balance's JSON, daily CSV and workbook.
             The 1,000 summaries are the fleet's own, repeated with each meter's daily volumes
             scaled by a random factor (receipts scaled so the zone still balances).

Prints wall times, the balance's parts, the balance against the target (<= 5 s for 1,000 meters),
and the balance's time in meters' worth of fleet time; and the load average (shared machine:
compare ratios, not seconds).

    python benchmarks/bench_balance.py [--meters 1000] [--fleet-meters 14] [--workers 2] [--quick]
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))


def _load() -> str:
    return " ".join(f"{x:.2f}" for x in os.getloadavg())


def fleet_folders(tmp: Path, n: int) -> list:
    from meterfix.cli.demo import zone_folder

    src = sorted((zone_folder() / "meters").iterdir())
    out = []
    for i in range(n):
        s = src[i % len(src)]
        d = tmp / "fleet" / f"{s.name}-{i:04d}"
        shutil.copytree(s, d)
        site = d / "site.toml"
        site.write_text(site.read_text(encoding="utf-8").replace(f'meter = "{s.name}"', f'meter = "{d.name}"'),
                        encoding="utf-8")
        out.append(d)
    return out


def _scale(t, f):
    """A summary's daily volumes, energies and random uncertainties times f (per gas day)."""
    f = np.broadcast_to(np.asarray(f, float), (len(t["gas_days"]),))
    for d, k in zip(t["gas_days"], f):
        d["volume_base_m3"] *= k
        d["energy_J"] = d["energy_J"] * k if d.get("energy_J") is not None else None
    for d, k in zip(t["uncertainty"]["gas_days"], f):
        for key in ("random_standard_uncertainty_m3", "random_standard_uncertainty_J", "volume_base"):
            if d.get(key) is not None:
                d[key] *= k
    return t


def scaled_summaries(summaries: dict, n: int, seed: int = 3):
    """n (name, role, summary) from the zone's: deliveries repeated with a random scale factor each,
    receipts scaled day by day so that the balance closes as the zone's does."""
    rng = np.random.default_rng(seed)
    recs = [(k, s) for k, s in summaries.items() if k.startswith("BF-R")]
    dels = [(k, s) for k, s in summaries.items() if not k.startswith("BF-R")]

    def days(s):  # at 0 °C (the restated meter's 15 °C volumes by the ideal-gas ratio: close enough here)
        tb = s["base_conditions"]["temperature_K"]
        return np.array([d["volume_base_m3"] for d in s["gas_days"]]) * (273.15 / tb)

    r0 = sum(days(s) for _, s in recs)
    d0 = sum(days(s) for _, s in dels)
    n_r = max(2, n // 50)
    out, dn = [], 0.0
    for i in range(n - n_r):
        k, s = dels[i % len(dels)]
        f = rng.uniform(0.5, 1.5)
        out.append((f"D{i:04d} {k}", "delivery", _scale(json.loads(json.dumps(s)), f)))
        dn = dn + f * days(s)
    f_r = (dn + r0 - d0) / r0 / (n_r / len(recs))
    for j in range(n_r):
        k, s = recs[j % len(recs)]
        out.append((f"R{j:04d} {k}", "receipt", _scale(json.loads(json.dumps(s)), f_r)))
    return out


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--meters", type=int, default=1000)
    ap.add_argument("--fleet-meters", type=int, default=14)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--quick", action="store_true", help="100 meters in the balance, 7 in the fleet run")
    a = ap.parse_args(argv)
    if a.quick:
        a.meters, a.fleet_meters = 100, 7
    from meterfix.balance.assemble import assemble
    from meterfix.balance.config import BalanceConfig, LinepackEntry, MeterEntry, read_balance_config
    from meterfix.balance.writers import balance_summary, write_balance_outputs
    from meterfix.cli.demo import zone_folder
    from meterfix.fleet.local import run_fleet, warm

    print(f"load average before: {_load()}")
    warm()
    with tempfile.TemporaryDirectory() as td:
        tmp = Path(td)
        folders = fleet_folders(tmp, a.fleet_meters)
        t0 = time.perf_counter()
        run = run_fleet(folders, tmp / "fleet-out", {}, workers=a.workers)
        t_fleet = time.perf_counter() - t0
        bad = [r for r in run.rows if r["status"] != "ok"]
        assert not bad, bad[0]
        per_meter = t_fleet / len(folders)
        print(f"fleet: {len(folders)} meters, {a.workers} workers: {t_fleet:.1f} s, {per_meter:.3f} s per meter "
              f"(1,000 meters at that rate: {1000 * per_meter / 60:.1f} min)")
        zone_cfg = read_balance_config(zone_folder() / "balance.toml")
        base = {}
        for d in folders[:7]:
            p = next((tmp / "fleet-out" / d.name).glob("*_summary.json"))
            base[d.name.split("-0")[0]] = json.loads(p.read_text(encoding="utf-8"))
        items = scaled_summaries(base, a.meters)
        sdir = tmp / "summaries"
        sdir.mkdir()
        paths = []
        for i, (name, role, s) in enumerate(items):
            p = sdir / f"m{i:05d}_summary.json"
            p.write_text(json.dumps(s), encoding="utf-8")
            paths.append((name, role, p))
        lp = zone_cfg.linepacks[0]
        comp = items[-1][0]
        cfg = BalanceConfig(file=zone_cfg.file, name="Benchmark zone", month="2026-11", pressure_base=101325.0,
                            temperature_base=273.15, method="aga8-detail",
                            meters=[MeterEntry(name=n, folder=sdir, role=r, correlation_group=None) for n, r, _ in paths],
                            linepacks=[LinepackEntry(**{**lp.__dict__, "composition": comp})], fixed=zone_cfg.fixed)
        t0 = time.perf_counter()
        summaries = {n: (json.loads(p.read_text(encoding="utf-8")), "written summary") for n, _, p in paths}
        t_read = time.perf_counter() - t0
        t1 = time.perf_counter()
        result = assemble(cfg, summaries)
        t_assemble = time.perf_counter() - t1
        t2 = time.perf_counter()
        summary = balance_summary(result)
        write_balance_outputs(summary, tmp / "balance-out")
        t_write = time.perf_counter() - t2
        total = time.perf_counter() - t0
        # the search and the reconciliation alone, again, on the assembled parts
        from meterfix.balance.compute import reconcile_month
        from meterfix.balance.search import search

        M = len(result.meters)
        t3 = time.perf_counter()
        search(result.volume.ufg, result.volume.u_random_ufg, np.array([m.volume for m in result.meters]),
               np.array([m.sign for m in result.meters]), [m.name for m in result.meters],
               [m.role for m in result.meters], result.gas_days)
        t_search = time.perf_counter() - t3
        t4 = time.perf_counter()
        reconcile_month(result.meters, result.fixed, result.linepacks, result.volume)
        t_rec = time.perf_counter() - t4
        print(f"balance: {M} meters x {len(result.gas_days)} gas days: {total:.2f} s "
              f"(target <= 5 s for 1,000 meters): read {t_read:.2f} s, assemble + UFG + search + reconciliation "
              f"{t_assemble:.2f} s (search {t_search:.3f} s, reconciliation {t_rec:.3f} s), outputs {t_write:.2f} s")
        print(f"  = the fleet time of {total / per_meter:.1f} meters; "
              f"UFG {result.volume.month['ufg']:,.0f} m3 ± {result.volume.expanded:,.0f} m3, "
              f"credited: {result.credited.meter if result.credited else 'none'}")
    print(f"load average after: {_load()}")


if __name__ == "__main__":
    main()
