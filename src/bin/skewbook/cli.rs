//! What the user typed: clap derive structs, nothing validated yet.
//!
//! Units follow the files: percents for recovery, rates, correlations,
//! PD, LGD, confidence levels and default rates (`units` checks them and
//! turns them into fractions). Every numeric option accepts a negative
//! number as its value, so `--recovery -1` reaches the range check.

use crate::units;
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
    /// Pictures of one date's skew as SVG files: skew per maturity, each
    /// tranche's quote against correlation, loss exceedance, skew history.
    Chart(ChartArgs),
    /// One self-contained HTML page: tables, charts, flags explained,
    /// assumptions and cautions.
    Report(ReportArgs),
    /// The skew through time: base and compound correlations per date, and
    /// their change since the previous date.
    SkewHistory(SkewHistoryArgs),
}

/// `skewbook skew-history`.
#[derive(Debug, Args)]
pub struct SkewHistoryArgs {
    #[command(flatten)]
    pub market: MarketArgs,
    /// Detachments in percent read off each date's surface, comma-separated
    /// (e.g. 3,7,10,15); none by default.
    #[arg(
        long,
        value_name = "PCT,PCT",
        value_delimiter = ',',
        allow_negative_numbers = true
    )]
    pub at: Vec<f64>,
    /// Interpolation of base correlation across detachment for `--at`.
    #[arg(long, value_enum, default_value_t)]
    pub interp: InterpArg,
    #[command(flatten)]
    pub pool: PoolArgs,
}

/// Interpolation of base correlation across detachment.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum, Default)]
pub enum InterpArg {
    /// Linear between knots, flat outside.
    #[default]
    Linear,
    /// Monotone piecewise-cubic Hermite (Fritsch-Carlson), flat outside.
    Pchip,
    /// Base expected loss by a rising concave spline, correlation read back off it (no arbitrage in detachment).
    #[value(name = "expected-loss")]
    ExpectedLoss,
}

impl From<InterpArg> for skewbook::math::interp::Interp {
    fn from(i: InterpArg) -> Self {
        match i {
            InterpArg::Linear => skewbook::math::interp::Interp::Linear,
            InterpArg::Pchip => skewbook::math::interp::Interp::Pchip,
            InterpArg::ExpectedLoss => skewbook::math::interp::Interp::ExpectedLoss,
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
    #[command(flatten)]
    pub pool: PoolArgs,
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
    /// Names in a pool, for jump-to-default (a count); with `--pool-model
    /// names` also the pool the book is priced in.
    #[arg(long, value_name = "N", default_value_t = 125)]
    pub names: usize,
    /// Price the book in the large pool (default) or in a pool of `--names`
    /// names (the skew is then solved in that pool too).
    #[arg(long, value_enum, default_value_t)]
    pub pool_model: PoolModelArg,
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
    /// Recovery in percent, in [0, 100) (40 = 40%); overrides the snapshot's
    /// `recovery_pct` (default 40). A value in (0, 1) draws a warning.
    #[arg(long, value_name = "PCT", allow_negative_numbers = true)]
    pub recovery: Option<f64>,
    /// Flat continuously compounded rate in percent, in (-100, 100) (2.5 =
    /// 2.5%), used when a date has no `zero` rows (default 0). A nonzero value
    /// under 0.1 in size draws a warning.
    #[arg(long, value_name = "PCT", allow_negative_numbers = true)]
    pub rate: Option<f64>,
}

impl CurveChoiceArgs {
    /// The choices in the library's units (fractions), checked in percent;
    /// prints a warning for a value that looks like a fraction.
    ///
    /// # Errors
    /// A usage error naming the option, its domain in percent and the value.
    pub fn options(&self) -> Result<skewbook::curve::MarketOptions, skewbook::Error> {
        let recovery = self.recovery.map(|r| units::RECOVERY.read(r)).transpose()?;
        let flat_rate = self.rate.map(|r| units::RATE.read(r)).transpose()?;
        let opts = skewbook::curve::MarketOptions {
            recovery,
            flat_rate: flat_rate.unwrap_or(0.0),
        };
        opts.validate()?;
        Ok(opts)
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
    #[command(flatten)]
    pub dates: DateArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t)]
    pub format: FormatArg,
}

/// Which trade dates of a history to run (default every date).
#[derive(Debug, Args)]
pub struct DateArgs {
    /// Only this trade date of a history (ISO 8601).
    #[arg(long, value_name = "YYYY-MM-DD", conflicts_with_all = ["from", "to"])]
    pub date: Option<chrono::NaiveDate>,
    /// No trade date before this one (ISO 8601, included).
    #[arg(long, value_name = "YYYY-MM-DD")]
    pub from: Option<chrono::NaiveDate>,
    /// No trade date after this one (ISO 8601, included).
    #[arg(long, value_name = "YYYY-MM-DD")]
    pub to: Option<chrono::NaiveDate>,
}

impl DateArgs {
    /// The filter the library applies.
    pub fn filter(&self) -> skewbook::report::DateFilter {
        skewbook::report::DateFilter {
            date: self.date,
            from: self.from,
            to: self.to,
        }
    }
}

/// `skewbook curve`.
#[derive(Debug, Args)]
pub struct CurveArgs {
    #[command(flatten)]
    pub market: MarketArgs,
}

/// The pool model: the large pool (default) or a pool of N names.
#[derive(Debug, Args)]
pub struct PoolArgs {
    /// Price in a homogeneous pool of N names (a count, at least 1) instead
    /// of the large pool: binomial defaults given the factor.
    #[arg(long, value_name = "N", allow_negative_numbers = true)]
    pub names: Option<usize>,
}

impl PoolArgs {
    /// The library's pool model.
    ///
    /// # Errors
    /// A usage error for 0 names.
    pub fn model(&self) -> Result<skewbook::loss::PoolModel, skewbook::Error> {
        match self.names {
            None => Ok(skewbook::loss::PoolModel::LargePool),
            Some(0) => Err(skewbook::Error::msg(
                skewbook::error::ErrorKind::Usage,
                "--names: expected a count of names of at least 1, found 0",
            )),
            Some(n) => Ok(skewbook::loss::PoolModel::Names(n)),
        }
    }
}

/// What `value` prices the book in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum, Default)]
pub enum PoolModelArg {
    /// The large homogeneous pool (the quoting convention).
    #[default]
    Large,
    /// A pool of `--names` names (the skew solved and the trades priced in it).
    Names,
}

/// `skewbook price`.
#[derive(Debug, Args)]
pub struct PriceArgs {
    #[command(flatten)]
    pub market: MarketArgs,
    #[command(flatten)]
    pub pool: PoolArgs,
    /// Flat correlation in percent, in (0, 100) (30 means 30%, the fraction 0.3). A value below 1
    /// draws a warning.
    #[arg(long, value_name = "PCT", allow_negative_numbers = true)]
    pub correlation: f64,
}

/// `skewbook implied`.
#[derive(Debug, Args)]
pub struct ImpliedArgs {
    #[command(flatten)]
    pub market: MarketArgs,
    /// Largest gap in bp of running spread between the protection a
    /// maturity's tranche quotes imply (when they tile 0-100%) and the index
    /// curve's; a larger gap flags the maturity `index_mismatch`.
    #[arg(
        long,
        value_name = "BP",
        default_value_t = skewbook::consistency::DEFAULT_TOLERANCE_BP,
        allow_negative_numbers = true
    )]
    pub index_tolerance: f64,
    /// No progress bar (one is drawn on standard error only when it is a
    /// terminal, outside CI, for more than 20 dates).
    #[arg(long, short)]
    pub quiet: bool,
    #[command(flatten)]
    pub pool: PoolArgs,
    /// With `--names`: also solve every quote in the large pool and print
    /// both pools' correlations side by side.
    #[arg(long, requires = "names")]
    pub compare_pool: bool,
}

/// `skewbook loss`.
#[derive(Debug, Args)]
pub struct LossArgs {
    /// One-year default probability in percent, in [0.000001, 100) (2 = 2%).
    /// A value below 0.03 (the Basel II corporate PD floor) draws a warning.
    #[arg(long, value_name = "PCT", allow_negative_numbers = true)]
    pub pd: f64,
    /// Asset correlation in percent, in [0.0001, 100) (12 means 12%, the fraction
    /// 0.12). A value
    /// below 1 draws a warning.
    #[arg(long, value_name = "PCT", allow_negative_numbers = true)]
    pub rho: f64,
    /// Loss given default in percent, in (0, 100] (45 = 45%). A value of 1 or
    /// less draws a warning.
    #[arg(
        long,
        value_name = "PCT",
        default_value_t = 100.0,
        allow_negative_numbers = true
    )]
    pub lgd: f64,
    /// Confidence levels in percent, comma-separated, each in (0, 100)
    /// (99.9 = 99.9%). A level below 1 draws a warning.
    #[arg(
        long,
        value_name = "PCT,PCT",
        value_delimiter = ',',
        default_values_t = [99.0, 99.9],
        allow_hyphen_values = true
    )]
    pub levels: Vec<f64>,
    /// Effective maturity in years, from 1 to 5, for the IRB capital figure.
    #[arg(
        long,
        value_name = "YEARS",
        default_value_t = 2.5,
        allow_negative_numbers = true
    )]
    pub maturity: f64,
    /// Annual turnover in millions (currency units) for the IRB SME
    /// correlation adjustment (clipped to 5..50); none by default.
    #[arg(long, value_name = "MILLIONS", allow_negative_numbers = true)]
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
    /// Confidence levels for the loss quantiles in percent, comma-separated,
    /// each in (0, 100) (99.9 = 99.9%). A level below 1 draws a warning.
    #[arg(
        long,
        value_name = "PCT,PCT",
        value_delimiter = ',',
        default_values_t = [99.0, 99.9],
        allow_hyphen_values = true
    )]
    pub levels: Vec<f64>,
    /// Loss given default in percent for the loss quantiles, in (0, 100]
    /// (100: the default rate itself). A value of 1 or less draws a warning.
    #[arg(
        long,
        value_name = "PCT",
        default_value_t = 100.0,
        allow_negative_numbers = true
    )]
    pub lgd: f64,
    /// Divisor of the sample variance in probit_moments and moment_matching.
    #[arg(long, value_enum, default_value_t)]
    pub variance_divisor: DivisorArg,
    /// Two quantiles of the one-period default rate, LEVEL:RATE,LEVEL:RATE,
    /// levels and rates in percent (e.g. 50:0.66,99.9:9), for the
    /// quantile_pair estimator; the pairs may come in either order. A level
    /// below 1 draws a warning.
    #[arg(
        long,
        value_name = "LEVEL:RATE,LEVEL:RATE",
        value_delimiter = ',',
        allow_hyphen_values = true
    )]
    pub quantiles: Vec<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t)]
    pub format: FormatArg,
}

/// Estimator of the real-world curve.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
#[value(rename_all = "snake_case")]
pub enum EstimatorArg {
    /// Maximum likelihood of the binomial mixture (counts).
    BinomialMl,
    /// Maximum likelihood on probit-transformed default rates.
    ProbitMoments,
    /// Mean and variance of the default rates matched.
    MomentMatching,
    /// Mean rate and joint default probability matched (counts).
    JointDefaultMoments,
}

impl From<EstimatorArg> for skewbook::realworld::estimators::Method {
    fn from(e: EstimatorArg) -> Self {
        use skewbook::realworld::estimators::Method;
        match e {
            EstimatorArg::BinomialMl => Method::BinomialMl,
            EstimatorArg::ProbitMoments => Method::ProbitMoments,
            EstimatorArg::MomentMatching => Method::MomentMatching,
            EstimatorArg::JointDefaultMoments => Method::JointDefaultMoments,
        }
    }
}

/// What `chart` and `report` draw from.
#[derive(Debug, Args)]
pub struct PictureArgs {
    /// Snapshot CSV file (`-` reads standard input); its last trade date is drawn.
    pub file: String,
    /// A history of snapshots (CSV with many trade dates) for the skew through time.
    #[arg(long, value_name = "FILE")]
    pub history: Option<String>,
    /// The index pool's default history (CSV) for the real-world loss curve.
    #[arg(long, value_name = "FILE")]
    pub defaults: Option<String>,
    /// Trade date of the snapshot to draw (ISO 8601); default its last.
    #[arg(long, value_name = "YYYY-MM-DD")]
    pub date: Option<chrono::NaiveDate>,
    /// Detachments in percent, comma-separated, each in (0, 100) (3,7,10
    /// means 3%, 7%, 10%), read off each date's skew in the history chart.
    #[arg(
        long,
        value_name = "PCT,PCT",
        value_delimiter = ',',
        allow_hyphen_values = true
    )]
    pub at: Vec<f64>,
    /// Interpolation of the skew for --at.
    #[arg(long, value_enum, default_value_t)]
    pub interp: InterpArg,
    /// Loss grid step in percent for the exceedance curves; must divide 100.
    #[arg(
        long,
        value_name = "PCT",
        default_value_t = 0.5,
        allow_negative_numbers = true
    )]
    pub step_pct: f64,
    /// Estimator of the real-world curve; default the first that gives PD,
    /// rho and both 95% intervals of binomial_ml, probit_moments,
    /// moment_matching, joint_default_moments.
    #[arg(long, value_enum)]
    pub estimator: Option<EstimatorArg>,
    /// `--recovery` and `--rate` for the snapshot and the history.
    #[command(flatten)]
    pub curve: CurveChoiceArgs,
    #[command(flatten)]
    pub pool: PoolArgs,
}

/// `skewbook chart`.
#[derive(Debug, Args)]
pub struct ChartArgs {
    #[command(flatten)]
    pub picture: PictureArgs,
    /// Directory the SVG files are written to (made if missing).
    #[arg(long, value_name = "DIR")]
    pub out: String,
}

/// `skewbook report`.
#[derive(Debug, Args)]
pub struct ReportArgs {
    #[command(flatten)]
    pub picture: PictureArgs,
    /// The HTML file to write (`-` writes to standard output).
    #[arg(long, value_name = "FILE.html")]
    pub out: String,
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
