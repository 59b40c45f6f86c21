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
