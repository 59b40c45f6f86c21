#!/usr/bin/env python3
"""Independent reference implementation of the skewbook pricing contract.

Written only from /work/shared/conventions.md (the contract), in plain
numpy/scipy, as a desk quant would: scipy.integrate.quad for the index legs and
for the large-pool expectations over the common factor, scipy.optimize.brentq
for every root. It is the outside reference the Rust code is tested against
(see tests/independent.rs) and the "straightforward script" skewbook's speed
is compared to (`--time`).

Usage:
    python3 tests/reference/independent.py SNAPSHOT.csv [--correlation RHO]
        [--recovery PCT] [--rate PCT] [--time] > out.json
    python3 tests/reference/independent.py --self-check

Units: file and command line as the contract says (bp, percent); inside
everything is a fraction; the JSON output gives hazards, probabilities and
correlations as fractions, quotes in the file's unit, `model_upfront_pct` in
percent, `model_spread_bp` in bp, `expected_loss_pct` in percent of tranche
notional, `protection` and `annuity` per unit of tranche notional.

Choices where the contract is silent (stated in the JSON metadata too):
- index `survival` / `default_probability` are at the quote's protection end
  (maturity + 1 day, the hazard knot); `annuity` is the risky annuity per unit
  notional (premium leg per unit spread, with accrued on default).
- tranche `expected_loss_pct` is EL at the protection end (maturity + 1 day).
- discount curve beyond the last zero pillar: the forward of the last pillar
  interval continues (for one pillar: its zero rate).
- base correlation of a tranche detaching at 100% is null (the [0,100%] base
  tranche does not depend on rho); a tranche whose base correlation has no
  root breaks the chain: it and every tranche above it at that maturity are
  null.
"""

import argparse
import csv
import datetime as dt
import json
import math
import sys
import time

import numpy as np
import scipy
from scipy import integrate, optimize, special

DAY = dt.timedelta(days=1)
RHO_LO, RHO_HI = 1e-4, 0.9999
COMPOUND_GRID = 201  # scan points in [RHO_LO, RHO_HI] for compound correlation
BASE_GRID = 41  # scan points for base correlation (unique when it exists)
QUAD_OPTS = dict(epsabs=1e-15, epsrel=1e-13, limit=200)


class InputError(Exception):
    pass


# --------------------------------------------------------------------------
# Dates and schedule
# --------------------------------------------------------------------------


def roll_following(d):
    """Weekend -> following Monday (no holiday calendar)."""
    while d.weekday() >= 5:
        d += DAY
    return d


def add_business_days(d, n):
    while n > 0:
        d += DAY
        if d.weekday() < 5:
            n -= 1
    return d


def roll_dates_between(after, before):
    """Unadjusted 20 Mar/Jun/Sep/Dec strictly after `after`, strictly before `before`."""
    out = []
    for year in range(after.year, before.year + 1):
        for month in (3, 6, 9, 12):
            d = dt.date(year, month, 20)
            if after < d < before:
                out.append(d)
    return out


class Schedule:
    """Coupon schedule of one instrument (index or tranche) of a trade date."""

    def __init__(self, trade, maturity):
        self.trade = trade
        self.maturity = maturity
        self.step_in = trade + DAY
        self.settlement = add_business_days(trade, 3)
        unadjusted = roll_dates_between(self.step_in, maturity) + [maturity]
        self.pay = [roll_following(d) for d in unadjusted]
        self.start, self.end = [], []
        prev = self.step_in
        for i, p in enumerate(self.pay):
            end = maturity + DAY if i == len(self.pay) - 1 else p
            self.start.append(prev)
            self.end.append(end)
            prev = end
        self.accrual = [(e - s).days / 360.0 for s, e in zip(self.start, self.end)]
        if any(a <= 0 for a in self.accrual):
            raise InputError(f"maturity {maturity}: a coupon period of zero or negative length")

    def t(self, d):
        """Curve time, Act/365F from the trade date."""
        return (d - self.trade).days / 365.0


# --------------------------------------------------------------------------
# Discount curve
# --------------------------------------------------------------------------


class DiscountCurve:
    """DF(t) = exp(-r(t) t); r(t) t linear between pillars, flat zero before the
    first pillar, flat forward (last interval's) after the last."""

    def __init__(self, pillars=None, flat_rate=0.0):
        # pillars: list of (t, r) sorted by t, t > 0
        self.pillars = pillars or []
        self.flat = flat_rate

    def rt(self, t):
        if not self.pillars:
            return self.flat * t
        ts = [p[0] for p in self.pillars]
        ys = [p[0] * p[1] for p in self.pillars]
        if t <= ts[0]:
            return self.pillars[0][1] * t
        for k in range(1, len(ts)):
            if t <= ts[k]:
                w = (t - ts[k - 1]) / (ts[k] - ts[k - 1])
                return ys[k - 1] + w * (ys[k] - ys[k - 1])
        if len(ts) >= 2:
            fwd = (ys[-1] - ys[-2]) / (ts[-1] - ts[-2])
        else:
            fwd = self.pillars[0][1]
        return ys[-1] + fwd * (t - ts[-1])

    def df(self, t):
        return math.exp(-self.rt(t))

    def breakpoints(self):
        return [p[0] for p in self.pillars]


# --------------------------------------------------------------------------
# Hazard curve
# --------------------------------------------------------------------------


class HazardCurve:
    """Piecewise-constant hazard: h[k] on (knot[k-1], knot[k]], flat after the last."""

    def __init__(self, knots, hazards):
        self.knots = list(knots)
        self.hazards = list(hazards)

    def hazard(self, t):
        for k, tk in enumerate(self.knots):
            if t <= tk:
                return self.hazards[k]
        return self.hazards[-1]

    def cumulative(self, t):
        total, prev = 0.0, 0.0
        for tk, h in zip(self.knots, self.hazards):
            if t <= tk:
                return total + h * (t - prev)
            total += h * (tk - prev)
            prev = tk
        return total + self.hazards[-1] * (t - prev)

    def survival(self, t):
        return math.exp(-self.cumulative(t))

    def pd(self, t):
        return -math.expm1(-self.cumulative(t))


# --------------------------------------------------------------------------
# Index legs (quad over time, split at every hazard, discount and coupon date)
# --------------------------------------------------------------------------


def _pieces(a, b, points):
    cuts = sorted({a, b} | {p for p in points if a < p < b})
    return list(zip(cuts[:-1], cuts[1:]))


def index_legs(sched, disc, haz, recovery):
    """Return (protection, risky annuity) per unit notional."""
    t = sched.t
    points = list(haz.knots) + disc.breakpoints()
    points += [t(d) for d in sched.start] + [t(d) for d in sched.end]

    def density(x):  # DF(x) dPD(x)/dx
        return disc.df(x) * haz.hazard(x) * haz.survival(x)

    ts, te = t(sched.step_in), t(sched.maturity + DAY)
    prot = 0.0
    for a, b in _pieces(ts, te, points):
        # hazard(x) is left-continuous at knots; evaluate inside the piece
        prot += integrate.quad(density, a, b, **QUAD_OPTS)[0]
    prot *= 1.0 - recovery

    annuity = 0.0
    for s, e, p, acc in zip(sched.start, sched.end, sched.pay, sched.accrual):
        annuity += acc * disc.df(t(p)) * haz.survival(t(e))
        a0 = t(s)
        for a, b in _pieces(t(s), t(e), points):
            annuity += integrate.quad(
                lambda x: (x - a0) * 365.0 / 360.0 * density(x), a, b, **QUAD_OPTS
            )[0]
    return prot, annuity


def index_quote_value(kind, quote, coupon, prot, ann, df_settle):
    """Repriced quote in the file unit given the legs."""
    if kind == "spread_bp":
        return prot / ann * 1e4
    return (prot - coupon * ann) / df_settle * 100.0


def bootstrap(trade, index_rows, disc, recovery):
    """index_rows sorted by maturity: dicts with maturity, kind, quote (file unit), coupon (fraction)."""
    knots, hazards, out = [], [], []
    for row in index_rows:
        sched = Schedule(trade, row["maturity"])
        knot = sched.t(row["maturity"] + DAY)
        df_settle = disc.df(sched.t(sched.settlement))

        def residual(h):
            curve = HazardCurve(knots + [knot], hazards + [h])
            prot, ann = index_legs(sched, disc, curve, recovery)
            return index_quote_value(row["kind"], row["quote"], row["coupon"], prot, ann, df_settle) - row["quote"]

        lo, hi = 0.0, 10.0
        if residual(lo) > 0 or residual(hi) < 0:
            raise InputError(
                f"{trade} index {row['maturity']}: no non-negative hazard in [0, 10] reprices the quote {row['quote']}"
            )
        h = optimize.brentq(residual, lo, hi, xtol=1e-15, rtol=4 * np.finfo(float).eps, maxiter=200)
        knots.append(knot)
        hazards.append(h)
        curve = HazardCurve(knots, hazards)
        prot, ann = index_legs(sched, disc, curve, recovery)
        repriced = index_quote_value(row["kind"], row["quote"], row["coupon"], prot, ann, df_settle)
        assert abs(repriced - row["quote"]) < 1e-10, (trade, row, repriced)
        out.append(dict(row=row, hazard=h, knot=knot, annuity=ann, protection=prot, repriced=repriced))
    curve = HazardCurve(knots, hazards)
    return curve, out


# --------------------------------------------------------------------------
# Large homogeneous pool (Vasicek one-factor Gaussian), quad over the factor
# --------------------------------------------------------------------------


def phi(z):
    return math.exp(-0.5 * z * z) / math.sqrt(2.0 * math.pi)


def expected_min_p(pd, rho, k):
    """E[min(p(Z), k)], p(Z) = N((G(pd) - sqrt(rho) Z) / sqrt(1 - rho)).

    p is decreasing in Z; p >= k for Z <= z_k = (c - sqrt(1-rho) G(k)) / sqrt(rho), so
    E = k N(z_k) + integral_{z_k}^inf p(z) phi(z) dz (quad on the smooth side of the kink).
    """
    if pd <= 0.0 or k <= 0.0:
        return 0.0
    if k >= 1.0:
        return pd
    c = special.ndtri(pd)
    sr, s1 = math.sqrt(rho), math.sqrt(1.0 - rho)
    zk = (c - s1 * special.ndtri(k)) / sr
    lo = max(zk, -14.0)
    hi = max(lo, 0.0) + 14.0
    mid = c / sr  # where p = 1/2: the steep part when rho -> 1
    pts = [mid] if lo < mid < hi else None
    val = integrate.quad(lambda z: special.ndtr((c - sr * z) / s1) * phi(z), lo, hi, points=pts, **QUAD_OPTS)[0]
    return k * special.ndtr(zk) + val


def tranche_loss_and_notional(pd, rho, attach, detach, recovery):
    """Expected tranche loss and expected outstanding notional (fractions of width)."""
    w = detach - attach
    lgd = 1.0 - recovery

    def e_min_loss(bound):  # E[min(L, bound)], L = (1-R) p
        return lgd * expected_min_p(pd, rho, bound / lgd) if lgd > 0 else 0.0

    def e_min_rec(bound):  # E[min(Rec, bound)], Rec = R p
        return recovery * expected_min_p(pd, rho, bound / recovery) if recovery > 0 else 0.0

    loss = (e_min_loss(detach) - e_min_loss(attach)) / w
    amort = (e_min_rec(1.0 - attach) - e_min_rec(1.0 - detach)) / w
    return loss, 1.0 - loss - amort


def tranche_legs(sched, disc, haz, recovery, rho, attach, detach):
    """(protection, annuity, EL at protection end) per unit tranche notional."""
    t = sched.t
    nodes = [sched.start[0]] + sched.end
    el, notional = {}, {}
    for d in nodes:
        el[d], notional[d] = tranche_loss_and_notional(haz.pd(t(d)), rho, attach, detach, recovery)
    prot, ann = 0.0, 0.0
    for s, e, p, acc in zip(sched.start, sched.end, sched.pay, sched.accrual):
        dfp = disc.df(t(p))
        prot += dfp * (el[e] - el[s])
        ann += acc * dfp * 0.5 * (notional[s] + notional[e])
    return prot, ann, el[sched.end[-1]]


# --------------------------------------------------------------------------
# Roots
# --------------------------------------------------------------------------


def all_roots(f, lo=RHO_LO, hi=RHO_HI, n=COMPOUND_GRID):
    """Every root of f in [lo, hi]: scan a grid, brentq in each sign change, and
    look between grid points for near-tangent pairs of roots (a local extremum
    of f on the wrong side of zero)."""
    xs = list(np.linspace(lo, hi, n))
    fs = [f(x) for x in xs]
    brackets = []
    for j in range(n - 1):
        if fs[j] == 0.0:
            brackets.append((xs[j], xs[j]))
        elif fs[j] * fs[j + 1] < 0:
            brackets.append((xs[j], xs[j + 1]))
    if fs[-1] == 0.0:
        brackets.append((xs[-1], xs[-1]))
    # near-tangent double roots hidden between grid points
    for j in range(1, n - 1):
        same_side = fs[j - 1] * fs[j] > 0 and fs[j] * fs[j + 1] > 0
        if not same_side:
            continue
        sign = 1.0 if fs[j] > 0 else -1.0
        if sign * fs[j] < sign * fs[j - 1] and sign * fs[j] < sign * fs[j + 1]:
            res = optimize.minimize_scalar(
                lambda x: sign * f(x), bounds=(xs[j - 1], xs[j + 1]), method="bounded", options=dict(xatol=1e-12)
            )
            xm, fm = res.x, f(res.x)
            if abs(fm) < 1e-14:
                brackets.append((xm, xm))  # tangent: one double root
            elif fm * fs[j] < 0:
                brackets.append((xs[j - 1], xm))
                brackets.append((xm, xs[j + 1]))
    roots = []
    for a, b in brackets:
        if a == b:
            roots.append(a)
        else:
            roots.append(optimize.brentq(f, a, b, xtol=1e-14, rtol=4 * np.finfo(float).eps, maxiter=200))
    return sorted(roots)


# --------------------------------------------------------------------------
# Snapshot reading
# --------------------------------------------------------------------------

COLUMNS = ["date", "instrument", "maturity", "attach_pct", "detach_pct", "quote_kind", "quote", "coupon_bp", "recovery_pct"]


def read_snapshot(path):
    dates = {}
    with open(path, newline="") as fh:
        reader = csv.reader(fh)
        header = [h.strip() for h in next(reader)]
        for need in COLUMNS[:7]:
            if need not in header:
                raise InputError(f"{path}:1: missing column {need!r}")
        col = {h: i for i, h in enumerate(header)}
        for lineno, rec in enumerate(reader, start=2):
            if not any(x.strip() for x in rec):
                continue

            def get(name):
                i = col.get(name)
                return rec[i].strip() if i is not None and i < len(rec) else ""

            def num(name, required=True):
                s = get(name)
                if s == "":
                    if required:
                        raise InputError(f"{path}:{lineno}:{col[name] + 1}: column {name!r}: expected a number, found nothing")
                    return None
                try:
                    v = float(s)
                except ValueError:
                    raise InputError(f"{path}:{lineno}:{col[name] + 1}: column {name!r}: expected a number, found {s!r}")
                if not math.isfinite(v):
                    raise InputError(f"{path}:{lineno}:{col[name] + 1}: column {name!r}: expected a finite number, found {s!r}")
                return v

            def date(name):
                s = get(name)
                try:
                    return dt.date.fromisoformat(s)
                except ValueError:
                    raise InputError(f"{path}:{lineno}:{col[name] + 1}: column {name!r}: expected an ISO date, found {s!r}")

            d = date("date")
            entry = dates.setdefault(d, dict(index=[], tranches=[], zeros=[], recovery=None))
            inst = get("instrument")
            kind = get("quote_kind")
            mat = date("maturity")
            q = num("quote")
            if inst == "zero":
                entry["zeros"].append((mat, q / 100.0))
                continue
            if kind not in ("spread_bp", "upfront_pct"):
                raise InputError(f"{path}:{lineno}:{col['quote_kind'] + 1}: column 'quote_kind': expected spread_bp or upfront_pct, found {kind!r}")
            coupon = num("coupon_bp", required=(kind == "upfront_pct"))
            coupon = coupon / 1e4 if (coupon is not None and kind == "upfront_pct") else 0.0
            row = dict(maturity=mat, kind=kind, quote=q, coupon=coupon, line=lineno)
            if inst == "index":
                rec_pct = num("recovery_pct", required=False) if "recovery_pct" in col else None
                if rec_pct is not None:
                    if entry["recovery"] is not None and entry["recovery"] != rec_pct / 100.0:
                        raise InputError(f"{path}:{lineno}: index rows of {d} disagree on recovery")
                    entry["recovery"] = rec_pct / 100.0
                entry["index"].append(row)
            elif inst == "tranche":
                row["attach_pct"] = num("attach_pct")
                row["detach_pct"] = num("detach_pct")
                row["attach"] = row["attach_pct"] / 100.0
                row["detach"] = row["detach_pct"] / 100.0
                entry["tranches"].append(row)
            else:
                raise InputError(f"{path}:{lineno}:{col['instrument'] + 1}: column 'instrument': expected index, tranche or zero, found {inst!r}")
    for d, e in dates.items():
        e["index"].sort(key=lambda r: r["maturity"])
        e["tranches"].sort(key=lambda r: (r["maturity"], r["attach"], r["detach"]))
        e["zeros"].sort()
    return dict(sorted(dates.items()))


# --------------------------------------------------------------------------
# The job per date
# --------------------------------------------------------------------------


def tranche_value(sched, disc, haz, recovery, rho, row, df_settle):
    """Value to the protection buyer per unit tranche notional at the row's own quote."""
    prot, ann, _ = tranche_legs(sched, disc, haz, recovery, rho, row["attach"], row["detach"])
    if row["kind"] == "spread_bp":
        return prot - row["quote"] / 1e4 * ann
    return prot - row["coupon"] * ann - row["quote"] / 100.0 * df_settle


def running_and_upfront(row):
    if row["kind"] == "spread_bp":
        return row["quote"] / 1e4, 0.0
    return row["coupon"], row["quote"] / 100.0


def base_value(sched, disc, haz, recovery, rho, detach, c, u, df_settle):
    """[0, detach] base tranche value in pool-notional units at coupon c and upfront u."""
    if detach <= 0.0:
        return 0.0
    prot, ann, _ = tranche_legs(sched, disc, haz, recovery, rho, 0.0, detach)
    return detach * (prot - c * ann - u * df_settle)


def base_correlations(trade, disc, haz, recovery, tranches):
    """Bottom-up base correlation per maturity; dict keyed by row id -> value or None."""
    out = {}
    by_mat = {}
    for r in tranches:
        by_mat.setdefault(r["maturity"], []).append(r)
    for mat, rows in by_mat.items():
        rows = sorted(rows, key=lambda r: r["attach"])
        sched = Schedule(trade, mat)
        df_settle = disc.df(sched.t(sched.settlement))
        rho_below = None  # base correlation at the current attachment
        broken = False
        next_attach = 0.0
        for r in rows:
            if broken or abs(r["attach"] - next_attach) > 1e-12 or r["detach"] >= 1.0 - 1e-12:
                # not contiguous from 0, [.,100%] (no rho dependence), or chain already broken
                out[id(r)] = None
                broken = True
                continue
            c, u = running_and_upfront(r)
            lower = 0.0 if r["attach"] <= 0.0 else base_value(sched, disc, haz, recovery, rho_below, r["attach"], c, u, df_settle)

            def g(rho, r=r, c=c, u=u, lower=lower):
                return base_value(sched, disc, haz, recovery, rho, r["detach"], c, u, df_settle) - lower

            roots = all_roots(g, n=BASE_GRID)
            if len(roots) != 1:
                if len(roots) > 1:
                    print(f"warning: {trade} {mat} [{r['attach']},{r['detach']}]: {len(roots)} base roots {roots}", file=sys.stderr)
                out[id(r)] = None
                broken = True
                continue
            out[id(r)] = roots[0]
            rho_below = roots[0]
            next_attach = r["detach"]
    return out


def build_discount(trade, zeros, flat_rate):
    pillars = []
    for d, r in zeros:
        t = (d - trade).days / 365.0
        if t <= 0:
            raise InputError(f"{trade}: zero pillar {d} not after the trade date")
        pillars.append((t, r))
    return DiscountCurve(pillars, flat_rate)


def run_date(trade, entry, args, timings):
    recovery = args.recovery / 100.0 if args.recovery is not None else (entry["recovery"] if entry["recovery"] is not None else 0.40)
    disc = build_discount(trade, entry["zeros"], args.rate / 100.0)
    t0, c0 = time.perf_counter(), time.process_time()
    haz, boot = bootstrap(trade, entry["index"], disc, recovery)
    compound = {}
    for r in entry["tranches"]:
        sched = Schedule(trade, r["maturity"])
        df_settle = disc.df(sched.t(sched.settlement))
        if r["attach"] <= 1e-12 and r["detach"] >= 1 - 1e-12:
            compound[id(r)] = []  # [0,100%] does not depend on rho
            continue
        compound[id(r)] = all_roots(lambda rho: tranche_value(sched, disc, haz, recovery, rho, r, df_settle))
    base = base_correlations(trade, disc, haz, recovery, entry["tranches"])
    timings.append((trade, time.perf_counter() - t0, time.process_time() - c0, len(entry["index"]), len(entry["tranches"])))

    index_out = []
    for b in boot:
        row = b["row"]
        index_out.append(
            dict(
                maturity=row["maturity"].isoformat(),
                quote_kind=row["kind"],
                quote=row["quote"],
                coupon_bp=row["coupon"] * 1e4 if row["kind"] == "upfront_pct" else None,
                hazard=b["hazard"],
                survival=haz.survival(b["knot"]),
                default_probability=haz.pd(b["knot"]),
                annuity=b["annuity"],
                protection=b["protection"],
                repriced_quote=b["repriced"],
            )
        )
    tranche_out = []
    rho = args.correlation
    for r in entry["tranches"]:
        sched = Schedule(trade, r["maturity"])
        df_settle = disc.df(sched.t(sched.settlement))
        prot, ann, el_end = tranche_legs(sched, disc, haz, recovery, rho, r["attach"], r["detach"])
        coupon = r["coupon"] if r["kind"] == "upfront_pct" else 0.0
        tranche_out.append(
            dict(
                maturity=r["maturity"].isoformat(),
                attach_pct=r["attach_pct"],
                detach_pct=r["detach_pct"],
                quote_kind=r["kind"],
                quote=r["quote"],
                coupon_bp=r["coupon"] * 1e4 if r["kind"] == "upfront_pct" else None,
                compound_correlation=compound[id(r)],
                base_correlation=base[id(r)],
                model_upfront_pct=(prot - coupon * ann) / df_settle * 100.0,
                model_spread_bp=prot / ann * 1e4,
                expected_loss_pct=el_end * 100.0,
                protection=prot,
                annuity=ann,
            )
        )
    return dict(date=trade.isoformat(), recovery=recovery, correlation=rho, index=index_out, tranches=tranche_out)


# --------------------------------------------------------------------------
# Self-checks
# --------------------------------------------------------------------------


def self_check():
    ok = True

    def check(name, got, want, tol):
        nonlocal ok
        good = abs(got - want) <= tol
        ok &= good
        print(f"{'ok  ' if good else 'FAIL'} {name}: got {got:.15g} want {want:.15g} (tol {tol:g})")

    # 1. LHP expected tranche loss, PD 5%, R 40% [reference-values.md, hp table]
    table = {
        0.1: [0.738319667699398, 0.171575130252728, 0.012174480478085, 0.000015819200779],
        0.3: [0.541057502482776, 0.195846527818642, 0.058325058675267, 0.001492246022058],
        0.6: [0.335055997825930, 0.163656450148538, 0.085598367065615, 0.007710814934155],
    }
    bounds = [(0, 0.03), (0.03, 0.07), (0.07, 0.15), (0.15, 1.0)]
    for rho, vals in table.items():
        total = 0.0
        for (a, d), want in zip(bounds, vals):
            loss, notional = tranche_loss_and_notional(0.05, rho, a, d, 0.4)
            check(f"LHP EL [{a},{d}] rho {rho}", loss, want, 1e-12)
            total += (d - a) * loss
        # 2. tranche losses add up to the pool's (1-R) PD
        check(f"sum of tranche losses rho {rho}", total, 0.6 * 0.05, 1e-13)
    loss, notional = tranche_loss_and_notional(0.05, 0.3, 0.15, 1.0, 0.4)
    check("[15,100%] amortisation", 1 - notional - loss, 0.02 / 0.85, 1e-13)

    # 3. closed form with scipy's bivariate normal vs quad: E[min(p,k)] = Phi2(c,-A;-sqrt rho) + k N(A)
    from scipy.stats import multivariate_normal

    for pd, rho, k in [(0.05, 0.3, 0.05), (0.02, 0.1, 0.1), (0.05, 0.6, 0.25)]:
        c = special.ndtri(pd)
        A = (c - math.sqrt(1 - rho) * special.ndtri(k)) / math.sqrt(rho)
        r = -math.sqrt(rho)
        phi2 = multivariate_normal(mean=[0, 0], cov=[[1, r], [r, 1]]).cdf([c, -A])
        check(f"closed form vs quad pd {pd} rho {rho} k {k}", expected_min_p(pd, rho, k), phi2 + k * special.ndtr(A), 1e-8)

    # 3b. the ends of the correlation range against 40-digit mpmath quadrature
    #     (split at the kink and at fixed offsets above it)
    import mpmath as mp

    mp.mp.dps = 40

    def e_min_mp(pd, rho, k):
        pd, rho, k = mp.mpf(pd), mp.mpf(rho), mp.mpf(k)
        g = lambda x: mp.sqrt(2) * mp.erfinv(2 * x - 1)
        c, sr, s1 = g(pd), mp.sqrt(rho), mp.sqrt(1 - rho)
        zk = (c - s1 * g(k)) / sr
        f = lambda z: mp.ncdf((c - sr * z) / s1) * mp.npdf(z)
        return k * mp.ncdf(zk) + mp.quad(f, [zk + x for x in (0, 1, 2, 4, 8, 16, 40)])

    for pd, rho, k in [(0.0493, 1e-4, 0.05), (0.0493, 1e-4, 0.049), (0.08, 0.9991, 0.25), (0.0493, 0.9999, 0.05), (3e-5, 0.9999, 0.05)]:
        check(f"E[min(p,k)] vs mpmath pd {pd} rho {rho} k {k}", expected_min_p(pd, rho, k), float(e_min_mp(pd, rho, k)), 1e-16)

    # 4. two compound roots of the [3,7%] one-horizon EL [reference-values.md]
    f = lambda rho: tranche_loss_and_notional(0.05, rho, 0.03, 0.07, 0.4)[0] - 0.130954
    roots = all_roots(f)
    check("[3,7%] EL target 0.130954: number of roots", len(roots), 2, 0)
    check("[3,7%] first root", roots[0], 0.047066, 5e-6)
    check("[3,7%] second root", roots[1], 0.782690, 5e-6)
    f = lambda rho: tranche_loss_and_notional(0.05, rho, 0.07, 0.15, 0.4)[0] - 0.072946
    roots = all_roots(f)
    check("[7,15%] EL target 0.072946: number of roots", len(roots), 2, 0)
    check("[7,15%] first root", roots[0], 0.406126, 5e-6)
    check("[7,15%] second root", roots[1], 0.930131, 5e-6)
    f = lambda rho: tranche_loss_and_notional(0.05, rho, 0.03, 0.07, 0.4)[0] - 0.2
    check("[3,7%] EL target above the peak: no root", len(all_roots(f)), 0, 0)

    # near-tangent pair of roots inside one grid cell (step 0.005): found by the extremum check
    roots = all_roots(lambda x: (x - 0.5012) ** 2 - 1e-8)
    check("close pair: number of roots", len(roots), 2, 0)
    check("close pair: first", roots[0], 0.5011, 1e-12)
    check("close pair: second", roots[1], 0.5013, 1e-12)

    # 5. credit triangle: flat hazard, rate 0 -> par spread = h (1-R) 360/365 exactly
    #    (premium leg with accrued on default = (365/360) * integral of S dt when DF = 1)
    trade = dt.date(2026, 6, 19)
    disc = DiscountCurve([], 0.0)
    rows = [dict(maturity=dt.date(2031, 6, 20), kind="spread_bp", quote=100.0, coupon=0.0)]
    haz, boot = bootstrap(trade, rows, disc, 0.4)
    check("credit triangle, rate 0", boot[0]["hazard"], 0.01 / 0.6 * 365 / 360, 1e-13)
    # with a 3% rate it holds only approximately: coupons paid quarterly in arrears
    # are discounted about r * 3 months / 2 = 0.4% more than continuous premium
    disc = DiscountCurve([], 0.03)
    haz, boot = bootstrap(trade, rows, disc, 0.4)
    check("credit triangle, rate 3% (approx., 1%)", boot[0]["hazard"], 0.01 / 0.6 * 365 / 360, 1.7e-4)
    # index quote reprices (upfront quote, 3 pillars)
    rows = [
        dict(maturity=dt.date(2029, 6, 20), kind="upfront_pct", quote=-1.5, coupon=0.01),
        dict(maturity=dt.date(2031, 6, 20), kind="upfront_pct", quote=0.5, coupon=0.01),
        dict(maturity=dt.date(2033, 6, 20), kind="spread_bp", quote=130.0, coupon=0.0),
    ]
    haz, boot = bootstrap(trade, rows, disc, 0.4)
    for b in boot:
        check(f"index {b['row']['maturity']} reprices", b["repriced"], b["row"]["quote"], 1e-10)
    # earlier pillars still reprice once later ones are solved (knots at protection end)
    for b in boot:
        sched = Schedule(trade, b["row"]["maturity"])
        prot, ann = index_legs(sched, disc, haz, 0.4)
        q = index_quote_value(b["row"]["kind"], b["row"]["quote"], b["row"]["coupon"], prot, ann, disc.df(sched.t(sched.settlement)))
        check(f"index {b['row']['maturity']} reprices on the full curve", q, b["row"]["quote"], 1e-10)
    # 6. schedule facts (common practice): T Fri 2026-06-19 -> settle Wed 06-24
    s = Schedule(dt.date(2026, 6, 19), dt.date(2031, 12, 20))
    check("settlement T+3 business days", (s.settlement - dt.date(2026, 6, 24)).days, 0, 0)
    check("last pay date Monday", (s.pay[-1] - dt.date(2031, 12, 22)).days, 0, 0)
    check("last period end maturity+1", (s.end[-1] - dt.date(2031, 12, 21)).days, 0, 0)
    check("first pay 2026-09-21 (Sep 20 is a Sunday)", (s.pay[0] - dt.date(2026, 9, 21)).days, 0, 0)
    print("all self-checks passed" if ok else "SOME SELF-CHECKS FAILED")
    return ok


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("snapshot", nargs="?")
    ap.add_argument("--correlation", type=float, default=0.3)
    ap.add_argument("--recovery", type=float, default=None, metavar="PCT")
    ap.add_argument("--rate", type=float, default=0.0, metavar="PCT")
    ap.add_argument("--time", action="store_true", help="print the wall time per date to stderr")
    ap.add_argument("--self-check", action="store_true")
    args = ap.parse_args(argv)
    if args.self_check:
        return 0 if self_check() else 1
    if not args.snapshot:
        ap.error("a snapshot file is required")
    try:
        dates = read_snapshot(args.snapshot)
        timings = []
        out = [run_date(d, e, args, timings) for d, e in dates.items()]
    except InputError as e:
        print(f"error: {e}", file=sys.stderr)
        return 2
    json.dump(out, sys.stdout, indent=1)
    sys.stdout.write("\n")
    if args.time:
        for d, secs, cpu, ni, nt in timings:
            print(f"{d}: wall {secs:.3f} s, cpu {cpu:.3f} s (bootstrap {ni} index quotes + compound + base for {nt} tranches)", file=sys.stderr)
    return 0


if __name__ == "__main__":
    sys.exit(main())
