//! The one integration-test binary; each module is one area.

/// Real-world calibration: estimators against an independent Python
/// implementation, coverage by simulation, the `loss` and `realworld` commands.
mod realworld;
/// Coverage of the estimators' 95 % intervals on simulated histories.
mod realworld_coverage;
