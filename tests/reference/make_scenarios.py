#!/usr/bin/env python3
"""Writes the invented scenario snapshots under tests/fixtures/scenarios/.

Tranche quotes are generated with independent.py from a chosen base-correlation
curve per maturity (so they are mutually consistent), then rounded to quoting
precision (spreads to 2 decimals of a bp, upfronts to 4 decimals of a percent).
A few quotes are then set by hand-chosen rules to exercise the solver edge
cases (two compound roots, no compound root, a broken base-correlation chain);
each is explained where it is made. All index and pool names are invented;
the files carry no names at all.

Then runs independent.py on each (options in RUNS) and writes the outputs with
their command line and library versions to tests/fixtures/independent/.

Usage: python3 tests/reference/make_scenarios.py [--fixtures-only] [FIXTURE_NAME ...]
"""

import csv
import datetime as dt
import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import independent as I  # noqa: E402

D = dt.date.fromisoformat
HEADER = ["date", "instrument", "maturity", "attach_pct", "detach_pct", "quote_kind", "quote", "coupon_bp", "recovery_pct"]


def setup(trade, index_rows, zeros, rate_pct, recovery):
    disc = I.build_discount(trade, zeros, rate_pct / 100.0)
    rows = [dict(maturity=m, kind=k, quote=q, coupon=(c or 0.0) / 1e4) for m, k, q, c in index_rows]
    haz, _ = I.bootstrap(trade, sorted(rows, key=lambda r: r["maturity"]), disc, recovery)
    return disc, haz


def base_legs(trade, disc, haz, recovery, maturity, detach, rho):
    """Protection and annuity of [0, detach] in pool-notional units."""
    if detach <= 0:
        return 0.0, 0.0
    s = I.Schedule(trade, maturity)
    p, a, _ = I.tranche_legs(s, disc, haz, recovery, rho, 0.0, detach)
    return detach * p, detach * a


def quote_from_base(trade, disc, haz, recovery, maturity, attach, detach, kind, coupon_bp, base_curve):
    """Quote of [attach, detach] consistent with base correlations base_curve[attach], base_curve[detach]."""
    s = I.Schedule(trade, maturity)
    df_settle = disc.df(s.t(s.settlement))
    pd_, ad = base_legs(trade, disc, haz, recovery, maturity, detach, base_curve.get(detach, 0.3))
    pa, aa = base_legs(trade, disc, haz, recovery, maturity, attach, base_curve.get(attach, 0.3))
    prot, ann = pd_ - pa, ad - aa
    w = detach - attach
    if kind == "spread_bp":
        return round(prot / ann * 1e4, 2)
    c = coupon_bp / 1e4
    return round((prot - c * ann) / (w * df_settle) * 100.0, 4)


def fmt(x):
    return "" if x is None else (f"{x:g}" if isinstance(x, float) else str(x))


def write(path, rows):
    with open(path, "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(HEADER)
        for r in rows:
            w.writerow([fmt(r.get(h)) for h in HEADER])
    print(f"wrote {path} ({len(rows)} rows)")


def date_rows(trade, index_rows, zeros, recovery_pct, tranches, recovery, rate_pct, base_curves, overrides=None):
    """Rows of one trade date. tranches: (maturity, attach_pct, detach_pct, kind, coupon_bp)."""
    overrides = overrides or {}
    disc, haz = setup(trade, index_rows, zeros, rate_pct, recovery)
    out = []
    for m, k, q, c in index_rows:
        out.append(dict(date=trade, instrument="index", maturity=m, quote_kind=k, quote=q, coupon_bp=c, recovery_pct=recovery_pct))
    for m, a, d, k, c in tranches:
        key = (m, a, d)
        if key in overrides:
            q = overrides[key](disc, haz)
        else:
            q = quote_from_base(trade, disc, haz, recovery, m, a / 100.0, d / 100.0, k, c, base_curves[m])
        out.append(dict(date=trade, instrument="tranche", maturity=m, attach_pct=a, detach_pct=d, quote_kind=k, quote=q, coupon_bp=c if k == "upfront_pct" else None))
    for m, r in zeros:
        out.append(dict(date=trade, instrument="zero", maturity=m, quote_kind="zero_rate_pct", quote=r * 100.0))
    return out, disc, haz


def ig_pool(outdir):
    """Investment-grade-like pool, par index spreads at 3Y/5Y/7Y, rate 0 (no zero rows),
    recovery 40% by default. 5Y and 7Y tranches: equity upfront with a 500 bp coupon,
    [3,7%] upfront with a 100 bp coupon, [7,15%] and [15,100%] par spreads."""
    trade = D("2026-05-12")
    m3, m5, m7 = D("2029-06-20"), D("2031-06-20"), D("2033-06-20")
    index = [(m3, "spread_bp", 42.5, None), (m5, "spread_bp", 58.25, None), (m7, "spread_bp", 71.75, None)]
    tr = []
    for m in (m5, m7):
        tr += [(m, 0, 3, "upfront_pct", 500), (m, 3, 7, "upfront_pct", 100), (m, 7, 15, "spread_bp", None), (m, 15, 100, "spread_bp", None)]
    curves = {m5: {0.03: 0.22, 0.07: 0.31, 0.15: 0.44, 1.0: 0.6}, m7: {0.03: 0.20, 0.07: 0.28, 0.15: 0.40, 1.0: 0.6}}
    rows, _, _ = date_rows(trade, index, [], None, tr, 0.40, 0.0, curves)
    write(os.path.join(outdir, "ig_pool.csv"), rows)


def hy_pool(outdir):
    """High-yield-like pool: index quoted upfront with a fixed 500 bp coupon (one
    pillar below the coupon: negative upfront), recovery 30% in the file, every
    tranche upfront with a 500 bp coupon (the senior ones negative). Run with
    --rate 2.5 (flat rate, no zero rows)."""
    trade = D("2026-08-04")
    m3, m5 = D("2029-06-20"), D("2031-06-20")
    index = [(m3, "upfront_pct", -1.375, 500), (m5, "upfront_pct", 2.8125, 500)]
    tr = [(m5, 0, 15, "upfront_pct", 500), (m5, 15, 25, "upfront_pct", 500), (m5, 25, 35, "upfront_pct", 500), (m5, 35, 100, "upfront_pct", 500)]
    curves = {m5: {0.15: 0.18, 0.25: 0.27, 0.35: 0.36, 1.0: 0.5}}
    rows, _, _ = date_rows(trade, index, [], 30, tr, 0.30, 2.5, curves)
    write(os.path.join(outdir, "hy_pool.csv"), rows)


def zero_curve(outdir):
    """A two-date history with zero-rate rows: the first pillar (6M) is after
    step-in (flat zero before it), the 7Y maturity is beyond the last pillar
    (5Y: flat forward after it), and the rows come shuffled (any order)."""
    out = []
    for trade, shift in ((D("2026-02-10"), 0.0), (D("2026-02-11"), 1.5)):
        zeros = [(D("2026-08-10"), 0.0210), (D("2027-02-10"), 0.0235), (D("2028-02-10"), 0.0262), (D("2031-02-10"), 0.0318)]
        m5, m7 = D("2030-12-20"), D("2032-12-20")
        index = [(m5, "spread_bp", 61.0 + shift, None), (m7, "spread_bp", 76.5 + shift, None)]
        tr = [(m5, 0, 3, "upfront_pct", 500), (m5, 3, 7, "spread_bp", None), (m5, 7, 15, "spread_bp", None), (m5, 15, 100, "spread_bp", None)]
        curves = {m5: {0.03: 0.24 + shift / 100, 0.07: 0.33, 0.15: 0.45, 1.0: 0.6}}
        rows, _, _ = date_rows(trade, index, zeros, None, tr, 0.40, 0.0, curves)
        out += rows
    # any order: tranche and zero rows before index rows, dates interleaved
    out = sorted(out, key=lambda r: (r["instrument"] != "zero", str(r.get("attach_pct", "")), r["date"]))
    write(os.path.join(outdir, "zero_curve.csv"), out)


def calendar_edges(outdir):
    """Three trade dates around the roll calendar, recovery 35% from the command
    line (--recovery 35 overrides the file's 40):
    - 2026-03-19 (Thu): step-in 2026-03-20 is a roll date, which is not a
      payment date (roll dates strictly after step-in);
    - 2026-03-20 (Fri): trade date on a roll date, step-in on a Saturday,
      settlement the next Wednesday;
    - 2026-06-19 (Fri): maturities 2027-06-20 (Sun) and 2031-12-20 (Sat),
      paid the following Monday, protection to maturity + 1 day; the first
      roll date 2026-09-20 is a Sunday."""
    out = []
    mats = (D("2027-06-20"), D("2029-06-20"), D("2031-12-20"))
    for trade, spreads in ((D("2026-03-19"), (31.0, 47.5, 66.25)), (D("2026-03-20"), (31.5, 48.0, 66.5)), (D("2026-06-19"), (29.75, 45.5, 64.0))):
        index = [(m, "spread_bp", s, None) for m, s in zip(mats, spreads)]
        m = mats[-1]
        tr = [(m, 0, 3, "upfront_pct", 500), (m, 3, 7, "upfront_pct", 100), (m, 7, 15, "spread_bp", None), (m, 15, 100, "spread_bp", None)]
        curves = {m: {0.03: 0.21, 0.07: 0.30, 0.15: 0.42, 1.0: 0.6}}
        rows, _, _ = date_rows(trade, index, [], 40, tr, 0.35, 0.0, curves)
        out += rows
    write(os.path.join(outdir, "calendar_edges.csv"), out)


def compound_roots(outdir):
    """Solver edge cases on one date, flat index spreads (5Y and 7Y at 64 bp), rate 0:
    5Y: [0,3%] from a base curve; [3,7%] par spread set between the value at
    rho = 0.9999 and the peak of the par spread in rho (two compound roots);
    [7,15%] par spread set 3% above its peak over rho (no compound root).
    7Y: [0,3%] and [3,7%] from a base curve; [7,15%] par spread so high that no
    base correlation reaches it (the chain breaks: [7,15%] and [15,100%] have
    none)."""
    import numpy as np

    trade = D("2026-09-15")
    m5, m7 = D("2031-12-20"), D("2033-12-20")
    index = [(m5, "spread_bp", 64.0, None), (m7, "spread_bp", 64.0, None)]
    R = 0.40

    def par_spread(disc, haz, m, a, d, rho):
        s = I.Schedule(trade, m)
        p, an, _ = I.tranche_legs(s, disc, haz, R, rho, a, d)
        return p / an * 1e4

    def two_roots(disc, haz):
        grid = np.linspace(1e-4, 0.9999, 101)
        vals = [par_spread(disc, haz, m5, 0.03, 0.07, r) for r in grid]
        peak, high = max(vals), vals[-1]
        # 40% of the way from the high-rho value up to the peak: roots on both sides
        return round(high + 0.4 * (peak - high), 2)

    def no_root(disc, haz):
        grid = np.linspace(1e-4, 0.9999, 101)
        return round(1.03 * max(par_spread(disc, haz, m5, 0.07, 0.15, r) for r in grid), 2)

    def unreachable(disc, haz):
        # the [0,15%] base tranche at rho -> 0 gives the most [7,15%] protection
        # against the [0,7%] base at its solved base correlation; 4x the par
        # spread at base rho 0.30 (given rho_7 = 0.28) is beyond every rho_15
        s = I.Schedule(trade, m7)
        pd_, ad = base_legs(trade, disc, haz, R, m7, 0.15, 0.30)
        pa, aa = base_legs(trade, disc, haz, R, m7, 0.07, 0.28)
        return round(4.0 * (pd_ - pa) / (ad - aa) * 1e4, 2)

    tr = [
        (m5, 0, 3, "upfront_pct", 500),
        (m5, 3, 7, "spread_bp", None),
        (m5, 7, 15, "spread_bp", None),
        (m5, 15, 100, "spread_bp", None),
        (m7, 0, 3, "upfront_pct", 500),
        (m7, 3, 7, "upfront_pct", 100),
        (m7, 7, 15, "spread_bp", None),
        (m7, 15, 100, "spread_bp", None),
    ]
    curves = {m5: {0.03: 0.22, 0.07: 0.30, 0.15: 0.42, 1.0: 0.6}, m7: {0.03: 0.20, 0.07: 0.28, 0.15: 0.40, 1.0: 0.6}}
    overrides = {(m5, 3, 7): two_roots, (m5, 7, 15): no_root, (m7, 7, 15): unreachable}
    rows, _, _ = date_rows(trade, index, [], None, tr, R, 0.0, curves, overrides)
    write(os.path.join(outdir, "compound_roots.csv"), rows)


# Command-line options each scenario is run with, here and in tests/independent.rs.
RUNS = {
    "ig_pool": ("ig_pool", ["--correlation", "0.3"]),
    "hy_pool": ("hy_pool", ["--rate", "2.5", "--correlation", "0.25"]),
    "zero_curve": ("zero_curve", ["--correlation", "0.3"]),
    "calendar_edges": ("calendar_edges", ["--recovery", "35", "--correlation", "0.35"]),
    "compound_roots": ("compound_roots", ["--correlation", "0.2"]),
    # the same pool priced at the ends of the correlation range
    "ig_pool_rho_low": ("ig_pool", ["--correlation", "0.0001"]),
    "ig_pool_rho_high": ("ig_pool", ["--correlation", "0.9999"]),
}


def run_fixtures(root):
    """Run independent.py on every scenario; write tests/fixtures/independent/<name>.json
    as {"metadata": {...}, "dates": [the script's output]}."""
    import json
    import platform
    import subprocess

    import numpy
    import scipy

    outdir = os.path.join(root, "tests", "fixtures", "independent")
    os.makedirs(outdir, exist_ok=True)
    only = [a for a in sys.argv[1:] if not a.startswith("--")]
    for name, (scenario, opts) in RUNS.items():
        if only and name not in only:
            continue
        cmd = ["python3", "tests/reference/independent.py", f"tests/fixtures/scenarios/{scenario}.csv"] + opts + ["--time"]
        res = subprocess.run(cmd, cwd=root, check=True, capture_output=True, text=True)
        doc = dict(
            metadata=dict(
                generator="tests/reference/independent.py (independent Python implementation of conventions.md)",
                command=" ".join(cmd[:-1]),
                python=platform.python_version(),
                numpy=numpy.__version__,
                scipy=scipy.__version__,
                wall_time=res.stderr.strip().splitlines(),
            ),
            dates=json.loads(res.stdout),
        )
        with open(os.path.join(outdir, f"{name}.json"), "w") as fh:
            json.dump(doc, fh, indent=1)
            fh.write("\n")
        print(f"{name}: " + "; ".join(res.stderr.strip().splitlines()))


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    root = os.path.normpath(os.path.join(here, "..", ".."))
    outdir = os.path.join(root, "tests", "fixtures", "scenarios")
    if "--fixtures-only" not in sys.argv:
        for job in (ig_pool, hy_pool, zero_curve, calendar_edges, compound_roots):
            job(outdir)
    run_fixtures(root)


if __name__ == "__main__":
    main()
