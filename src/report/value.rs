//! `skewbook value`: a book of trades priced off one date's skew, with risk.
//!
//! # JSON schema
//! The contract's "Output of value and surface (JSON)", `value`: one object
//! for the trade date valued:
//! ```text
//! { "date", "interp", "mapping", "names", "recovery", "note",
//!   "trades": [ { "trade_id", "pool", "maturity", "side", "attach_pct", "detach_pct",
//!       "coupon_bp", "notional", "base_correlation_attach", "base_correlation_detach",
//!       "index_equivalent_attach_pct", "index_equivalent_detach_pct", "par_spread_bp",
//!       "upfront_pct", "expected_loss", "pv", "spread_01", "correlation_01", "recovery_01",
//!       "jump_to_default", "index_01", "delta", "flags",
//!       "buckets": (with --buckets) {"spread_01": [{"pillar_maturity", "value"}],
//!                                    "correlation_01": [{"maturity", "detach_pct", "value"}]} } ],
//!   "book": { "trades", "priced", "pv", "spread_01", "correlation_01", "recovery_01",
//!             "jump_to_default" },
//!   "bucket_note": (with --buckets) a sentence,
//!   "surface_notes": (with --interp expected-loss, when some maturity's knots
//!                     are not admissible) [ sentences naming the knots and
//!                     the values they were moved to ],
//!   "model": (with --pool-model names) "names_N": the skew solved and every trade priced
//!            in a pool of N = --names names; absent for the large pool (the default) }
//! ```
//! Money in the trades file's currency with the holder's sign; correlations
//! and losses as fractions; quotes in bp and percent as the field names say.
//! A trade not priced keeps its row with every figure null and only the
//! reason in `flags`.

use super::pools_for_all_dates;
use crate::book::risk::Risk;
use crate::book::{value_book_with, BookOptions, Market, Priced, TradeTerms};
use crate::curve::{MarketOptions, Pool};
use crate::error::{Error, ErrorKind, Result};
use crate::flags::Flag;
use crate::input::pools::BespokePool;
use crate::input::trades::Trade;
use crate::loss::PoolModel;
use crate::market::Snapshot;
use crate::math::interp::Interp;
use crate::output::{csv_num, fixed, fixed_or, pct, wrap, Report, Table};
use crate::tranche::Tranche;
use chrono::NaiveDate;
use serde::Serialize;

/// One trade of the book as the report needs it.
#[derive(Debug, Clone, PartialEq)]
pub struct BookTrade {
    /// The trade's id.
    pub trade_id: String,
    /// `buy` or `sell`.
    pub side: &'static str,
    /// The contract.
    pub terms: TradeTerms,
}

impl BookTrade {
    /// A trade as read from a trades file.
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] for bounds the library cannot price (the
    /// reader's checks make this unexpected).
    pub fn from_trade(t: &Trade) -> Result<BookTrade> {
        Ok(BookTrade {
            trade_id: t.trade_id.clone(),
            side: t.side.name(),
            terms: TradeTerms {
                pool: t.pool.clone(),
                maturity: t.maturity,
                tranche: Tranche::new(t.attach, t.detach)?,
                coupon: t.coupon,
                notional: t.notional,
                sign: t.side.sign(),
            },
        })
    }
}

/// What `value` prices: the trades and the bespoke pools they reference.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct BookInputs {
    /// Trades in file order.
    pub trades: Vec<BookTrade>,
    /// Bespoke pools.
    pub pools: Vec<BespokePool>,
    /// The pools file's path, for messages.
    pub pools_path: String,
}

/// A bucket of spread risk.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct SpreadBucket {
    /// The pillar bumped.
    pub pillar_maturity: String,
    /// pv change, currency.
    pub value: Option<f64>,
}

/// A bucket of correlation risk.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct CorrelationBucket {
    /// The knot's maturity.
    pub maturity: String,
    /// The knot's detachment, percent.
    pub detach_pct: f64,
    /// pv change, currency.
    pub value: Option<f64>,
}

/// Bucketed risk of a trade.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct BucketsOut {
    /// One pillar at a time.
    pub spread_01: Vec<SpreadBucket>,
    /// One knot at a time.
    pub correlation_01: Vec<CorrelationBucket>,
}

/// One trade's row.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct TradeRow {
    /// Trade id.
    pub trade_id: String,
    /// Pool name.
    pub pool: String,
    /// Maturity.
    pub maturity: String,
    /// `buy` or `sell`.
    pub side: &'static str,
    /// Attachment, percent.
    pub attach_pct: f64,
    /// Detachment, percent.
    pub detach_pct: f64,
    /// Running coupon, bp.
    pub coupon_bp: f64,
    /// Notional, currency.
    pub notional: f64,
    /// rho of base [0, A]; null when A = 0.
    pub base_correlation_attach: Option<f64>,
    /// rho of base [0, D]; null when D = 100%.
    pub base_correlation_detach: Option<f64>,
    /// K_I of A, percent.
    pub index_equivalent_attach_pct: Option<f64>,
    /// K_I of D, percent.
    pub index_equivalent_detach_pct: Option<f64>,
    /// P / Ann, bp.
    pub par_spread_bp: Option<f64>,
    /// (P - c Ann) / DF(settlement), percent.
    pub upfront_pct: Option<f64>,
    /// Expected tranche loss at the protection end, fraction of width.
    pub expected_loss: Option<f64>,
    /// s N (P - c Ann), currency.
    pub pv: Option<f64>,
    /// Risk figures (all null for a trade not priced).
    #[serde(flatten)]
    pub risk: Risk,
    /// Flags.
    pub flags: Vec<Flag>,
    /// Bucketed risk (with `--buckets`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub buckets: Option<BucketsOut>,
}

/// Book totals over the priced trades.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct BookTotal {
    /// Trades in the file.
    pub trades: usize,
    /// Trades priced.
    pub priced: usize,
    /// Sum of pv.
    pub pv: f64,
    /// Sum of spread_01 over the trades that have it.
    pub spread_01: f64,
    /// Sum of correlation_01.
    pub correlation_01: f64,
    /// Sum of recovery_01.
    pub recovery_01: f64,
    /// Sum of jump_to_default.
    pub jump_to_default: f64,
}

/// The `value` report.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ValueReport {
    /// Trade date valued.
    pub date: String,
    /// `linear`, `pchip` or `expected-loss`.
    pub interp: &'static str,
    /// Mapping method.
    pub mapping: &'static str,
    /// n of jump-to-default.
    pub names: usize,
    /// The index pool's recovery, fraction.
    pub recovery: f64,
    /// Mapping caution, null under `none`.
    pub note: Option<&'static str>,
    /// Trades in file order.
    pub trades: Vec<TradeRow>,
    /// Book totals.
    pub book: BookTotal,
    /// What bucketed figures add up to (with `--buckets`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bucket_note: Option<&'static str>,
    /// `expected-loss`: maturities whose knots were moved to the nearest
    /// admissible values, and why (absent when there are none).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub surface_notes: Vec<String>,
    /// `names_N` when the trades are priced in a pool of N names
    /// (`--pool-model names`); absent for the large pool.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub model: Option<String>,
}

impl ValueReport {
    /// Whether some trade is not priced (exit status 1).
    pub fn any_unpriced(&self) -> bool {
        self.book.priced < self.book.trades
    }
}

/// The sentence that goes with bucketed risk.
pub const BUCKET_NOTE: &str = "Buckets bump one pillar or one knot at a time; they add up to the \
     parallel spread_01 and correlation_01 only to first order.";

/// Values `trades` off the skew of one date of `snapshot` (its last date
/// unless `only` names one), bespoke pools bootstrapped from `pools` with
/// that date's discount curve.
///
/// # Errors
/// [`ErrorKind::Usage`] for a date not in the file; curve errors of the
/// date or of a bespoke pool; [`ErrorKind::InvalidInput`] for a trade that
/// matures on or before the trade date.
pub fn build(
    snapshot: &Snapshot,
    opts: &MarketOptions,
    book_in: &BookInputs,
    interp: Interp,
    only: Option<NaiveDate>,
    book: &BookOptions,
) -> Result<ValueReport> {
    build_with(
        snapshot,
        opts,
        book_in,
        interp,
        only,
        book,
        PoolModel::LargePool,
    )
}

/// [`build`] in a pool model: the skew solved and the trades priced in
/// the large pool, or in a pool of n names (jump-to-default then leaves
/// n - 1 names; bespoke mapping stays a large-pool convention).
///
/// # Errors
/// As [`build`].
pub fn build_with(
    snapshot: &Snapshot,
    opts: &MarketOptions,
    book_in: &BookInputs,
    interp: Interp,
    only: Option<NaiveDate>,
    book: &BookOptions,
    model: PoolModel,
) -> Result<ValueReport> {
    let (trades, pools, pools_path) =
        (&book_in.trades, &book_in.pools, book_in.pools_path.as_str());
    let date = match only {
        Some(d) => d,
        None => snapshot.dates.last().map(|d| d.date).ok_or_else(|| {
            Error::msg(
                ErrorKind::InvalidInput,
                format!("{}: no trade date", snapshot.path),
            )
        })?,
    };
    let one = super::select_date(snapshot, Some(date))?;
    let Some((md, index)) = pools_for_all_dates(&one, opts)?.into_iter().next() else {
        return Err(Error::msg(ErrorKind::InvalidInput, "no trade date"));
    };
    let (surface, index) = super::surface::surface_of_date_with(&md, index, interp, model)?;
    let bespoke = pools
        .iter()
        .map(|p| {
            Pool::from_quotes(
                date,
                p.quotes.clone(),
                p.recovery,
                index.discount.clone(),
                pools_path,
            )
            .map(|pool| (p.name.clone(), pool))
        })
        .collect::<Result<Vec<_>>>()?;
    let surface_notes = repair_notes(&surface);
    let market = Market {
        index,
        surface,
        bespoke,
    };
    let terms: Vec<TradeTerms> = trades.iter().map(|t| t.terms.clone()).collect();
    let results = value_book_with(&terms, &market, book, model)?;
    let mut rows = Vec::with_capacity(trades.len());
    let mut total = BookTotal {
        trades: trades.len(),
        priced: 0,
        pv: 0.0,
        spread_01: 0.0,
        correlation_01: 0.0,
        recovery_01: 0.0,
        jump_to_default: 0.0,
    };
    for (t, r) in trades.iter().zip(&results) {
        let terms = &t.terms;
        let mut row = TradeRow {
            trade_id: t.trade_id.clone(),
            pool: terms.pool.clone(),
            maturity: terms.maturity.to_string(),
            side: t.side,
            attach_pct: pct(terms.tranche.attach()),
            detach_pct: pct(terms.tranche.detach()),
            coupon_bp: (terms.coupon * 1e4 * 1e10).round() / 1e10,
            notional: terms.notional,
            base_correlation_attach: None,
            base_correlation_detach: None,
            index_equivalent_attach_pct: None,
            index_equivalent_detach_pct: None,
            par_spread_bp: None,
            upfront_pct: None,
            expected_loss: None,
            pv: None,
            risk: Risk::default(),
            flags: Vec::new(),
            buckets: None,
        };
        match &r.priced {
            Priced::NotPriced(flag) => row.flags.push(*flag),
            Priced::Valued(v) => {
                total.priced += 1;
                total.pv += v.pv;
                row.base_correlation_attach = v.rho_attach;
                row.base_correlation_detach = v.rho_detach;
                row.index_equivalent_attach_pct = Some(pct(v.index_equivalent_attach));
                row.index_equivalent_detach_pct = Some(pct(v.index_equivalent_detach));
                row.par_spread_bp = v.par_spread.map(|s| s * 1e4);
                row.upfront_pct = Some(v.upfront * 100.0);
                row.expected_loss = Some(v.expected_loss);
                row.pv = Some(v.pv);
                row.flags = v.flags.clone();
                if let Some(k) = &r.risk {
                    row.risk = *k;
                    total.spread_01 += k.spread_01.unwrap_or(0.0);
                    total.correlation_01 += k.correlation_01.unwrap_or(0.0);
                    total.recovery_01 += k.recovery_01.unwrap_or(0.0);
                    total.jump_to_default += k.jump_to_default.unwrap_or(0.0);
                }
                row.buckets = r.buckets.as_ref().map(|b| BucketsOut {
                    spread_01: b
                        .spread_01
                        .iter()
                        .map(|(m, v)| SpreadBucket {
                            pillar_maturity: m.to_string(),
                            value: *v,
                        })
                        .collect(),
                    correlation_01: b
                        .correlation_01
                        .iter()
                        .map(|(m, k, v)| CorrelationBucket {
                            maturity: m.to_string(),
                            detach_pct: pct(*k),
                            value: *v,
                        })
                        .collect(),
                });
            }
        }
        rows.push(row);
    }
    Ok(ValueReport {
        date: date.to_string(),
        interp: interp.name(),
        mapping: book.mapping.name(),
        names: book.names,
        recovery: market.index.recovery,
        note: book.mapping.note(),
        trades: rows,
        book: total,
        bucket_note: book.buckets.then_some(BUCKET_NOTE),
        surface_notes,
        model: super::price::model_field(model),
    })
}

/// One sentence per maturity whose knots the `expected-loss` surface
/// repaired: why, and where the knots went.
fn repair_notes(surface: &crate::surface::Surface) -> Vec<String> {
    surface
        .maturities
        .iter()
        .filter_map(|m| {
            let c = m.loss_curve()?;
            if c.is_admissible() {
                return None;
            }
            let why: Vec<String> = c.inadmissible.iter().map(|v| v.to_string()).collect();
            let moved: Vec<String> = c
                .adjusted
                .iter()
                .map(|a| {
                    format!(
                        "{}% base correlation {} -> {}",
                        pct(a.detach),
                        fixed(a.rho, 4),
                        fixed(a.adjusted_rho.rho, 4)
                    )
                })
                .collect();
            Some(format!(
                "{}: {}; the surface uses the nearest admissible knots ({}), so the quotes there do not reprice",
                m.maturity,
                why.join("; "),
                moved.join(", ")
            ))
        })
        .collect()
}

impl Report for ValueReport {
    fn sections(&self) -> Vec<Table> {
        let title = format!(
            "{}  book off the {} skew, {} mapping, recovery {}%",
            self.date,
            self.interp,
            self.mapping,
            fixed(self.recovery * 100.0, 1),
        );
        let mut terms = Table::new(&[
            "trade", "pool", "maturity", "side", "tranche%", "rho A%", "rho D%",
        ])
        .with_title(title);
        terms.notes.push(
            "tranche%: attachment-detachment; A>B: bound A of the pool maps to B on the index"
                .to_string(),
        );
        let mut prices = Table::new(&["trade", "spread bp", "upfront%", "EL%", "pv", "flags"])
            .with_title(format!(
                "{}  values (pv in currency, holder's sign){}",
                self.date,
                super::price::model_title(&self.model)
            ));
        let mut risk = Table::new(&[
            "trade", "spread01", "corr01", "recov01", "jump2def", "index01", "delta",
        ])
        .with_title(format!(
            "{}  risk per trade (currency, holder's sign; jump2def: 1 of {} names)",
            self.date, self.names
        ));
        let money = |x: Option<f64>| fixed_or(x, 2, "-");
        for t in &self.trades {
            let mapped = |k: f64, ki: Option<f64>| match ki {
                Some(ki) if (ki - k).abs() > 1e-9 => format!("{k}>{}", fixed(ki, 2)),
                _ => format!("{k}"),
            };
            terms.push(vec![
                t.trade_id.clone(),
                t.pool.clone(),
                t.maturity.clone(),
                t.side.to_string(),
                format!(
                    "{}-{}",
                    mapped(t.attach_pct, t.index_equivalent_attach_pct),
                    mapped(t.detach_pct, t.index_equivalent_detach_pct)
                ),
                fixed_or(t.base_correlation_attach.map(|r| r * 100.0), 2, "-"),
                fixed_or(t.base_correlation_detach.map(|r| r * 100.0), 2, "-"),
            ]);
            prices.push(vec![
                t.trade_id.clone(),
                fixed_or(t.par_spread_bp, 2, "-"),
                fixed_or(t.upfront_pct, 3, "-"),
                fixed_or(t.expected_loss.map(|e| e * 100.0), 2, "-"),
                money(t.pv),
                crate::flags::join(&t.flags, true),
            ]);
            risk.push(vec![
                t.trade_id.clone(),
                money(t.risk.spread_01),
                money(t.risk.correlation_01),
                money(t.risk.recovery_01),
                money(t.risk.jump_to_default),
                money(t.risk.index_01),
                fixed_or(t.risk.delta, 3, "-"),
            ]);
        }
        prices.notes.push(format!(
            "book: {} of {} trades priced, pv {}",
            self.book.priced,
            self.book.trades,
            fixed(self.book.pv, 2)
        ));
        if let Some(n) = self.note {
            prices.notes.extend(wrap(n, 79, 0));
        }
        for n in &self.surface_notes {
            prices.notes.extend(wrap(n, 79, 4));
        }
        let mut seen: Vec<Flag> = self.trades.iter().flat_map(|t| t.flags.clone()).collect();
        seen.sort();
        seen.dedup();
        for f in seen {
            prices
                .notes
                .extend(wrap(&format!("{}: {}", f.short(), f.meaning()), 79, 4));
        }
        risk.push(vec![
            "book".to_string(),
            fixed(self.book.spread_01, 2),
            fixed(self.book.correlation_01, 2),
            fixed(self.book.recovery_01, 2),
            fixed(self.book.jump_to_default, 2),
            "-".to_string(),
            "-".to_string(),
        ]);
        if let Some(n) = self.bucket_note {
            risk.notes.extend(wrap(n, 79, 0));
        }
        let mut out = vec![terms, prices, risk];
        if self.trades.iter().any(|t| t.buckets.is_some()) {
            let mut b = Table::new(&["trade", "bucket", "figure", "value"])
                .with_title(format!("{}  bucketed risk (currency)", self.date));
            for t in &self.trades {
                if let Some(bk) = &t.buckets {
                    for s in &bk.spread_01 {
                        b.push(vec![
                            t.trade_id.clone(),
                            format!("pillar {}", s.pillar_maturity),
                            "spread01".to_string(),
                            money(s.value),
                        ]);
                    }
                    for c in &bk.correlation_01 {
                        b.push(vec![
                            t.trade_id.clone(),
                            format!("knot {} {}%", c.maturity, c.detach_pct),
                            "corr01".to_string(),
                            money(c.value),
                        ]);
                    }
                }
            }
            out.push(b);
        }
        out
    }

    fn csv(&self) -> Table {
        let mut headers = vec![
            "date",
            "interp",
            "mapping",
            "trade_id",
            "pool",
            "maturity",
            "side",
            "attach_pct",
            "detach_pct",
            "coupon_bp",
            "notional",
            "base_correlation_attach",
            "base_correlation_detach",
            "index_equivalent_attach_pct",
            "index_equivalent_detach_pct",
            "par_spread_bp",
            "upfront_pct",
            "expected_loss",
            "pv",
            "spread_01",
            "correlation_01",
            "recovery_01",
            "jump_to_default",
            "index_01",
            "delta",
            "flags",
        ];
        if self.model.is_some() {
            headers.push("model");
        }
        let mut t = Table::new(&headers);
        for r in &self.trades {
            let mut row = vec![
                self.date.clone(),
                self.interp.to_string(),
                self.mapping.to_string(),
                r.trade_id.clone(),
                r.pool.clone(),
                r.maturity.clone(),
                r.side.to_string(),
                csv_num(Some(r.attach_pct)),
                csv_num(Some(r.detach_pct)),
                csv_num(Some(r.coupon_bp)),
                csv_num(Some(r.notional)),
                csv_num(r.base_correlation_attach),
                csv_num(r.base_correlation_detach),
                csv_num(r.index_equivalent_attach_pct),
                csv_num(r.index_equivalent_detach_pct),
                csv_num(r.par_spread_bp),
                csv_num(r.upfront_pct),
                csv_num(r.expected_loss),
                csv_num(r.pv),
                csv_num(r.risk.spread_01),
                csv_num(r.risk.correlation_01),
                csv_num(r.risk.recovery_01),
                csv_num(r.risk.jump_to_default),
                csv_num(r.risk.index_01),
                csv_num(r.risk.delta),
                crate::flags::join(&r.flags, false),
            ];
            if let Some(m) = &self.model {
                row.push(m.clone());
            }
            t.push(row);
        }
        t
    }
}
