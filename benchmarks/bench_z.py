"""Speed and peak memory of every registered Z method, and the ratio to the plain scalar code.

For each method in the registry: points per second and peak memory (tracemalloc, a separate run
so that tracing does not slow the timed one) at 10^3, 10^5 and 10^6 points (--quick: 10^3 only,
tiny inputs to check that the benchmark runs), for one composition and for 100 compositions (the points split into 100 equal groups,
one call per group, as the month pipeline calls a method once per analysis period). Then the
equations of state against their scalar test versions (tests/scalar_*.py) on a small sample in
the same run, and the DETAIL / GERG-2008 variants (Z only, distinct temperatures). Last, what the issue targets:
the public ``meterfix.compressibility`` at 10^6 distinct (p, T) points against the AGA8
reference code called point by point from Python (``pyaga8``: DensityDetail / DensityGERG,
then the properties routine), interleaved, three rounds; and the cold first call of each
method in a fresh process (imports, loading the cached compiled kernel).

Points: pressure uniform 0.1-12 MPa, temperature uniform 263-313 K rounded to 0.01 K (a
logger's resolution); a lean pipeline gas, and 100 variations of it. Speed is never asserted:
the machine is shared, so the load average is printed with the figures.

    python benchmarks/bench_z.py [--quick] [--methods aga8-detail,gerg-2008] [--reference-only]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import time
import tracemalloc
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from meterfix.gas.composition import Composition  # noqa: E402
from meterfix.z import get_method, method_names  # noqa: E402
from meterfix.z.aga8_gross import characterize  # noqa: E402

BASE_GAS = {"methane": 0.93, "ethane": 0.035, "propane": 0.008, "nitrogen": 0.015, "carbon_dioxide": 0.012}
#: a 12-component pipeline gas (invented, within DETAIL's normal-range composition limits): the
#: comparison with the reference code runs on it
PIPELINE_GAS = {"methane": 0.8965, "ethane": 0.0520, "propane": 0.0125, "isobutane": 0.0021, "n_butane": 0.0030,
                "isopentane": 0.0008, "n_pentane": 0.0006, "n_hexane": 0.0004, "nitrogen": 0.0180,
                "carbon_dioxide": 0.0130, "helium": 0.0003, "hydrogen": 0.0008}
#: targets of the issue at 10^6 points, one composition [points/s]
TARGETS = {"aga8-detail": 2.0e6, "gerg-2008": 5.0e5}
PEAK_TARGET_MB = 1024.0


def points(n: int, rng, distinct: bool = False):
    p = rng.uniform(0.1e6, 12e6, n)
    t = rng.uniform(263.0, 313.0, n)
    return p, (t if distinct else np.round(t, 2))


def compositions(k: int, rng) -> list[Composition]:
    """The base gas and k - 1 variations (methane 88-96 %, the rest scaled)."""
    out = [Composition.from_mapping(BASE_GAS)]
    others = {c: v for c, v in BASE_GAS.items() if c != "methane"}
    for _ in range(k - 1):
        ch4 = rng.uniform(0.88, 0.96)
        scale = rng.uniform(0.5, 1.5, len(others))
        rest = np.array(list(others.values())) * scale
        rest *= (1.0 - ch4) / rest.sum()
        out.append(Composition.from_mapping({"methane": ch4, **dict(zip(others, rest))}))
    return out


def gas_for(method, comp: Composition):
    """What the method takes: the composition, or its GROSS characterisation."""
    if method.gas_input == "gross":
        return characterize(comp).characterization
    return comp


def run_groups(method, p, t, gases, **options):
    groups = np.array_split(np.arange(p.size), len(gases))
    for g, gas in zip(groups, gases):
        method.evaluate(p[g], t[g], gas, **options)


def measure(fn, n: int):
    """(points per second, peak traced memory [MB])."""
    fn()  # warm up (caches per composition, imports)
    repeats = max(2, min(20, int(3e5 // n)))  # best of at least two: the machine may be shared
    best = np.inf
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    tracemalloc.start()
    tracemalloc.reset_peak()
    fn()
    peak = tracemalloc.get_traced_memory()[1] / 2 ** 20
    tracemalloc.stop()
    return n / best, peak


def scalar_rate(module, comp: Composition, rng, n: int = 20) -> float:
    """Points per second of a scalar test implementation on a small sample."""
    p, t = points(n, rng)
    x = list(comp.fractions)
    t0 = time.perf_counter()
    for k in range(n):
        module.properties(float(p[k]), float(t[k]), x)
    return n / (time.perf_counter() - t0)


#: the issue's targets: points per second of compressibility() over the reference code's
REFERENCE_TARGETS = {"aga8-detail": 15.0, "gerg-2008": 10.0}
PYAGA8_NAMES = {"n_hexane": "hexane", "n_heptane": "heptane", "n_octane": "octane", "n_nonane": "nonane",
                "n_decane": "decane"}


def reference_rate(method: str, gas: dict, p, t) -> float:
    """Points per second of the AGA8 reference code (pyaga8) called point by point for Z."""
    import pyaga8

    comp = pyaga8.Composition()
    for k, v in gas.items():
        setattr(comp, PYAGA8_NAMES.get(k, k), v)
    state = pyaga8.Detail() if method == "aga8-detail" else pyaga8.Gerg2008()
    state.set_composition(comp)
    gerg = method == "gerg-2008"
    pk = (np.asarray(p) / 1000.0).tolist()  # [kPa]
    tk = np.asarray(t).tolist()
    t0 = time.perf_counter()
    for pi, ti in zip(pk, tk):
        state.pressure = pi
        state.temperature = ti
        if gerg:
            state.calc_density(0)
        else:
            state.calc_density()
        state.calc_properties()
        _ = state.z
    return len(pk) / (time.perf_counter() - t0)


COLD = """
import time, numpy as np
t0 = time.perf_counter()
from meterfix import compressibility
t1 = time.perf_counter()
rng = np.random.default_rng(5)
p = rng.uniform(0.1e6, 12e6, {n}); t = rng.uniform(263.0, 313.0, {n})
gas = {gas!r}
t2 = time.perf_counter(); compressibility(p, t, gas, method={method!r}); t3 = time.perf_counter()
compressibility(p, t, gas, method={method!r}); t4 = time.perf_counter()
print(t1 - t0, t3 - t2, t4 - t3)
"""


def against_reference(names, rng, quick: bool = False) -> None:
    """compressibility() at 10^6 distinct points against pyaga8 point by point, same run, on the
    12-component pipeline gas; then the cold first call of 10^5 points in a fresh process."""
    from meterfix import compressibility

    try:
        import pyaga8  # noqa: F401
    except ImportError:
        print("\npyaga8 not installed (pip install -e '.[bench]'): no comparison with the reference code")
        return
    n, n_ref = (10 ** 4, 10 ** 3) if quick else (10 ** 6, 10 ** 5)
    gas = PIPELINE_GAS
    p, t = points(n, rng, distinct=True)
    print(f"\ncompressibility() at {n} distinct (p, T) points vs the AGA8 reference code (pyaga8) point by "
          f"point on {n_ref} of them, 12-component pipeline gas; 3 rounds, interleaved")
    for name in ("aga8-detail", "gerg-2008"):
        if name not in names:
            continue
        compressibility(p[:10 ** 5], t[:10 ** 5], gas, method=name)  # warm: imports, kernel load
        ours, refs, ratios = [], [], []
        for _ in range(3):
            r_ref = reference_rate(name, gas, p[:n_ref], t[:n_ref])
            t0 = time.perf_counter()
            compressibility(p, t, gas, method=name)
            r = n / (time.perf_counter() - t0)
            ours.append(r)
            refs.append(r_ref)
            ratios.append(r / r_ref)
        load = os.getloadavg()
        print(f"{name:12s} ours {fmt_rate(min(ours))}-{fmt_rate(max(ours))}  reference {fmt_rate(min(refs))}-"
              f"{fmt_rate(max(refs))}  ratio {min(ratios):.1f}-{max(ratios):.1f} x (target "
              f"{REFERENCE_TARGETS[name]:.0f} x: {'met' if max(ratios) >= REFERENCE_TARGETS[name] else 'NOT met'}), "
              f"load {load[0]:.2f}")
    n_cold = 10 ** 3 if quick else 10 ** 5
    print(f"cold first call in a fresh process, {n_cold} points (import meterfix / first call / second call; "
          "target: import + first call <= 0.5 s):")
    for name in ("aga8-detail", "gerg-2008"):
        if name not in names:
            continue
        out = subprocess.run([sys.executable, "-c", COLD.format(n=n_cold, gas=gas, method=name)],
                             capture_output=True, text=True, check=True).stdout.split()
        imp, first, second = (float(v) for v in out)
        print(f"{name:12s} import {imp:.2f} s, first call {first:.2f} s, second call {second:.2f} s "
              f"(all included {imp + first:.2f} s; first - second = {first - second:.2f} s of loading)")


def fmt_rate(r: float) -> str:
    return f"{r / 1e6:8.3f} M/s" if r >= 1e5 else f"{r / 1e3:8.1f} k/s"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="tiny inputs (10^3 points), no figure to read")
    ap.add_argument("--methods", default="", help="comma-separated registry names (default: all)")
    ap.add_argument("--reference-only", action="store_true",
                    help="only compressibility() against the AGA8 reference code and the cold first call")
    args = ap.parse_args()
    sizes = [10 ** 3] if args.quick else [10 ** 3, 10 ** 5, 10 ** 6]
    names = [m.strip() for m in args.methods.split(",") if m.strip()] or method_names()
    rng = np.random.default_rng(2026)
    gases = compositions(10 if args.quick else 100, rng)
    data = {n: points(n, rng) for n in sizes}
    load = os.getloadavg()
    print(f"meterfix Z methods: {os.cpu_count()} CPU(s), load average {load[0]:.2f} {load[1]:.2f} {load[2]:.2f}")
    if args.reference_only:
        against_reference(names, rng, args.quick)
        return
    print(f"{'method':18s} {'points':>9s} {'one composition':>16s} {'peak MB':>8s} {'100 compositions':>17s} {'peak MB':>8s}")
    rates: dict[tuple[str, int], float] = {}
    peaks: dict[tuple[str, int], float] = {}
    for name in names:
        m = get_method(name)
        one = gas_for(m, gases[0])
        many = [gas_for(m, g) for g in gases]
        for n in sizes:
            p, t = data[n]
            r1, m1 = measure(lambda: m.evaluate(p, t, one), n)
            r100, m100 = measure(lambda: run_groups(m, p, t, many), n)
            rates[(name, n)], peaks[(name, n)] = r1, m1
            print(f"{name:18s} {n:9d} {fmt_rate(r1):>16s} {m1:8.1f} {fmt_rate(r100):>17s} {m100:8.1f}")

    # the equations of state against their plain scalar test versions, same run
    import scalar_aga8_detail
    import scalar_gerg2008

    print("\nvectorized / scalar test implementation (scalar timed on 20 points)")
    for name, module in (("aga8-detail", scalar_aga8_detail), ("gerg-2008", scalar_gerg2008)):
        if name not in names:
            continue
        s = scalar_rate(module, gases[0], rng)
        cells = "  ".join(f"10^{int(np.log10(n))}: {rates[(name, n)] / s:9.0f} x" for n in sizes)
        print(f"{name:18s} scalar {fmt_rate(s)}   {cells}")

    # variants of the two equations of state at the largest size
    n = sizes[-1]
    p, t = data[n]
    _, t_distinct = points(n, rng, distinct=True)
    print(f"\nvariants at {n} points, one composition")
    for name in ("aga8-detail", "gerg-2008"):
        if name not in names:
            continue
        m = get_method(name)
        for label, tt, opts in (("logged T, Z only", t, {"speed_of_sound": False}),
                                ("distinct T, with speed of sound", t_distinct, {}),
                                ("distinct T, Z only", t_distinct, {"speed_of_sound": False}),
                                ("logged T, one thread", t, {"workers": 1})):
            r, mem = measure(lambda: m.evaluate(p, tt, gases[0], **opts), n)
            print(f"{name:18s} {label:34s} {fmt_rate(r):>12s} {mem:8.1f} MB")

    print("\ntargets at 10^6 points, one composition (with speed of sound, logged temperatures)")
    for name, target in TARGETS.items():
        key = (name, 10 ** 6)
        if key not in rates:
            print(f"{name:18s} not measured (run without --quick)")
            continue
        ok = rates[key] >= target and peaks[key] <= PEAK_TARGET_MB
        print(f"{name:18s} {fmt_rate(rates[key])} (target {fmt_rate(target)}), peak {peaks[key]:.0f} MB "
              f"(target {PEAK_TARGET_MB:.0f} MB): {'met' if ok else 'NOT met'}")
    against_reference(names, rng, args.quick)


if __name__ == "__main__":
    main()
