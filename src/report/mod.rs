//! One report type per command.

pub mod loss;
pub mod realworld;
