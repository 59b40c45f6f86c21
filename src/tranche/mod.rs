//! Tranche legs and prices.
