//! Large-homogeneous-pool expected tranche loss and outstanding notional.
