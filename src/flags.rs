//! Every flag skewbook can attach to a result row, with its meaning.
//!
//! Flags are results, not errors: a row with a flag is still printed. The
//! same list feeds the JSON and CSV (by [`Flag::name`]), the table (by
//! [`Flag::short`]), the format docs' flag table and the report's plain-words
//! explanations (by [`Flag::meaning`]), so they cannot drift apart; the
//! table in `docs/formats.md` is tested against this list.

use serde::{Serialize, Serializer};
use std::fmt;

/// A flag on a tranche, trade or surface row.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Flag {
    /// No flat correlation reaches the quote.
    NoCompoundRoot,
    /// Two flat correlations reach the quote.
    TwoCompoundRoots,
    /// A compound root is a tangency.
    CompoundTangent,
    /// No base correlation reaches the quote, which lies above the model's range.
    BaseQuoteAboveRange,
    /// No base correlation reaches the quote, which lies below the model's range.
    BaseQuoteBelowRange,
    /// A tranche below has no base correlation.
    BaseChainBroken,
    /// The maturity's tranches do not tile the capital structure from 0.
    BoundsDoNotTile,
    /// The tranche ends at 100%: it has no base correlation of its own.
    TopTranche,
    /// The tranche is [0, 100%]: no correlation moves it.
    NoCorrelationDependence,
    /// The tranche's value at its quote is zero at every correlation.
    FlatInCorrelation,
    /// A solver stopped without converging; the value it would have given is not reported.
    SolverFailed,
    /// A compound or base correlation lies within 0.5% of a search limit:
    /// the quote's unit is the likely mistake.
    NearSearchLimit,
    /// The maturity's tranches tile 0-100% but their quotes and the index
    /// quote disagree by more than the tolerance.
    IndexMismatch,
    /// A bound lies outside the knot range of a maturity used.
    ExtrapolatedDetachment,
    /// The maturity lies outside the surface's maturities.
    ExtrapolatedMaturity,
    /// The expected tranche loss off the surface is negative at some schedule date.
    NegativeExpectedLoss,
    /// The mapping equation has more than one solution; the lowest is used.
    SeveralMappings,
    /// The mapping equation has no solution: the trade is not priced.
    NoMapping,
    /// The date has no base correlation at all: the trade is not priced.
    NoSkew,
    /// `expected-loss`: no correlation in the search range gives the
    /// interpolated base expected loss at a bound; the nearer end is used.
    UnattainableExpectedLoss,
}

impl Flag {
    /// Every flag, in the order the documentation lists them.
    pub const ALL: [Flag; 20] = [
        Flag::NoCompoundRoot,
        Flag::TwoCompoundRoots,
        Flag::CompoundTangent,
        Flag::BaseQuoteAboveRange,
        Flag::BaseQuoteBelowRange,
        Flag::BaseChainBroken,
        Flag::BoundsDoNotTile,
        Flag::TopTranche,
        Flag::NoCorrelationDependence,
        Flag::FlatInCorrelation,
        Flag::SolverFailed,
        Flag::NearSearchLimit,
        Flag::IndexMismatch,
        Flag::ExtrapolatedDetachment,
        Flag::ExtrapolatedMaturity,
        Flag::NegativeExpectedLoss,
        Flag::SeveralMappings,
        Flag::NoMapping,
        Flag::NoSkew,
        Flag::UnattainableExpectedLoss,
    ];

    /// The name in JSON and CSV.
    pub fn name(self) -> &'static str {
        match self {
            Flag::NoCompoundRoot => "no_compound_root",
            Flag::TwoCompoundRoots => "two_compound_roots",
            Flag::CompoundTangent => "compound_tangent",
            Flag::BaseQuoteAboveRange => "base_quote_above_range",
            Flag::BaseQuoteBelowRange => "base_quote_below_range",
            Flag::BaseChainBroken => "base_chain_broken",
            Flag::BoundsDoNotTile => "bounds_do_not_tile",
            Flag::TopTranche => "top_tranche",
            Flag::NoCorrelationDependence => "no_correlation_dependence",
            Flag::FlatInCorrelation => "flat_in_correlation",
            Flag::SolverFailed => "solver_failed",
            Flag::NearSearchLimit => "near_search_limit",
            Flag::IndexMismatch => "index_mismatch",
            Flag::ExtrapolatedDetachment => "extrapolated_detachment",
            Flag::ExtrapolatedMaturity => "extrapolated_maturity",
            Flag::NegativeExpectedLoss => "negative_expected_loss",
            Flag::SeveralMappings => "several_mappings",
            Flag::NoMapping => "no_mapping",
            Flag::NoSkew => "no_skew",
            Flag::UnattainableExpectedLoss => "unattainable_expected_loss",
        }
    }

    /// The short form in 80-column tables.
    pub fn short(self) -> &'static str {
        match self {
            Flag::NoCompoundRoot => "no root",
            Flag::TwoCompoundRoots => "2 roots",
            Flag::CompoundTangent => "tangent",
            Flag::BaseQuoteAboveRange => "above range",
            Flag::BaseQuoteBelowRange => "below range",
            Flag::BaseChainBroken => "chain broken",
            Flag::BoundsDoNotTile => "gaps",
            Flag::TopTranche => "top",
            Flag::NoCorrelationDependence => "whole pool",
            Flag::FlatInCorrelation => "flat in rho",
            Flag::SolverFailed => "solver fail",
            Flag::NearSearchLimit => "check unit",
            Flag::IndexMismatch => "index gap",
            Flag::ExtrapolatedDetachment => "extrap K",
            Flag::ExtrapolatedMaturity => "extrap T",
            Flag::NegativeExpectedLoss => "neg EL",
            Flag::SeveralMappings => "many maps",
            Flag::NoMapping => "no mapping",
            Flag::NoSkew => "no skew",
            Flag::UnattainableExpectedLoss => "EL unattain",
        }
    }

    /// What the flag means, in plain words.
    pub fn meaning(self) -> &'static str {
        match self {
            Flag::NoCompoundRoot => {
                "no flat correlation in [0.01%, 99.99%] reproduces the quote; the row shows the range of model quotes"
            }
            Flag::TwoCompoundRoots => {
                "two flat correlations reproduce the quote (common for mezzanine tranches); both are listed"
            }
            Flag::CompoundTangent => {
                "the quote equals the model's extreme value: the compound root is a tangency"
            }
            Flag::BaseQuoteAboveRange => {
                "no base correlation reproduces the quote: it lies above every model quote in the search range"
            }
            Flag::BaseQuoteBelowRange => {
                "no base correlation reproduces the quote: it lies below every model quote in the search range"
            }
            Flag::BaseChainBroken => {
                "a tranche below at the same maturity has no base correlation, so this one has none either"
            }
            Flag::BoundsDoNotTile => {
                "the maturity's tranches do not run from 0% without gaps or overlaps: no base correlation"
            }
            Flag::TopTranche => {
                "the tranche ends at 100%; [0, 100%] does not depend on correlation, so it has no base correlation of its own"
            }
            Flag::NoCorrelationDependence => {
                "the tranche is the whole pool, [0, 100%]: no correlation moves its value"
            }
            Flag::FlatInCorrelation => {
                "the tranche's value at its quote is zero whatever the correlation: no correlation is implied"
            }
            Flag::SolverFailed => {
                "a root finder stopped without converging; no value is reported for it"
            }
            Flag::NearSearchLimit => {
                "a compound or base correlation lies within 0.5% of a search limit (0.01% or 99.99%): check the quote's unit (spread_bp in basis points, upfront_pct in percent); a mezzanine's second compound root near 100% can be genuine"
            }
            Flag::IndexMismatch => {
                "the maturity's tranches tile 0-100% but the protection their quotes imply differs from the index curve's by more than the tolerance (in bp of running spread): check the tranche quotes against the index quote"
            }
            Flag::ExtrapolatedDetachment => {
                "a bound lies outside the quoted detachments of a maturity used: its correlation is extrapolated (held flat under linear and pchip, read off the interpolated base expected loss under expected-loss)"
            }
            Flag::ExtrapolatedMaturity => {
                "the maturity lies outside the quoted maturities: the nearest maturity's skew is used"
            }
            Flag::NegativeExpectedLoss => {
                "the expected tranche loss off the skew is negative at some date: the interpolated skew is not arbitrage-free there"
            }
            Flag::SeveralMappings => {
                "the mapping equation has several solutions; the lowest detachment is used"
            }
            Flag::NoMapping => "the mapping equation has no solution: the trade is not priced",
            Flag::NoSkew => "the date has no base correlation at all: the trade is not priced",
            Flag::UnattainableExpectedLoss => {
                "expected-loss: no correlation in [0.01%, 99.99%] gives the interpolated base expected loss at a bound at the trade's horizon; the nearer end of that range is used"
            }
        }
    }
}

impl fmt::Display for Flag {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl Serialize for Flag {
    fn serialize<S: Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        s.serialize_str(self.name())
    }
}

/// The flags of a row joined for CSV (`;`) or a table (`,`, short forms).
pub fn join(flags: &[Flag], short: bool) -> String {
    let sep = if short { "," } else { ";" };
    flags
        .iter()
        .map(|f| if short { f.short() } else { f.name() })
        .collect::<Vec<_>>()
        .join(sep)
}

#[cfg(test)]
mod tests {
    use super::Flag;
    use std::collections::HashSet;

    #[test]
    fn names_and_short_forms_are_unique() {
        let names: HashSet<_> = Flag::ALL.iter().map(|f| f.name()).collect();
        let shorts: HashSet<_> = Flag::ALL.iter().map(|f| f.short()).collect();
        assert_eq!(names.len(), Flag::ALL.len());
        assert_eq!(shorts.len(), Flag::ALL.len());
        for f in Flag::ALL {
            assert!(f.short().len() <= 12, "{f}");
            assert_eq!(
                serde_json::to_string(&f).unwrap(),
                format!("\"{}\"", f.name())
            );
        }
    }
}
