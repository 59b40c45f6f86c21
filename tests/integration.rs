//! The one integration-test binary; each module is one area.

/// Index legs and the hazard bootstrap.
mod curve;
/// Tranche legs, compound and base correlation.
mod tranche;
