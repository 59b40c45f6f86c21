//! The one integration-test binary; each module is one area.

/// Helpers shared by the command-line tests.
mod common;

/// Bivariate normal CDF: mpmath fixture and identities.
mod bvn;
/// The binary on malformed snapshots: exit 2, `path:line:col:` on stderr, no panic; `-` is stdin.
mod cli_errors;
/// Index legs and the hazard bootstrap.
mod curve;
/// The command line against the independent Python implementation's fixtures.
mod independent;
/// Interpolation of the skew: PCHIP and linear against scipy, isotonic
/// regression, the concave quadratic spline's shape laws.
mod interp;
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
/// Every bundled sample through every command and format.
mod samples;
/// The correlation surface, trades off it, mapping and risk.
mod skew;
/// Snapshot reader: valid files, every validation rule, malformed fixtures, fuzzing.
mod snapshot;
/// Trades and pools readers: valid files, round trips, every rule located.
mod trades_pools;
/// Tranche legs, compound and base correlation.
mod tranche;

/// Large homogeneous pool expectations: closed form, quadrature, finite pool,
/// Monte Carlo.
mod lhp;
