//! Discount and pool hazard curves.
