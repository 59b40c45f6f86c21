//! Trades and pools readers: exact values of valid files (unit conversions
//! of the conventions: bp / 1e4, percent / 100), a round trip through the
//! file format, and one test per rule with the `path:line:col:` text of its
//! message, as the snapshot reader's tests do.

use super::common::write_temp;
use chrono::NaiveDate;
use skewbook::error::ErrorKind;
use skewbook::input::pools::{self, parse_pools, read_pools};
use skewbook::input::trades::{self, parse_trades, read_trades, Side, Trades};
use skewbook::market::Quote;

const TH: &str = "trade_id,pool,maturity,attach_pct,detach_pct,coupon_bp,notional,side";
/// A valid trade, to put beside a broken one.
const GOOD: &str = "T0,index,2031-06-20,0,3,500,10000000,sell";

const PH: &str = "pool,maturity,quote_kind,quote,coupon_bp,recovery_pct";

fn d(s: &str) -> NaiveDate {
    NaiveDate::parse_from_str(s, "%Y-%m-%d").expect("test date")
}

/// `header` then the rows, one a line.
fn file(header: &str, rows: &[&str]) -> String {
    let mut s = header.to_string();
    for r in rows {
        s.push('\n');
        s.push_str(r);
    }
    s.push('\n');
    s
}

/// Every message of a trades file that must fail, as printed.
fn trade_errors(text: &str) -> Vec<String> {
    match parse_trades(text, "book.csv") {
        Ok(t) => panic!("expected an error, parsed {t:?}"),
        Err(e) => {
            assert_eq!(e.kind, ErrorKind::InvalidInput, "{e}");
            e.problems.iter().map(|p| p.to_string()).collect()
        }
    }
}

/// The one message of a trades file with GOOD and `row` (on line 3).
fn trade_error(row: &str) -> String {
    let m = trade_errors(&file(TH, &[GOOD, row]));
    assert_eq!(m.len(), 1, "{m:?}");
    m[0].clone()
}

fn pool_errors(text: &str) -> Vec<String> {
    match parse_pools(text, "pools.csv") {
        Ok(p) => panic!("expected an error, parsed {p:?}"),
        Err(e) => {
            assert_eq!(e.kind, ErrorKind::InvalidInput, "{e}");
            e.problems.iter().map(|p| p.to_string()).collect()
        }
    }
}

/// The one message of a pools file with a good row and `row` (on line 3).
fn pool_error(row: &str) -> String {
    let m = pool_errors(&file(PH, &["blue,2029-06-20,spread_bp,95,,35", row]));
    assert_eq!(m.len(), 1, "{m:?}");
    m[0].clone()
}

// ---------------------------------------------------------------- trades: valid

#[test]
fn trades_file_reads_into_fractions_in_file_order() {
    // Columns shuffled, a byte-order mark, CRLF endings, blank lines and
    // padded cells: all allowed.
    let text = "\u{feff}side,notional,trade_id,maturity,pool,coupon_bp,attach_pct,detach_pct\r\n\
                \r\n\
                sell, 10000000 ,EQ-1,2031-06-20,index,500,0,3\r\n\
                buy,2.5e7,MZ-7,2029-06-20,index,100,3,7\r\n\
                \r\n\
                buy,5000000,BSP-2,2031-06-20,blue-energy,0,15,100\r\n";
    let path = write_temp("trades-valid", text);
    let book = read_trades(&path).expect("valid");
    assert_eq!(book.path, path);
    assert_eq!((book.maturity_column, book.pool_column), (4, 5));
    let got: Vec<_> = book
        .trades
        .iter()
        .map(|t| {
            (
                t.trade_id.as_str(),
                t.pool.as_str(),
                t.maturity,
                t.attach,
                t.detach,
                t.coupon,
                t.notional,
                t.side,
                t.line,
            )
        })
        .collect();
    assert_eq!(
        got,
        vec![
            (
                "EQ-1",
                "index",
                d("2031-06-20"),
                0.0,
                0.03,
                0.05,
                1e7,
                Side::Sell,
                3
            ),
            (
                "MZ-7",
                "index",
                d("2029-06-20"),
                0.03,
                0.07,
                0.01,
                2.5e7,
                Side::Buy,
                4
            ),
            (
                "BSP-2",
                "blue-energy",
                d("2031-06-20"),
                0.15,
                1.0,
                0.0,
                5e6,
                Side::Buy,
                6
            ),
        ]
    );
}

#[test]
fn trades_round_trip_through_the_file_format() {
    let text = file(
        TH,
        &[
            "EQ-1,index,2031-06-20,0,3,500,10000000,sell",
            "MZ-7,index,2029-06-20,3,7,100,25000000,buy",
            "SN-3,grey,2033-12-20,7,10,37.5,1234567.89,sell",
            "SS-4,grey,2033-12-20,22,100,25,1e6,buy",
        ],
    );
    let book = parse_trades(&text, "a.csv").expect("valid");
    let again = write(&book);
    let back = parse_trades(&again, "a.csv").expect("written file reads");
    assert_eq!(back, book);
    // The numbers come back as written, in file units.
    assert!(again.contains("SN-3,grey,2033-12-20,7,10,37.5,1234567.89,sell"));
}

/// The trades in the file format (percent and bp, shortest exact digits).
fn write(book: &Trades) -> String {
    let unit = |x: f64, k: f64| format!("{}", (x * k * 1e9).round() / 1e9);
    let rows: Vec<String> = book
        .trades
        .iter()
        .map(|t| {
            format!(
                "{},{},{},{},{},{},{},{}",
                t.trade_id,
                t.pool,
                t.maturity,
                unit(t.attach, 100.0),
                unit(t.detach, 100.0),
                unit(t.coupon, 1e4),
                t.notional,
                t.side.name()
            )
        })
        .collect();
    let refs: Vec<&str> = rows.iter().map(String::as_str).collect();
    file(TH, &refs)
}

// ---------------------------------------------------------------- trades: errors

#[test]
fn trades_empty_file_and_header_only() {
    assert_eq!(
        trade_errors(""),
        vec![
            "book.csv:1: expected a header row and trade rows, found an empty file (no trade rows)"
        ]
    );
    assert_eq!(
        trade_errors("\n\n"),
        vec![
            "book.csv:1: expected a header row and trade rows, found an empty file (no trade rows)"
        ]
    );
    assert_eq!(
        trade_errors(&format!("\n{TH}\n\n")),
        vec!["book.csv:2: expected trade rows after the header, found none (no trade rows)"]
    );
}

#[test]
fn trades_header_missing_unknown_and_repeated_columns() {
    let m =
        trade_errors("trade_id,pool,maturity,attach_pct,detach_pct,coupon,notional,side,pool\nx\n");
    assert_eq!(
        m,
        vec![
            "book.csv:1: column \"coupon_bp\": expected a column named \"coupon_bp\" in the header, found none",
            "book.csv:1:6: column \"coupon\": expected a column name, one of trade_id, pool, maturity, attach_pct, detach_pct, coupon_bp, notional, side, found \"coupon\"",
            "book.csv:1:9: column \"pool\": expected each column once, found \"pool\" again (first in column 2)",
        ]
    );
}

#[test]
fn trades_rows_of_the_wrong_width() {
    assert_eq!(
        trade_error("T1,index,2031-06-20,0,3,500"),
        "book.csv:3:7: column \"notional\": expected 8 cells as in the header (line 1), found 6: the row ends before this column"
    );
    assert_eq!(
        trade_error("T1,index,2031-06-20,0,3,500,1e6,buy,x"),
        "book.csv:3:9: expected 8 cells as in the header (line 1), found 9: extra cells \"x\""
    );
}

#[test]
fn trades_duplicate_id_names_the_earlier_line() {
    let m = trade_errors(&file(
        TH,
        &[
            GOOD,
            "T1,index,2031-06-20,3,7,100,1e6,buy",
            "T0,index,2031-06-20,7,10,100,1e6,buy",
            "T1,index,2031-06-20,10,15,100,1e6,buy",
        ],
    ));
    assert_eq!(
        m,
        vec![
            "book.csv:4:1: column \"trade_id\": expected each trade_id once, found \"T0\" again (first on line 2)",
            "book.csv:5:1: column \"trade_id\": expected each trade_id once, found \"T1\" again (first on line 3)",
        ]
    );
}

#[test]
fn trades_empty_cells() {
    assert_eq!(
        trade_error(",index,2031-06-20,0,3,500,1e6,buy"),
        "book.csv:3:1: column \"trade_id\": expected a trade id, found an empty cell"
    );
    assert_eq!(
        trade_error("T1, ,2031-06-20,0,3,500,1e6,buy"),
        "book.csv:3:2: column \"pool\": expected a pool name (\"index\" or a pool of the pools file), found an empty cell"
    );
    assert_eq!(
        trade_error("T1,index,,0,3,500,1e6,buy"),
        "book.csv:3:3: column \"maturity\": expected a maturity date (YYYY-MM-DD), found an empty cell"
    );
    assert_eq!(
        trade_error("T1,index,2031-06-20,0,3,,1e6,buy"),
        "book.csv:3:6: column \"coupon_bp\": expected a running coupon in bp, found an empty cell"
    );
    assert_eq!(
        trade_error("T1,index,2031-06-20,0,3,500,1e6,"),
        "book.csv:3:8: column \"side\": expected one of \"buy\", \"sell\", found an empty cell"
    );
}

#[test]
fn trades_bad_dates() {
    assert_eq!(
        trade_error("T1,index,20/06/2031,0,3,500,1e6,buy"),
        "book.csv:3:3: column \"maturity\": expected an ISO 8601 date YYYY-MM-DD, found \"20/06/2031\" \
         (a day-month-year or month-day-year date: write it year first, as 2026-06-18)"
    );
    assert_eq!(
        trade_error("T1,index,2031-02-29,0,3,500,1e6,buy"),
        "book.csv:3:3: column \"maturity\": expected an ISO 8601 date YYYY-MM-DD, found \"2031-02-29\" (no such day)"
    );
}

#[test]
fn trades_bounds() {
    assert_eq!(
        trade_error("T1,index,2031-06-20,-1,3,500,1e6,buy"),
        "book.csv:3:4: column \"attach_pct\": expected an attachment of 0, or from 0.01 to 100 percent, found \"-1\""
    );
    assert_eq!(
        trade_error("T1,index,2031-06-20,3,100.5,500,1e6,buy"),
        "book.csv:3:5: column \"detach_pct\": expected a detachment from 0.01 to 100 percent, found \"100.5\""
    );
    assert_eq!(
        trade_error("T1,index,2031-06-20,7,3,500,1e6,buy"),
        "book.csv:3:5: column \"detach_pct\": expected a detachment above the attachment \"7\" (column 4), found \"3\""
    );
    assert_eq!(
        trade_error("T1,index,2031-06-20,3,3.0,500,1e6,buy"),
        "book.csv:3:5: column \"detach_pct\": expected a detachment above the attachment \"3\" (column 4), found \"3.0\""
    );
}

#[test]
fn trades_coupon_and_notional() {
    assert_eq!(
        trade_error("T1,index,2031-06-20,0,3,-5,1e6,buy"),
        "book.csv:3:6: column \"coupon_bp\": expected a coupon from 0 up to (not including) 100000 bp, found \"-5\""
    );
    for bad in ["0", "-1e6", "-0"] {
        assert_eq!(
            trade_error(&format!("T1,index,2031-06-20,0,3,500,{bad},buy")),
            format!(
                "book.csv:3:7: column \"notional\": expected a notional above 0 and below 1e15, found \"{bad}\""
            )
        );
    }
    for bad in ["inf", "NaN", "1e400"] {
        assert_eq!(
            trade_error(&format!("T1,index,2031-06-20,0,3,500,{bad},buy")),
            format!("book.csv:3:7: column \"notional\": expected a finite number, found \"{bad}\"")
        );
    }
    assert_eq!(
        trade_error("T1,index,2031-06-20,0,3,500,\"10,000,000\",buy"),
        "book.csv:3:7: column \"notional\": expected a number, found \"10,000,000\""
    );
}

#[test]
fn trades_side_is_buy_or_sell() {
    for bad in ["long", "Buy", "b"] {
        assert_eq!(
            trade_error(&format!("T1,index,2031-06-20,0,3,500,1e6,{bad}")),
            format!(
                "book.csv:3:8: column \"side\": expected one of \"buy\", \"sell\", found \"{bad}\""
            )
        );
    }
}

#[test]
fn trades_every_problem_in_line_order_with_true_lines() {
    // CRLF endings and blank lines: the lines are the file's.
    let text = format!(
        "{TH}\r\n\r\nT1,index,2031-06-20,0,3,500,1e6,hold\r\n{GOOD}\r\n\r\n\r\nT2,index,2031-13-20,9,3,x,0,buy\r\n"
    );
    assert_eq!(
        trade_errors(&text),
        vec![
            "book.csv:3:8: column \"side\": expected one of \"buy\", \"sell\", found \"hold\"",
            "book.csv:7:3: column \"maturity\": expected an ISO 8601 date YYYY-MM-DD, found \"2031-13-20\" (no such day)",
            "book.csv:7:5: column \"detach_pct\": expected a detachment above the attachment \"9\" (column 4), found \"3\"",
            "book.csv:7:6: column \"coupon_bp\": expected a number, found \"x\"",
            "book.csv:7:7: column \"notional\": expected a notional above 0 and below 1e15, found \"0\"",
        ]
    );
}

// ---------------------------------------------------------------- trades: against the snapshot

#[test]
fn trades_against_the_trade_date_and_the_known_pools() {
    // `pool` is column 3 and `maturity` column 2 here.
    let text = file(
        "trade_id,maturity,pool,attach_pct,detach_pct,coupon_bp,notional,side",
        &[
            "A,2031-06-20,index,0,3,500,1e7,buy",
            "B,2026-06-18,blue,3,7,100,1e7,buy",
            "C,2026-06-19,grey,3,7,100,1e7,sell",
            "D,2020-01-01,red,3,7,100,1e7,sell",
        ],
    );
    let book = parse_trades(&text, "book.csv").expect("valid file");
    let day = d("2026-06-18");
    let messages = |pools: &[&str]| -> Vec<String> {
        match trades::check_against(&book, day, pools) {
            Ok(()) => vec![],
            Err(e) => {
                assert_eq!(e.kind, ErrorKind::InvalidInput);
                e.problems.iter().map(|p| p.to_string()).collect()
            }
        }
    };
    assert_eq!(
        messages(&["blue", "grey", "red"]),
        vec![
            "book.csv:3:2: column \"maturity\": expected a maturity after the trade date 2026-06-18, found \"2026-06-18\"",
            "book.csv:5:2: column \"maturity\": expected a maturity after the trade date 2026-06-18, found \"2020-01-01\"",
        ]
    );
    assert_eq!(
        messages(&["blue", "grey"]),
        vec![
            "book.csv:3:2: column \"maturity\": expected a maturity after the trade date 2026-06-18, found \"2026-06-18\"",
            "book.csv:5:2: column \"maturity\": expected a maturity after the trade date 2026-06-18, found \"2020-01-01\"",
            "book.csv:5:3: column \"pool\": expected \"index\" or a known pool (one of \"blue\", \"grey\"), found \"red\"",
        ]
    );
    assert_eq!(
        messages(&[]),
        vec![
            "book.csv:3:2: column \"maturity\": expected a maturity after the trade date 2026-06-18, found \"2026-06-18\"",
            "book.csv:3:3: column \"pool\": expected \"index\" (no other pool is known), found \"blue\"",
            "book.csv:4:3: column \"pool\": expected \"index\" (no other pool is known), found \"grey\"",
            "book.csv:5:2: column \"maturity\": expected a maturity after the trade date 2026-06-18, found \"2020-01-01\"",
            "book.csv:5:3: column \"pool\": expected \"index\" (no other pool is known), found \"red\"",
        ]
    );
    // `index` is always known; a day earlier every maturity is after it.
    let early = trades::check_against(&book, d("2019-12-31"), &["blue", "grey", "red"]);
    assert_eq!(early, Ok(()));
}

// ---------------------------------------------------------------- pools: valid

#[test]
fn pools_file_reads_into_fractions_by_pool_and_maturity() {
    let text = "\u{feff}recovery_pct,quote,pool,quote_kind,maturity,coupon_bp\r\n\
                35,120,blue-energy,spread_bp,2031-06-20,\r\n\
                \r\n\
                25,4.5,grey-retail,upfront_pct,2031-06-20,500\r\n\
                35.0,95,blue-energy,spread_bp,2029-06-20, \r\n\
                25,-1.25,grey-retail,upfront_pct,2029-06-20,100\r\n";
    let path = write_temp("pools-valid", text);
    let pools = read_pools(&path).expect("valid");
    assert_eq!(pools.path, path);
    assert_eq!(pools.maturity_column, 5);
    assert_eq!(pools.names(), vec!["blue-energy", "grey-retail"]);
    let blue = pools.get("blue-energy").expect("blue");
    assert_eq!(blue.recovery, 0.35);
    let got: Vec<_> = blue
        .quotes
        .iter()
        .map(|q| (q.maturity, q.quote, q.line))
        .collect();
    assert_eq!(
        got,
        vec![
            (d("2029-06-20"), Quote::Spread(0.0095), 5),
            (d("2031-06-20"), Quote::Spread(0.012), 2),
        ]
    );
    let grey = &pools.pools[1];
    assert_eq!(grey.recovery, 0.25);
    let got: Vec<_> = grey
        .quotes
        .iter()
        .map(|q| (q.maturity, q.quote, q.line))
        .collect();
    assert_eq!(
        got,
        vec![
            (
                d("2029-06-20"),
                Quote::Upfront {
                    upfront: -0.0125,
                    coupon: 0.01
                },
                6
            ),
            (
                d("2031-06-20"),
                Quote::Upfront {
                    upfront: 0.045,
                    coupon: 0.05
                },
                4
            ),
        ]
    );
    assert!(pools.get("index").is_none());
}

#[test]
fn pools_round_trip_through_the_file_format() {
    let text = file(
        PH,
        &[
            "blue,2031-06-20,spread_bp,120,,35",
            "grey,2029-06-20,upfront_pct,4.5,500,27.5",
            "blue,2029-06-20,spread_bp,95.25,,35",
        ],
    );
    let pools = parse_pools(&text, "p.csv").expect("valid");
    let unit = |x: f64, k: f64| format!("{}", (x * k * 1e9).round() / 1e9);
    let mut rows = Vec::new();
    for p in &pools.pools {
        for q in &p.quotes {
            let (quote, coupon) = match q.quote {
                Quote::Spread(s) => (unit(s, 1e4), String::new()),
                Quote::Upfront { upfront, coupon } => (unit(upfront, 100.0), unit(coupon, 1e4)),
            };
            rows.push(format!(
                "{},{},{},{quote},{coupon},{}",
                p.name,
                q.maturity,
                q.quote.kind_name(),
                unit(p.recovery, 100.0)
            ));
        }
    }
    let refs: Vec<&str> = rows.iter().map(String::as_str).collect();
    assert_eq!(
        refs,
        vec![
            "blue,2029-06-20,spread_bp,95.25,,35",
            "blue,2031-06-20,spread_bp,120,,35",
            "grey,2029-06-20,upfront_pct,4.5,500,27.5",
        ]
    );
    let back = parse_pools(&file(PH, &refs), "p.csv").expect("written file reads");
    // Same pools and quotes; only the lines moved.
    assert_eq!(back.names(), pools.names());
    for (a, b) in back.pools.iter().zip(&pools.pools) {
        assert_eq!(a.recovery, b.recovery);
        let qa: Vec<_> = a.quotes.iter().map(|q| (q.maturity, q.quote)).collect();
        let qb: Vec<_> = b.quotes.iter().map(|q| (q.maturity, q.quote)).collect();
        assert_eq!(qa, qb);
    }
}

#[test]
fn pools_coupon_column_may_be_left_out_for_spreads_only() {
    let text = "pool,maturity,quote_kind,quote,recovery_pct\nblue,2031-06-20,spread_bp,120,35\n";
    let pools = parse_pools(text, "p.csv").expect("valid");
    assert_eq!(pools.pools[0].quotes[0].quote, Quote::Spread(0.012));
    let text = "pool,maturity,quote_kind,quote,recovery_pct\n\
                blue,2031-06-20,spread_bp,120,35\n\
                grey,2031-06-20,upfront_pct,3,25\n\
                grey,2033-06-20,upfront_pct,5,25\n";
    assert_eq!(
        pool_errors(text),
        vec!["pools.csv:1: column \"coupon_bp\": expected a column named \"coupon_bp\" in the header, found none (upfront_pct quotes need a running coupon, first on line 3)"]
    );
}

// ---------------------------------------------------------------- pools: errors

#[test]
fn pools_empty_file_header_and_widths() {
    assert_eq!(
        pool_errors(""),
        vec![
            "pools.csv:1: expected a header row and pool rows, found an empty file (no pool rows)"
        ]
    );
    assert_eq!(
        pool_errors(&format!("{PH}\n")),
        vec!["pools.csv:1: expected pool rows after the header, found none (no pool rows)"]
    );
    assert_eq!(
        pool_errors("pool,maturity,quote_kind,quote,coupon_bp,recovery\nx\n"),
        vec![
            "pools.csv:1: column \"recovery_pct\": expected a column named \"recovery_pct\" in the header, found none",
            "pools.csv:1:6: column \"recovery\": expected a column name, one of pool, maturity, quote_kind, quote, coupon_bp, recovery_pct, found \"recovery\"",
        ]
    );
    assert_eq!(
        pool_error("grey,2031-06-20,spread_bp,120,"),
        "pools.csv:3:6: column \"recovery_pct\": expected 6 cells as in the header (line 1), found 5: the row ends before this column"
    );
}

#[test]
fn pools_index_is_reserved() {
    assert_eq!(
        pool_error("index,2031-06-20,spread_bp,120,,35"),
        "pools.csv:3:1: column \"pool\": expected a bespoke pool's name (\"index\" is the snapshot's own pool), found \"index\""
    );
    assert_eq!(
        pool_error(",2031-06-20,spread_bp,120,,35"),
        "pools.csv:3:1: column \"pool\": expected a pool name, found an empty cell"
    );
}

#[test]
fn pools_one_quote_per_pool_and_maturity() {
    let m = pool_errors(&file(
        PH,
        &[
            "blue,2029-06-20,spread_bp,95,,35",
            "grey,2029-06-20,spread_bp,80,,35",
            "blue,2031-06-20,spread_bp,120,,35",
            "blue,2029-06-20,upfront_pct,1,100,35",
        ],
    ));
    assert_eq!(
        m,
        vec!["pools.csv:5:2: column \"maturity\": expected one quote per maturity of pool \"blue\", found a second for 2029-06-20 (lines 2 and 5)"]
    );
}

#[test]
fn pools_recovery_one_value_per_pool_in_0_to_100() {
    assert_eq!(
        pool_error("blue,2031-06-20,spread_bp,120,,40"),
        "pools.csv:3:6: column \"recovery_pct\": expected the same recovery on every row of pool \"blue\", found \"40\" here and \"35\" on line 2"
    );
    // The same number written differently agrees.
    assert!(parse_pools(
        &file(
            PH,
            &[
                "blue,2029-06-20,spread_bp,95,,35",
                "blue,2031-06-20,spread_bp,95,,35.0"
            ]
        ),
        "p.csv"
    )
    .is_ok());
    for bad in ["100", "-0.5", "250"] {
        assert_eq!(
            pool_error(&format!("grey,2031-06-20,spread_bp,120,,{bad}")),
            format!("pools.csv:3:6: column \"recovery_pct\": expected a recovery from 0 up to (not including) 100 percent, found \"{bad}\"")
        );
    }
    assert_eq!(
        pool_error("grey,2031-06-20,spread_bp,120,,"),
        "pools.csv:3:6: column \"recovery_pct\": expected a recovery in percent, found an empty cell"
    );
}

#[test]
fn pools_quotes_and_coupons() {
    for bad in ["0", "-5"] {
        assert_eq!(
            pool_error(&format!("grey,2031-06-20,spread_bp,{bad},,35")),
            format!(
                "pools.csv:3:4: column \"quote\": expected a spread above 0 and below 100000 bp, found \"{bad}\""
            )
        );
    }
    for bad in ["100", "-100", "150"] {
        assert_eq!(
            pool_error(&format!("grey,2031-06-20,upfront_pct,{bad},500,35")),
            format!("pools.csv:3:4: column \"quote\": expected an upfront above -100 and below 100 percent, found \"{bad}\"")
        );
    }
    assert_eq!(
        pool_error("grey,2031-06-20,upfront_pct,5,,35"),
        "pools.csv:3:5: column \"coupon_bp\": expected a running coupon in bp (upfront_pct quotes need one), found an empty cell"
    );
    assert_eq!(
        pool_error("grey,2031-06-20,upfront_pct,5,-100,35"),
        "pools.csv:3:5: column \"coupon_bp\": expected a coupon from 0 up to (not including) 100000 bp, found \"-100\""
    );
    assert_eq!(
        pool_error("grey,2031-06-20,spread_bp,120,100,35"),
        "pools.csv:3:5: column \"coupon_bp\": expected an empty cell on a spread_bp row (a coupon goes with upfront_pct quotes only), found \"100\""
    );
    assert_eq!(
        pool_error("grey,2031-06-20,zero_rate_pct,2,,35"),
        "pools.csv:3:3: column \"quote_kind\": expected one of \"spread_bp\", \"upfront_pct\", found \"zero_rate_pct\""
    );
    assert_eq!(
        pool_error("grey,2031-06-20,spread_bp,nan,,35"),
        "pools.csv:3:4: column \"quote\": expected a finite number, found \"nan\""
    );
    assert_eq!(
        pool_error("grey,2031-06-20,spread_bp,,,35"),
        "pools.csv:3:4: column \"quote\": expected a spread in bp, found an empty cell"
    );
    assert_eq!(
        pool_error("grey,31-06-20,spread_bp,120,,35"),
        "pools.csv:3:2: column \"maturity\": expected an ISO 8601 date YYYY-MM-DD, found \"31-06-20\""
    );
}

#[test]
fn pools_against_the_trade_date() {
    let text = file(
        PH,
        &[
            "blue,2029-06-20,spread_bp,95,,35",
            "blue,2026-06-18,spread_bp,80,,35",
            "grey,2026-06-19,spread_bp,80,,35",
        ],
    );
    let pools = parse_pools(&text, "pools.csv").expect("valid");
    let e = pools::check_against(&pools, d("2026-06-18")).expect_err("on the trade date");
    let m: Vec<String> = e.problems.iter().map(|p| p.to_string()).collect();
    assert_eq!(
        m,
        vec!["pools.csv:3:2: column \"maturity\": expected a maturity after the trade date 2026-06-18, found \"2026-06-18\""]
    );
    assert_eq!(pools::check_against(&pools, d("2026-06-17")), Ok(()));
}

// ---------------------------------------------------------------- garbage

/// Cells a fuzzed row draws from: valid ones, near misses and junk.
fn cell() -> impl proptest::strategy::Strategy<Value = String> {
    use proptest::prelude::*;
    prop_oneof![
        Just(String::new()),
        Just("index".to_string()),
        Just("blue".to_string()),
        Just("buy".to_string()),
        Just("sell".to_string()),
        Just("spread_bp".to_string()),
        Just("upfront_pct".to_string()),
        Just("2031-06-20".to_string()),
        Just("nan".to_string()),
        Just("-inf".to_string()),
        (-200.0f64..200.0).prop_map(|v| format!("{v}")),
        "[0-9]{1,3}",
        "\\PC{0,8}",
    ]
}

/// Err is InvalidInput with every problem located on a line of the text
/// and saying what it expected.
fn located(e: &skewbook::Error, text: &str) {
    let lines = 1 + text.bytes().filter(|b| *b == b'\n' || *b == b'\r').count() as u64;
    assert_eq!(e.kind, ErrorKind::InvalidInput);
    assert!(!e.problems.is_empty());
    for p in &e.problems {
        let l = p.location.as_ref().expect("every problem is located");
        assert!(l.line >= 1 && l.line <= lines, "{p} in {lines} lines");
        assert!(p.message.starts_with("expected "), "{p}");
    }
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(300))]

    #[test]
    fn fuzzed_files_never_panic(
        rows in proptest::collection::vec(proptest::collection::vec(cell(), 5..10), 0..8),
        text in "\\PC{0,40}(\n\\PC{0,40}){0,4}",
    ) {
        let rows: Vec<String> = rows.iter().map(|r| r.join(",")).collect();
        let refs: Vec<&str> = rows.iter().map(String::as_str).collect();
        for t in [file(TH, &refs), format!("{TH}\n{text}"), text.clone()] {
            match parse_trades(&t, "f.csv") {
                Ok(book) => {
                    for x in &book.trades {
                        assert!(0.0 <= x.attach && x.attach < x.detach && x.detach <= 1.0);
                        assert!(x.coupon >= 0.0 && x.notional > 0.0 && x.notional.is_finite());
                    }
                }
                Err(e) => located(&e, &t),
            }
        }
        for t in [file(PH, &refs), format!("{PH}\n{text}"), text.clone()] {
            match parse_pools(&t, "f.csv") {
                Ok(p) => {
                    for pool in &p.pools {
                        assert!((0.0..1.0).contains(&pool.recovery) && pool.name != "index");
                        assert!(!pool.quotes.is_empty());
                        assert!(pool.quotes.windows(2).all(|w| w[0].maturity < w[1].maturity));
                    }
                }
                Err(e) => located(&e, &t),
            }
        }
    }
}
