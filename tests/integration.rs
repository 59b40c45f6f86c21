//! The one integration-test binary; each module is one area.

/// Helpers shared by the command-line tests.
mod common;

/// Bivariate normal CDF: mpmath fixture and identities.
mod bvn;
/// Charts: their data against `implied` and `surface` on random dates, the
/// drawn SVG against its data, no root, a broken chain through time.
mod charts;
/// The binary on malformed snapshots: exit 2, `path:line:col:` on stderr, no panic; `-` is stdin.
mod cli_errors;
/// The command line's rules: percent options and their warnings, negative
/// values, `loss` domains, the IRB floor, broken pipes, message digits,
/// stdin read once, quantile order, cautions.
mod command_line;
/// Index legs and the hazard bootstrap.
mod curve;
/// `--interp expected-loss`: no arbitrage on every sample, quotes repriced,
/// the implied loss distribution, the repair of knots that are not
/// admissible, interpolation across maturity, the monotone convex curve.
mod elinterp;
/// The finite pool of n names: mpmath, its own rule with twice the nodes,
/// one name in closed form, the large-pool limit at rate 1/n, a Monte Carlo
/// of the copula, Hull and White (2004) Table 7.
mod finite;
/// Mutated samples through every reader and command in process: no panic,
/// located errors, only finite numbers (`SKEWBOOK_FUZZ_CASES` for long runs).
mod fuzz;
/// The command line against the independent Python implementation's fixtures.
mod independent;
/// Interpolation of the skew: PCHIP and linear against scipy, isotonic
/// regression, the concave quadratic spline's shape laws.
mod interp;
/// The mistakes people make with their files: domains, unit flags, the
/// index check, history warnings, capped errors, delimiters and headers,
/// the summary of a long run, date filters.
mod mistakes;
/// `--names N` on skew-history, chart and report: the finite pool's numbers
/// (against `implied` and `surface --names` on random dates, and the
/// library repricing in that pool), the pool named in every output.
mod names_commands;
/// Sample outputs against the fixtures recorded before a refactoring.
mod outputs;
/// Dates in parallel: the same bytes on one thread and on four, progress
/// once per date, every bad date reported in order.
mod parallel;
/// Real-world calibration: estimators against an independent Python
/// implementation, coverage by simulation, the `loss` and `realworld` commands.
mod realworld;
/// Coverage of the estimators' 95 % intervals on simulated histories.
mod realworld_coverage;
/// The HTML report: well-formed, self-contained, every number of the JSON.
mod report_page;
/// Every bundled sample through every command and format.
mod samples;
/// The correlation surface, trades off it, mapping and risk.
mod skew;
/// `surface` and `value` on the command line.
mod skew_cli;
/// `skew-history` against `implied` and `surface`.
mod skew_history;
/// Snapshot reader: valid files, every validation rule, malformed fixtures, fuzzing.
mod snapshot;
/// `implied` on a history read date by date in two passes against the
/// file read whole: the same bytes, warnings, summary, errors and exit status.
mod streaming;
/// Trades and pools readers: valid files, round trips, every rule located.
mod trades_pools;
/// Tranche legs, compound and base correlation.
mod tranche;

/// Large homogeneous pool expectations: closed form, quadrature, finite pool,
/// Monte Carlo.
mod lhp;
