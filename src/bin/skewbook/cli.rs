//! What the user typed: clap derive structs, nothing validated yet.

use clap::{Args, Parser, Subcommand, ValueEnum};

/// Implied tranche correlation from credit index and tranche quotes.
#[derive(Debug, Parser)]
#[command(name = "skewbook", version, about, long_about = None)]
pub struct Cli {
    /// The job to run.
    #[command(subcommand)]
    pub command: Command,
}

/// Subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Bootstrap the pool hazard curve from the index quotes of each date.
    Curve(CurveArgs),
    /// Price every tranche of every date at one flat correlation.
    Price(PriceArgs),
    /// Compound and base correlation implied by the tranche quotes (the main job).
    Implied(ImpliedArgs),
    /// Vasicek large-pool loss distribution: quantiles, expected shortfall, IRB capital.
    Loss(LossArgs),
    /// Real-world PD and asset correlation from a default history.
    Realworld(RealworldArgs),
    /// The base-correlation surface of each date: skew on a detachment grid,
    /// implied exceedance curve and arbitrage checks.
    Surface(SurfaceArgs),
    /// A book of tranche trades priced off one date's skew, with risk.
    Value(ValueArgs),
}

/// Interpolation of base correlation across detachment.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum, Default)]
pub enum InterpArg {
    /// Linear between knots, flat outside.
    #[default]
    Linear,
    /// Monotone piecewise-cubic Hermite (Fritsch-Carlson), flat outside.
    Pchip,
}

impl From<InterpArg> for skewbook::math::interp::Interp {
    fn from(i: InterpArg) -> Self {
        match i {
            InterpArg::Linear => skewbook::math::interp::Interp::Linear,
            InterpArg::Pchip => skewbook::math::interp::Interp::Pchip,
        }
    }
}

/// How bespoke detachments are carried to the index skew.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum, Default)]
pub enum MappingArg {
    /// The same detachment.
    #[default]
    None,
    /// Detachment over pool expected loss matched.
    Moneyness,
    /// The base tranche's share of pool expected loss matched.
    Tlp,
    /// The probability of pool loss below the detachment matched.
    Probability,
}

impl From<MappingArg> for skewbook::book::Mapping {
    fn from(m: MappingArg) -> Self {
        match m {
            MappingArg::None => skewbook::book::Mapping::None,
            MappingArg::Moneyness => skewbook::book::Mapping::Moneyness,
            MappingArg::Tlp => skewbook::book::Mapping::Tlp,
            MappingArg::Probability => skewbook::book::Mapping::Probability,
        }
    }
}

/// `skewbook surface`.
#[derive(Debug, Args)]
pub struct SurfaceArgs {
    #[command(flatten)]
    pub market: MarketArgs,
    /// Interpolation of base correlation across detachment.
    #[arg(long, value_enum, default_value_t)]
    pub interp: InterpArg,
    /// Detachment grid step in percent; must divide 100.
    #[arg(
        long,
        value_name = "PCT",
        default_value_t = 0.5,
        allow_negative_numbers = true
    )]
    pub step_pct: f64,
    /// Only this trade date of a history (ISO 8601); default every date.
    #[arg(long, value_name = "YYYY-MM-DD")]
    pub date: Option<chrono::NaiveDate>,
}

/// `skewbook value`.
#[derive(Debug, Args)]
pub struct ValueArgs {
    /// Trades CSV file (`-` reads standard input).
    pub trades: String,
    /// Snapshot whose skew prices the trades.
    #[arg(long, value_name = "SNAPSHOT")]
    pub skew: String,
    /// Bespoke pools CSV file (pools named by trades besides `index`).
    #[arg(long, value_name = "POOLS")]
    pub pools: Option<String>,
    /// Trade date to value (ISO 8601); default the snapshot's last date.
    #[arg(long, value_name = "YYYY-MM-DD")]
    pub date: Option<chrono::NaiveDate>,
    /// Interpolation of base correlation across detachment.
    #[arg(long, value_enum, default_value_t)]
    pub interp: InterpArg,
    /// Mapping of bespoke detachments to the index skew.
    #[arg(long, value_enum, default_value_t)]
    pub mapping: MappingArg,
    /// Names in a pool, for jump-to-default (a count).
    #[arg(long, value_name = "N", default_value_t = 125)]
    pub names: usize,
    /// Also bucketed risk: spread per pillar, correlation per knot.
    #[arg(long)]
    pub buckets: bool,
    /// `--recovery` and `--rate` for the snapshot.
    #[command(flatten)]
    pub curve: CurveChoiceArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t)]
    pub format: FormatArg,
}

/// Output format.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum, Default)]
pub enum FormatArg {
    /// Aligned columns for a terminal.
    #[default]
    Table,
    /// Comma-separated values with a header row.
    Csv,
    /// JSON, rates and correlations as fractions.
    Json,
}

impl From<FormatArg> for skewbook::output::Format {
    fn from(f: FormatArg) -> Self {
        match f {
            FormatArg::Table => skewbook::output::Format::Table,
            FormatArg::Csv => skewbook::output::Format::Csv,
            FormatArg::Json => skewbook::output::Format::Json,
        }
    }
}

/// The curve choices for a snapshot: recovery and flat rate, in percent.
#[derive(Debug, Args)]
pub struct CurveChoiceArgs {
    /// Recovery in percent; overrides the snapshot's `recovery_pct` (default 40).
    #[arg(long, value_name = "PCT")]
    pub recovery: Option<f64>,
    /// Flat continuously compounded rate in percent, used when a date has no
    /// `zero` rows (default 0).
    #[arg(long, value_name = "PCT", allow_negative_numbers = true)]
    pub rate: Option<f64>,
}

impl CurveChoiceArgs {
    /// The choices in the library's units (fractions), not yet validated.
    pub fn options(&self) -> skewbook::curve::MarketOptions {
        skewbook::curve::MarketOptions {
            recovery: self.recovery.map(|r| r / 100.0),
            flat_rate: self.rate.unwrap_or(0.0) / 100.0,
        }
    }

    /// Whether either choice was typed.
    pub fn given(&self) -> bool {
        self.recovery.is_some() || self.rate.is_some()
    }
}

/// Options shared by every command that reads a snapshot.
#[derive(Debug, Args)]
pub struct MarketArgs {
    /// Snapshot CSV file (`-` reads standard input).
    pub file: String,
    #[command(flatten)]
    pub curve: CurveChoiceArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t)]
    pub format: FormatArg,
}

/// `skewbook curve`.
#[derive(Debug, Args)]
pub struct CurveArgs {
    #[command(flatten)]
    pub market: MarketArgs,
}

/// `skewbook price`.
#[derive(Debug, Args)]
pub struct PriceArgs {
    #[command(flatten)]
    pub market: MarketArgs,
    /// Flat correlation, a fraction in (0, 1).
    #[arg(long, value_name = "RHO")]
    pub correlation: f64,
}

/// `skewbook implied`.
#[derive(Debug, Args)]
pub struct ImpliedArgs {
    #[command(flatten)]
    pub market: MarketArgs,
    /// No progress bar (one is drawn on standard error only when it is a
    /// terminal, outside CI, for more than 20 dates).
    #[arg(long, short)]
    pub quiet: bool,
}

/// `skewbook loss`.
#[derive(Debug, Args)]
pub struct LossArgs {
    /// One-year default probability, a fraction in (0, 1).
    #[arg(long, value_name = "P")]
    pub pd: f64,
    /// Asset correlation, a fraction in (0, 1).
    #[arg(long, value_name = "R")]
    pub rho: f64,
    /// Loss given default, a fraction in (0, 1].
    #[arg(long, value_name = "L", default_value_t = 1.0)]
    pub lgd: f64,
    /// Confidence levels, comma-separated fractions.
    #[arg(long, value_delimiter = ',', default_values_t = [0.99, 0.999])]
    pub levels: Vec<f64>,
    /// Effective maturity in years for the IRB capital figure.
    #[arg(long, value_name = "YEARS", default_value_t = 2.5)]
    pub maturity: f64,
    /// Annual turnover in millions for the IRB SME correlation adjustment
    /// (clipped to 5..50); none by default.
    #[arg(long, value_name = "MILLIONS")]
    pub turnover: Option<f64>,
    /// Output format.
    #[arg(long, value_enum, default_value_t)]
    pub format: FormatArg,
}

/// Divisor of the sample variance in the moment estimators.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum, Default)]
pub enum DivisorArg {
    /// T, the maximum-likelihood form.
    #[default]
    T,
    /// T - 1, the unbiased sample variance.
    TMinus1,
}

/// `skewbook realworld`.
#[derive(Debug, Args)]
pub struct RealworldArgs {
    /// Default history CSV file (`-` reads standard input).
    pub file: String,
    /// Snapshot to set the risk-neutral side beside the estimates.
    #[arg(long, value_name = "SNAPSHOT")]
    pub against: Option<String>,
    /// `--recovery` and `--rate` for the snapshot of `--against`.
    #[command(flatten)]
    pub curve: CurveChoiceArgs,
    /// Confidence levels for loss quantiles, comma-separated fractions.
    #[arg(long, value_delimiter = ',', default_values_t = [0.99, 0.999])]
    pub levels: Vec<f64>,
    /// Loss given default for the loss quantiles, a fraction (1: default rate).
    #[arg(long, value_name = "L", default_value_t = 1.0)]
    pub lgd: f64,
    /// Divisor of the sample variance in probit_moments and moment_matching.
    #[arg(long, value_enum, default_value_t)]
    pub variance_divisor: DivisorArg,
    /// Two quantiles of the one-period default rate, LEVEL:RATE,LEVEL:RATE in
    /// fractions (e.g. 0.5:0.0066,0.999:0.09), for the quantile_pair estimator.
    #[arg(long, value_name = "LEVEL:RATE,LEVEL:RATE", value_delimiter = ',')]
    pub quantiles: Vec<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t)]
    pub format: FormatArg,
}

#[cfg(test)]
mod tests {
    use super::Cli;
    use clap::CommandFactory;

    #[test]
    fn command_line_definition_is_consistent() {
        Cli::command().debug_assert();
    }
}
