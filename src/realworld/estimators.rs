//! Estimators of PD and asset correlation from default histories.
